"""A large samples table through ``quantify --json``: the same text, byte for byte, however the work
is cut up to keep memory low.

A run of many samples is reported a part at a time (``core.reporting._PART`` results), remembers
only the last few thousand rounded values (``core.rounding._REMEMBERED``), and lets go of its
samples' kept canonical texts before the analysis (``cli._MANY_SAMPLES``). The command's output is
compared with the output of the same command in which none of that happens (every limit raised
above the table's size) and the rows are made from the result objects. The table is invented (the
Ashgrove water laboratory's nickel line, µg/L) and written as a spreadsheet writes CSV: a byte
order mark, CRLF line ends, quoted fields, replicates, dilutions, QC samples with nominal values,
blanks, empty, unreadable and censored readings, results below the LOD, inside and above the range.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from curvewright import cli
from curvewright.core import reporting, rounding
from tests.cli_runs import run_cli
from tests.test_cli_sample_columns import ReferenceRows

SAMPLES = 20_500  # more than two parts of the report and than the samples kept with their texts


def write_tables(folder: Path) -> tuple[Path, Path]:
    draw = np.random.default_rng(41)
    levels = [0.0, 0.0, 0.5, 0.5, 2.0, 2.0, 10.0, 10.0, 50.0, 50.0, 100.0, 100.0]
    standards = ["Standard id,Level,Concentration (µg/L),Response (counts)"] + [
        f"Ni-{i + 1:02d},L{i // 2 + 1},{x:g},{2.1 + 38.4 * x * (1 + 0.01 * draw.standard_normal()):.3f}"
        for i, x in enumerate(levels)]
    rows = ["Sample,Type,Dilution,Nominal,Response (counts),Run order"]
    for j in range(SAMPLES):
        sid = f'"AW-{j:06d}"' if j % 3 == 0 else f"AW-{j:06d}"  # some ids quoted, as spreadsheets may write them
        kind, nominal = ("QC", "25") if j % 97 == 0 else ("blank", "") if j % 89 == 0 else ("unknown", "")
        dilution = ("1", "1", "10", "2.5", "1", "100")[j % 6]
        level = float(np.exp(draw.uniform(np.log(0.01), np.log(150.0))))
        response = f"{2.1 + 38.4 * level * (1 + 0.02 * draw.standard_normal()):.3f}"
        if j % 211 == 5:
            response = ""
        elif j % 223 == 7:
            response = "n/a"
        elif j % 227 == 9:
            response = "<0.5"
        rows.append(",".join((sid, kind, dilution, nominal, response, str(j + 1))))
        if j % 7 == 0:  # a second replicate
            rows.append(",".join((sid, kind, dilution, nominal, f"{float(response or 0) * 1.01 + 0.3:.3f}"
                                  if response not in ("n/a", "<0.5") else "", str(j + 1))))
    paths = []
    for name, lines in (("ni_standards.csv", standards), ("ni_samples.csv", rows)):
        path = folder / name
        path.write_bytes("\ufeff".encode() + ("\r\n".join(lines) + "\r\n").encode("utf-8"))
        paths.append(path)
    return paths[0], paths[1]


def test_a_large_table_gives_the_text_of_the_work_done_in_one_piece(tmp_path, monkeypatch, capsys) -> None:
    standards, samples = write_tables(tmp_path)
    args = ["quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "nickel",
            "--allow-unreadable", "--json"]
    done = run_cli(*args, timeout=600)
    assert done.returncode in (0, 1), done.stderr
    # the same command with the work in one piece, and the rows made from the result objects
    monkeypatch.setattr(reporting, "_PART", 10**9)
    monkeypatch.setattr(rounding, "_REMEMBERED", 10**9)
    monkeypatch.setattr(cli, "_MANY_SAMPLES", 10**9)
    monkeypatch.setattr(cli, "_SampleRows", ReferenceRows)
    assert cli.main(args) == done.returncode
    assert done.stdout == capsys.readouterr().out
    data = json.loads(done.stdout)
    rows = data["analytes"][0]["samples"]
    assert len(rows) == SAMPLES
    assert data["data_match_audit_trail"] is True  # the hash kept before the texts were let go of
    statuses = {r["status"] for r in rows}
    assert {"in_range", "above_range", "not_quantified"} <= statuses
    assert statuses & {"below_lod", "below_reporting_limit"}
    assert any(r["replicates"] == 2 for r in rows) and any(r["recovery_percent"] is not None for r in rows)
