"""The text `quantify` prints says which QC samples failed, as its JSON and the record do: each judged
sample's recovery (one decimal, more where one would show it on a limit it does not lie on) and
"pass" or "FAIL" beside it. The command as a subprocess on tables written the way an instrument and a
spreadsheet write them.

ICH M10 (the shipped profile, as it reads the guideline): a QC sample passes within ±15 % of its
nominal concentration, i.e. a recovery from 85 % to 115 %."""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli
from tests.test_cli_qc_not_judged import QUANTIFY, standards, write_csv


def table_rows(out: str) -> dict[str, list[str]]:
    """The samples table of the text, each row split into its cells (two spaces or more apart)."""
    import re

    lines = out.splitlines()
    start = next(i for i, line in enumerate(lines) if line.lstrip().startswith("sample  "))
    rows = {}
    for line in lines[start:]:
        if not line.startswith("  ") or line.startswith("   "):
            break
        cells = re.split(r"\s{2,}", line.strip())
        rows[cells[0]] = cells
    return rows


def test_the_text_names_the_qc_samples_that_failed(tmp_path: Path) -> None:
    # the invented zinc run (response ≈ 4 + 52·x counts): QC samples found at about 100 %, 82 % and 118 %
    smp = write_csv(tmp_path / "zn_smp.csv", [
        ("Sample", "Type", "Dilution", "Nominal", "Response (counts)"),
        ("QC low", "QC", 1, 3, 159.8), ("QC mid", "QC", 1, 10, 430.4), ("QC high", "QC", 1, 20, 1231.2),
        ("Well 7", "unknown", 1, None, 402.2),
    ])
    args = ("quantify", "--standards", str(standards(tmp_path)), "--samples", str(smp), *QUANTIFY)
    text = run_cli(*args)
    data = json.loads(run_cli(*args, "--json").stdout)
    rows = table_rows(text.stdout)
    assert rows["sample"][4:6] == ["recovery (%)", "QC or check"], rows["sample"]
    by_id = {s["id"]: s for s in data["analytes"][0]["samples"]}
    words = {}
    for sample_id in ("QC low", "QC mid", "QC high"):
        judged = by_id[sample_id]
        recovery, word = rows[sample_id][4:6]
        # the JSON's recovery to one decimal, and its verdict in the record's words
        assert recovery == f"{judged['recovery_percent']:.1f}", (sample_id, rows[sample_id])
        assert word == ("pass" if judged["within_limits"] else "FAIL"), (sample_id, rows[sample_id])
        words[sample_id] = (float(recovery), word)
    assert words["QC low"][1] == "pass" and 85 <= words["QC low"][0] <= 115
    assert words["QC mid"] == (words["QC mid"][0], "FAIL") and words["QC mid"][0] < 85
    assert words["QC high"] == (words["QC high"][0], "FAIL") and words["QC high"][0] > 115
    # an unknown is not judged: no recovery, no word; its flags stay in their column
    assert rows["Well 7"][-1] == "inside the calibrated range" and "pass" not in rows["Well 7"]
    # a run not accepted ends with exit code 1
    assert text.returncode == 1 and "verdict: NOT ACCEPTED" in text.stdout, text.stderr


def test_a_run_without_judged_samples_keeps_its_table(tmp_path: Path) -> None:
    smp = write_csv(tmp_path / "zn_smp.csv", [("Sample", "Type", "Response (counts)"), ("Well 7", "unknown", 402.2)])
    out = run_cli("quantify", "--standards", str(standards(tmp_path)), "--samples", str(smp), *QUANTIFY)
    assert table_rows(out.stdout)["sample"] == ["sample", "reported", "value", "interval (95%)", "flags"]
