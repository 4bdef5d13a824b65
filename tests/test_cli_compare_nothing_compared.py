"""`compare` ends with exit code 1 whenever no model is recommended for an analyte, also when no comparison
could be made at all (too few standards or levels for any candidate), as when no candidate is acceptable.

Invented scenarios: the Ashby lead check with two standards (a straight line needs three to estimate its
scatter), a nickel table with four readings of one standard, and a run document whose copper standards
are two. Each is a result that needs the analyst's decision, not a usage error; the reason is printed in
the comparison's place, and `compare --help` says so.
"""

from __future__ import annotations

import json
from pathlib import Path

from curvewright.core.run import Analyte, Reading, Standard
from curvewright.io import run_edits
from curvewright.io.run_document import dumps_run
from tests.test_cli_tables import run_cli, write


def test_compare_exits_1_when_no_comparison_could_be_made(tmp_path: Path) -> None:
    two = write(tmp_path / "lead_std.csv", ["Concentration,Response", "1,10.0", "2,20.5"])
    out = run_cli("compare", "--standards", str(two), "--analyte", "lead")
    assert out.returncode == 1, (out.returncode, out.stderr)
    assert "• no comparison: standards: 2 standards leave no degree of freedom" in out.stdout, out.stdout
    as_json = run_cli("compare", "--standards", str(two), "--analyte", "lead", "--json")
    assert as_json.returncode == 1, as_json.stderr
    entry = json.loads(as_json.stdout)[0]
    assert entry["recommended"] is None and entry["rows"] == [] and entry["reasons"][0].startswith("no comparison: ")

    one_level = write(tmp_path / "nickel_std.csv", ["Concentration,Response", "5,10.1", "5,10.3", "5,9.9", "5,10.0"])
    level = run_cli("compare", "--standards", str(one_level), "--analyte", "nickel")
    assert level.returncode == 1 and "all 4 standards are at 5" in level.stdout, (level.returncode, level.stdout)

    standards = (Standard("Cu-1", 1.0, Reading(3.1, "3.1")), Standard("Cu-2", 4.0, Reading(12.2, "12.2")))
    run = run_edits.new_run("Copper, Ashby batch 2", (Analyte("copper", "mg/L", "counts", standards),), user="a.tester")
    doc = tmp_path / "copper.json"
    doc.write_text(dumps_run(run), encoding="utf-8")
    from_run = run_cli("compare", str(doc))
    assert from_run.returncode == 1 and "• no comparison: " in from_run.stdout, (from_run.returncode, from_run.stdout)

    fits = write(tmp_path / "zinc_std.csv", ["Concentration,Response",
                                             *[f"{c},{2 + 3 * c + d:.2f}" for c in (1, 2, 4, 6, 8, 10) for d in (0.03, -0.03)]])
    shown = run_cli("compare", "--standards", str(fits), "--analyte", "zinc")
    assert shown.returncode == 0 and "recommended: linear, none" in shown.stdout, shown.stderr

    helped = " ".join(run_cli("compare", "--help").stdout.split())
    assert ("compare: for an analyte no candidate is acceptable, so no model is recommended (the evidence says why), "
            "or no comparison could be made at all (too few standards or levels for any candidate: the reason is "
            "printed in its place)") in helped
