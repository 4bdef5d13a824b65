"""A quadratic that lacks fit is not recommended in place of a rejected straight line.

Invented scenario: the Harrowgate zinc standards (duplicates at six levels, 1 to 10) follow a cubic
rise with a replicate scatter of ±0.03, so the straight line is rejected by its lack-of-fit and Mandel's
tests and the quadratic, which does not turn over inside the range, still lacks fit. Its lack-of-fit p
is worked out here with statsmodels' pure-error ANOVA of the quadratic against the level means. The
comparison then recommends nothing, as it does when no quadratic can replace the line: the command
line text and JSON, the refusal to quantify on a recommendation, and the record's model evidence agree.
"""

from __future__ import annotations

import json
from pathlib import Path

import pypdfium2 as pdfium

from curvewright.core.run import Analyte, Reading, RunSettings, Standard
from curvewright.io import run_edits
from curvewright.io.run_document import dumps_run
from tests.test_cli_tables import run_cli, write

ZINC = [(1, 7.07), (1, 7.01), (2, 9.18), (2, 9.12), (4, 14.31), (4, 14.25), (6, 21.35), (6, 21.29),
        (8, 31.27), (8, 31.21), (10, 45.03), (10, 44.97)]


def test_a_quadratic_that_lacks_fit_is_not_recommended(tmp_path: Path) -> None:
    import pandas as pd
    import statsmodels.api as sm
    from statsmodels.formula.api import ols

    frame = pd.DataFrame(ZINC, columns=["x", "y"])
    means = ols("y ~ C(x)", frame).fit()
    p_line = sm.stats.anova_lm(ols("y ~ x", frame).fit(), means)["Pr(>F)"][1]
    p_quadratic = sm.stats.anova_lm(ols("y ~ x + I(x**2)", frame).fit(), means)["Pr(>F)"][1]
    assert p_line < 0.05 and round(p_quadratic, 9) == 7.49e-07  # both lack fit at 0.05 (statsmodels)

    std = write(tmp_path / "zinc_std.csv", ["Concentration,Response", *[f"{c},{r}" for c, r in ZINC]])
    smp = write(tmp_path / "zinc_smp.csv", ["Sample,Response", "Z-1,20", "Z-2,30"])
    out = run_cli("compare", "--standards", str(std), "--analyte", "zinc")
    assert out.returncode == 1, out.stderr  # nothing recommended (README's exit codes)
    assert "recommended: none — no candidate is acceptable" in out.stdout, out.stdout
    assert "the quadratic is recommended" not in out.stdout and "recommended: quadratic" not in out.stdout
    assert ("no candidate is acceptable, so none is recommended: the quadratic (unweighted (ordinary least squares)) "
            "is rejected by its lack-of-fit test (p = 7.49\u00a0×\u00a010⁻⁷) and the straight line is rejected by") in out.stdout
    assert "the quadratic also lacks fit (p = 7.49\u00a0×\u00a010⁻⁷), so it cannot replace it" in out.stdout
    as_json = run_cli("compare", "--standards", str(std), "--analyte", "zinc", "--json")
    assert as_json.returncode == 1, as_json.stderr
    entry = json.loads(as_json.stdout)[0]
    assert entry["recommended"] is None and entry["reasons"][0].startswith("no candidate is acceptable")
    mark = entry["columns"].index("Recommended")
    assert all(row[mark] == "" for row in entry["rows"])

    refused = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "zinc")
    assert refused.returncode == 2 and "zinc: no model recommended: the quadratic" in refused.stderr

    record = tmp_path / "zinc.pdf"
    chosen = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "zinc",
                     "--model", "quadratic", "--weighting", "none", "--report", str(record))
    assert chosen.returncode == 1, chosen.stderr  # the analyst's own choice is quantified, and judged
    pdf = pdfium.PdfDocument(str(record))
    try:
        text = " ".join(" ".join(pdf[i].get_textpage().get_text_range() for i in range(len(pdf))).split())
    finally:
        pdf.close()
    evidence = text[text.index("Model evidence"):text.index("Chosen: quadratic, none")]
    assert "quadratic none 0.413984" in evidence and "recommended" not in evidence
    assert "• no candidate is acceptable, so none is recommended: the quadratic" in text


def zinc_run_document(path: Path, profile: str = "general") -> Path:
    """The zinc standards as a run document saved by the program (straight line chosen, as a new run has it),
    judged by the acceptance ``profile``."""
    standards = tuple(Standard(f"Zn-{i + 1}", float(c), Reading(r, f"{r:.2f}"), 1 + i % 2, f"L{i // 2 + 1}")
                      for i, (c, r) in enumerate(ZINC))
    run = run_edits.new_run("Zinc, Harrowgate batch 7", (Analyte("zinc", "mg/L", "counts", standards),),
                            settings=RunSettings(acceptance_profile=profile), user="a.tester")
    path.write_text(dumps_run(run), encoding="utf-8")
    return path


def test_compare_ends_with_exit_code_1_when_it_recommends_nothing(tmp_path: Path) -> None:
    zinc = zinc_run_document(tmp_path / "zinc.json")
    out = run_cli("compare", str(zinc))
    assert out.returncode == 1, out.stderr
    assert "• no candidate is acceptable, so none is recommended" in out.stdout
    good = write(tmp_path / "copper.csv", ["Concentration,Response",
                                          *[f"{c},{2 + 3 * c + d:.2f}" for c in (1, 2, 4, 6, 8, 10) for d in (0.03, -0.03)]])
    shown = run_cli("compare", "--standards", str(good), "--analyte", "copper")
    assert shown.returncode == 0 and "recommended: linear, none" in shown.stdout, shown.stderr
    both = run_cli("compare", str(zinc), "--analyte", "zinc", "--json")
    assert both.returncode == 1 and json.loads(both.stdout)[0]["analyte"] == "zinc"
    helped = run_cli("compare", "--help")
    assert ("1 completed, but a run failed its acceptance profile or the run's record is not intact"
            in " ".join(helped.stdout.split()))
    assert ("compare: for an analyte no candidate is acceptable, so no model is recommended (the evidence says why)"
            in " ".join(helped.stdout.split()))


def test_under_the_environmental_profile_no_reason_recommends_the_curve_that_lacks_fit(tmp_path: Path) -> None:
    # the profile's rules on the whole curve refuse the average response factor (its %RSD is above 20 %), and the
    # fitted curve left is the quadratic its lack-of-fit test rejects: the reasons say a curve is needed, not that
    # one is recommended
    zinc = zinc_run_document(tmp_path / "zinc.json", profile="environmental")
    out = run_cli("compare", str(zinc), "--json")
    assert out.returncode == 1, out.stderr
    entry = json.loads(out.stdout)[0]
    reasons = entry["reasons"]
    assert reasons[0].startswith("no candidate is acceptable, so none is recommended: the quadratic")
    assert any(r.startswith("the response factors' %RSD is 27.6 %, above the profile's 20 %, so the average response "
                            "factor may not be used and a fitted curve is needed, but none is recommended") for r in reasons)
    assert not any("recommended curve" in r or "a fitted curve is recommended" in r for r in reasons), reasons
    assert any(r.startswith("the quadratic, unweighted (ordinary least squares), shown but not recommended: pass: r²")
               for r in reasons), reasons
