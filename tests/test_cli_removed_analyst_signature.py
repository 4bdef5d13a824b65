"""A run signed by an analyst with a laboratory key, whose signature is then deleted from the file in a
text editor (the audit trail still records it, with the key's fingerprint). The record's Run table and
the workbook's Run information no longer list that person as an analyst who signed: they say what the
trail records, as for a removed reviewer; the workbook's Signatures sheet gives the removed signature's
key fingerprint from the trail. Each is asked of ``io.audit.recorded_signatures``."""

from __future__ import annotations

import json
import unicodedata
from pathlib import Path

import openpyxl
import pypdfium2 as pdfium

from tests.cli_runs import run_cli
from tests.io.helpers import ROOT

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"
SIGNER = "Tamsin Orrery"  # an invented person, in the run only by her signature


def signed_then_removed(tmp_path: Path) -> tuple[Path, dict, int]:
    path = tmp_path / "nitrate analyst removed.json"
    path.write_bytes(NITRATE.read_bytes())
    made = run_cli("keys", "new", "--private", str(tmp_path / "lab.key"), "--public", str(tmp_path / "lab.pub"))
    assert made.returncode == 0, made.stderr
    done = run_cli("sign", str(path), "--role", "analyst", "--analyst", SIGNER, "--key", str(tmp_path / "lab.key"))
    assert done.returncode == 0, done.stdout + done.stderr
    document = json.loads(path.read_text(encoding="utf-8"))
    document["signatures"] = [s for s in document["signatures"] if s["name"] != SIGNER]  # deleted in an editor
    path.write_text(json.dumps(document, indent=1, ensure_ascii=False), encoding="utf-8")
    number, entry = next((i, e) for i, e in enumerate(document["audit"], start=1)
                         if e["action"] == "signed" and e["details"]["name"] == SIGNER)
    return path, entry, number


def test_a_removed_analyst_signature_names_no_analyst_and_keeps_its_key_fingerprint(tmp_path: Path) -> None:
    path, entry, number = signed_then_removed(tmp_path)
    key = entry["details"]["key_fingerprint"]
    assert key  # signed with the laboratory key
    removed = (f"audit entry {number} records an analyst's signature by {SIGNER}, {entry['time_utc']}, that the file "
               "no longer holds: it was removed from the file, so the analyst's signature line is open again")
    record, book = tmp_path / "record.pdf", tmp_path / "book.xlsx"
    done = run_cli("quantify", str(path), "--report", str(record), "--export", str(book))
    assert done.returncode == 1, done.stdout + done.stderr  # the record is not intact
    document = pdfium.PdfDocument(str(record))
    try:
        first = " ".join(unicodedata.normalize("NFKC", document[0].get_textpage().get_text_range())
                         .replace("\u00a0", " ").split())
    finally:
        document.close()
    analysts = first.split(" Analysts ", 1)[1].split(" Reviewer ", 1)[0]  # the Run table's row
    assert analysts.endswith(f"; {SIGNER} (login {entry['user']}): NOT signed — {removed}"), analysts
    assert f"{SIGNER};" not in analysts and not analysts.endswith(SIGNER)  # never listed as an analyst
    sheets = openpyxl.load_workbook(book, read_only=True)
    try:
        info = {r[0]: r[1] for r in sheets["Run information"].iter_rows(values_only=True) if len(r) > 1 and r[0]}
        rows = [r for r in sheets["Signatures"].iter_rows(values_only=True) if r and r[0] == "analyst"]
    finally:
        sheets.close()
    assert info["Analysts"].endswith(f"; {SIGNER} (login {entry['user']}): NOT signed — {removed}"), info["Analysts"]
    assert [(r[1], r[5], r[6]) for r in rows] == [(SIGNER, key, "NOT in the file")]
