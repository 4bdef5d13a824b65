"""The words of the result tables say what the core really computed, model by model."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from curvewright.core.run_analysis import analyse_run
from curvewright.io.result_tables import interval_words, samples_table, standards_table
from curvewright.io.run_document import open_run
from tests.cli_runs import run_cli
from tests.io.helpers import ROOT

DEMOS = ROOT / "sample_runs"


@pytest.mark.parametrize("demo, words", [
    ("nitrate_water_linear.json", "prediction band inverted: Fieller's interval for a straight line"),
    ("zinc_emission_quadratic.json", "prediction band inverted, its ends the roots of a polynomial in x"),
    ("cytokine_serum_4pl.json", "prediction band inverted numerically over concentrations ≥ 0, the curve's variance "
                                "by the delta method (the lower end 0 where the band holds down to zero)"),
    ("volatiles_water_average_rf.json", "ȳ₀/(RF̄ ± t·s_RF·√(1/m + 1/n)), the prediction interval of the mean of m "
                                        "response factors (below the lowest standard, the prediction band inverted "
                                        "with the lowest standard's variance)"),
])
def test_the_interval_method_is_named_for_each_model(demo: str, words: str) -> None:
    result = analyse_run(open_run(DEMOS / demo).run)
    level = f"{result.run.settings.confidence_level:.0%}"
    for a in result.analytes:
        assert interval_words(result, a) == f"{level} {words}"
    assert interval_words(result) == f"{level} {words}"  # one method for the whole run
    table = samples_table(result)
    column = [c.name for c in table.columns].index("Interval")
    shown = {row[column] for row in table.rows if row[column]}
    assert shown == {f"{level} {words}"}


def test_the_interval_method_follows_the_weighting() -> None:
    run = open_run(DEMOS / "veltaprine_plasma_weighted.json").run
    for weighting, words in (("1/x^2", "its ends the roots of a polynomial in x"),
                             ("1/y^2", "Fieller's interval for a straight line"),
                             ("power", "prediction band inverted numerically; Student's t on Satterthwaite's degrees "
                                       "of freedom for the estimated variance function")):
        result = analyse_run(run, weighting=weighting)
        assert interval_words(result, result.analytes[0]).endswith(words), weighting
    result = analyse_run(open_run(DEMOS / "cytokine_serum_4pl.json").run, weighting="two-component")
    assert interval_words(result).endswith("(the lower end 0 where the band holds down to zero); Student's t on "
                                           "Satterthwaite's degrees of freedom for the estimated variance function")


def test_anchor_points_are_not_judged_in_the_standards_table() -> None:
    result = analyse_run(open_run(DEMOS / "cytokine_serum_4pl.json").run)
    (a,) = result.analytes
    table = standards_table(a)
    names = [c.name for c in table.columns]
    verdicts = {row[0]: row[names.index("Within limits")] for row in table.rows}
    anchors = [s.id for s in a.analyte.standards if s.anchor]
    assert len(anchors) == 4
    assert all(verdicts[i] == "anchor point, not judged" for i in anchors)
    assert {verdicts[s.id] for s in a.fitted_standards if not s.anchor} == {"yes"}


def test_the_exported_samples_table_names_the_method_of_a_logistic_curve(tmp_path: Path) -> None:
    out = tmp_path / "cytokine.csv"
    result = run_cli("quantify", str(DEMOS / "cytokine_serum_4pl.json"), "--export", str(out))
    assert result.returncode in (0, 1), result.stderr
    with out.open(encoding="utf-8-sig", newline="") as handle:
        rows = [r for r in csv.reader(handle)]
    header = next(i for i, r in enumerate(rows) if "Interval" in r)
    column = rows[header].index("Interval")
    shown = {r[column] for r in rows[header + 1:] if len(r) > column and r[column]}
    assert shown == {"95% prediction band inverted numerically over concentrations ≥ 0, the curve's variance by "
                     "the delta method (the lower end 0 where the band holds down to zero)"}
    assert not any("Fieller" in cell for r in rows for cell in r)
