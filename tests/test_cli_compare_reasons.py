"""The model comparison's reasons say what its numbers say, in `compare` as an analyst runs it.

Invented scenarios of a fictional laboratory (the Kestrel Hollow water lab); the reference values are
worked out here with numpy and scipy.stats.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np

from tests.cli_runs import run_cli
from tests.test_cli_tables import write

# Manganese by ICP-OES (invented): blanks and six levels from 2 to 100 µg/L, each in duplicate. The blank's
# replicates agree far more closely than any standard's, as blanks near the noise floor often do.
MANGANESE = [(0, 8.1), (0, 8.0), (2, 204.6), (2, 199.8), (5, 512.3), (5, 503.9), (10, 1012.8), (10, 1027.4),
             (20, 2031.0), (20, 2002.6), (50, 5046.0), (50, 4980.0), (100, 10090.0), (100, 9962.0)]


def test_the_end_level_f_test_takes_the_lowest_standard_above_zero(tmp_path: Path) -> None:
    from scipy import stats

    x = np.array([c for c, _ in MANGANESE], dtype=float)
    y = np.array([r for _, r in MANGANESE])
    var = {c: float(np.var(y[x == c], ddof=1)) for c in (0.0, 2.0, 100.0)}
    f = var[100.0] / var[2.0]  # ISO 8466-1 §5: s² of the highest over s² of the lowest working-range standard
    assert round(f, 1) == 711.1 and f < stats.f.ppf(0.99, 1, 1)  # F(1, 1; 0.99) = 4052 (scipy.stats)
    assert var[100.0] / var[0.0] > stats.f.ppf(0.99, 1, 1)  # the blank would make it "significant"

    std = write(tmp_path / "mn_std.csv", ["Concentration (µg/L),Intensity", *[f"{c},{r}" for c, r in MANGANESE]])
    out = run_cli("compare", "--standards", str(std), "--analyte", "manganese")
    assert out.returncode in (0, 1), out.stderr
    assert "ISO 8466-1 end-level F-test for reference: F = 711.1 on (1, 1) df, not significant at 99 %" in out.stdout, out.stdout


# Sucrose by HPLC with an evaporative light-scattering detector (invented): triplicates at seven levels over two
# decades; the response rises as a power of the concentration (about x^1.4) with a roughly constant relative SD.
SUCROSE = [(10, 23.3), (10, 24.9), (10, 25.1), (20, 61.9), (20, 68.6), (20, 67.8), (50, 246.2), (50, 246.0),
           (50, 245.8), (100, 606.8), (100, 632.2), (100, 675.0), (200, 1634.1), (200, 1734.1), (200, 1646.7),
           (500, 6620.0), (500, 6418.3), (500, 6367.7), (1000, 16344.5), (1000, 18315.5), (1000, 17727.9)]


def sucrose_comparison(tmp_path: Path) -> dict:
    std = write(tmp_path / "sucrose_std.csv", ["Concentration (mg/L),Peak area", *[f"{c},{r}" for c, r in SUCROSE]])
    out = run_cli("compare", "--standards", str(std), "--analyte", "sucrose", "--json")
    assert out.returncode == 0, out.stderr
    return json.loads(out.stdout)[0]


def test_the_weighting_reason_quotes_the_recommended_models_rows(tmp_path: Path) -> None:
    entry = sucrose_comparison(tmp_path)
    assert entry["recommended"] == ["power", "1/x^2"]
    model, weighting, sum_re = (entry["columns"].index(k) for k in ("Model", "Weighting", "Σ|%RE|"))
    power_rows = {row[weighting]: row[sum_re] for row in entry["rows"] if row[model] == "power" and row[weighting] != "none"}
    (reason,) = [r for r in entry["reasons"] if r.startswith("weighting is needed")]
    head, listing = reason.split("; Σ|%RE| of the power curve under each weighting: ")
    quoted = dict(re.findall(r"(\S+) \(Σ\|%RE\| = ([^)]+)\)", listing))
    assert quoted.keys() == power_rows.keys()
    for w, value in quoted.items():  # each figure is the table's own row, to the three figures it shows
        assert float(value) == float(f"{power_rows[w]:.3g}"), (w, value, power_rows[w])


def manganese_compare(tmp_path: Path) -> str:
    std = write(tmp_path / "mn_std.csv", ["Concentration (µg/L),Intensity", *[f"{c},{r}" for c, r in MANGANESE]])
    out = run_cli("compare", "--standards", str(std), "--analyte", "manganese")
    assert out.returncode == 0, out.stderr
    assert "recommended: linear, power" in out.stdout, out.stdout
    return out.stdout


def test_a_candidate_not_fitted_is_named(tmp_path: Path) -> None:
    # the straight line is recommended under power weighting: the weighting the line through the origin
    # could not take (its fitted response at the blank is 0) must not read as the recommended line's
    out = manganese_compare(tmp_path)
    assert ("not fitted with power weighting for the line through the origin: the fitted response at standard 1 "
            "(concentration 0) is 0, not above zero") in out, out
    assert ("not fitted with 1/x weighting for the straight line, the quadratic and the line through the origin: "
            "standard 1 has concentration 0") in out, out


def test_the_weighting_reason_says_why_a_matching_1_over_y_weighting_is_not_taken(tmp_path: Path) -> None:
    out = manganese_compare(tmp_path)
    interval = re.search(r"\(95 % interval (\S+) to (\S+)\)", out)
    assert interval is not None, out
    low, high = (float(v) for v in interval.groups())
    assert low <= 0.5 <= high and low <= 1.0 <= high  # θ of 1/y (SD ∝ √mean) and of 1/y² (SD ∝ mean) both allowed
    assert "no fixed weighting matches" not in out, out
    assert ("1/x^2 and 1/x weights could not be fitted (see the candidates not fitted), so the weights follow a "
            "variance function fitted to all standards (power)") in out, out
    assert ("1/y (θ = 0.5) and 1/y^2 (θ = 1) lie in the interval too, but weights taken from each standard's own "
            "response are ranked after a variance function fitted to all standards") in out, out


def test_the_power_curve_reason_says_which_polynomials_fail_and_why_it_is_taken(tmp_path: Path) -> None:
    entry = sucrose_comparison(tmp_path)
    reasons = entry["reasons"]
    assert not any("check the standards or narrow the range" in r for r in reasons), reasons
    (power,) = [r for r in reasons if "power curve y = a·x^b" in r]
    assert power.startswith("under 1/x^2 neither the straight line nor the quadratic follows the data (the straight "
                            "line rejected by its lack-of-fit test"), power
    assert "the quadratic by its lack-of-fit test (p = " in power
    assert re.search(r"the power curve y = a·x\^b is not rejected by its lack-of-fit test \(p = 0\.\d+\) and fits "
                     r"better than the quadratic \(AICc [\d.]+ against [\d.]+, more than 2 lower\), so the power curve "
                     r"is recommended$", power), power


# Copper by flame absorption (invented): triplicates at six levels from 1 to 10 mg/L whose response bends upward
# more than a quadratic follows, so both the straight line and the quadratic lack fit; less than two decades,
# so no power curve is considered.
COPPER = [(1, 4.98), (1, 4.95), (1, 5.01), (2, 8.18), (2, 8.22), (2, 8.17), (4, 15.25), (4, 15.24), (4, 15.32),
          (6, 24.4), (6, 24.33), (6, 24.26), (8, 36.19), (8, 36.32), (8, 36.25), (10, 51.91), (10, 52.0), (10, 51.94)]


def test_neither_model_following_the_data_is_said_once(tmp_path: Path) -> None:
    std = write(tmp_path / "cu_std.csv", ["Concentration (mg/L),Absorbance", *[f"{c},{r}" for c, r in COPPER]])
    out = run_cli("compare", "--standards", str(std), "--analyte", "copper")
    assert "recommended: none — no candidate is acceptable" in out.stdout, out.stdout
    assert out.stdout.count("neither model follows the data") == 1, out.stdout
    assert re.search(r"the straight line is rejected, and the quadratic also lacks fit \(p = [^)]+\), so it cannot "
                     r"replace it\n", out.stdout), out.stdout


def test_a_refusal_shared_by_models_is_said_once() -> None:
    # the shipped demo run (an invented ligand-binding assay with anchor points): 1/s² is refused for every model
    # for the same reason, at a different lowest level for the logistic curves (they alone take the anchor points)
    out = run_cli("compare", "sample_runs/cytokine_serum_4pl.json")
    assert out.returncode in (0, 1), out.stderr
    (line,) = [ln for ln in out.stdout.splitlines() if "not fitted with 1/s^2 weighting" in ln]
    assert ".;" not in line
    assert line.count("weights from fewer than 10 replicates at every level are too imprecise") == 1, line
    assert ("for the straight line, the quadratic, the line through the origin and the power curve (the level at "
            "concentration 3 has 2 replicate(s)) and for the 4PL and the 5PL (the level at concentration 0.8 has 2 "
            "replicate(s)): weights from fewer than 10") in line, line


# Nickel by ICP-MS (invented): triplicates at six levels whose means lie almost exactly on a straight line, so the
# lack-of-fit F is tiny and its p rounds to 1 at three figures without being 1.
NICKEL_MEANS = {1: 10.01, 2: 19.98, 4: 40.01, 6: 60.02, 8: 79.99, 10: 100.0}
NICKEL = [(c, round(m + e, 2)) for c, m in NICKEL_MEANS.items() for e in (-3.0, 0.0, 3.0)]


def test_a_lack_of_fit_p_below_1_is_not_shown_as_1(tmp_path: Path) -> None:
    from scipy import stats

    x = np.array([c for c, _ in NICKEL], dtype=float)
    y = np.array([r for _, r in NICKEL])
    line = np.polyval(np.polyfit(x, y, 1), x)
    means = np.array([y[x == c].mean() for c in x])
    ss_pe, ss_lof = float(np.sum((y - means) ** 2)), float(np.sum((means - line) ** 2))
    f = (ss_lof / 4) / (ss_pe / 12)  # pure-error lack-of-fit F on (6 − 2, 18 − 6) df (ISO 8466-1 / Draper & Smith)
    p = float(stats.f.sf(f, 4, 12))  # scipy.stats
    assert 0.999 < p < 1.0 and f"{p:.3g}" == "1"

    std = write(tmp_path / "ni_std.csv", ["Concentration (µg/L),Counts", *[f"{c},{r}" for c, r in NICKEL]])
    smp = write(tmp_path / "ni_smp.csv", ["Sample,Counts", "NI-1,55.5"])
    done = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "nickel",
                   "--model", "linear", "--weighting", "none")
    assert done.returncode in (0, 1), done.stderr
    assert ", p > 0.999" in done.stdout and "p = 1\n" not in done.stdout and "p = 1;" not in done.stdout, done.stdout
    compared = run_cli("compare", "--standards", str(std), "--analyte", "nickel")
    assert "straight line lack-of-fit: F = " in compared.stdout
    assert "df, p > 0.999 (not significant at 0.05)" in compared.stdout, compared.stdout
