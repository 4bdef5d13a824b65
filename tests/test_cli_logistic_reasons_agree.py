"""When the ligand-binding profile's logistic curve lacks fit, every reason of `compare` says nothing is recommended.

Invented scenario: the Quillmere IL-6 plate, triplicates at nine levels from 1.5 to 400 pg/mL, rises as a 4PL
with a ±10 % wave along the log-concentration axis, far beyond the triplicates' ±0.4 % scatter. The profile
calls for a logistic curve weighted 1/y²; the 5PL's asymmetry is no significant improvement, and the 4PL's
own lack-of-fit test rejects it. Its lack-of-fit p is worked out independently as in
``tests/test_cli_logistic_lacks_fit.py``: the 4PL fitted with scipy's ``curve_fit`` (sigma = y, i.e. weights
1/y²) and the pure-error F-test (Draper & Smith, *Applied Regression Analysis*, 3rd ed., §2.1, from memory).
The first reason says no candidate is acceptable; the reason for the logistic curve must agree with it, in
the text and in the JSON.
"""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli
from tests.test_cli_logistic_lacks_fit import independent_lack_of_fit_p, plate_run_document

PLATE = [(1.5, 122.5), (1.5, 121.9), (1.5, 121.6), (3, 204.9), (3, 205.9), (3, 206.5), (6, 326.7), (6, 325.1),
         (6, 324.1), (12, 589.6), (12, 592.6), (12, 594.3), (25, 1211.8), (25, 1205.8), (25, 1202.1),
         (50, 1829.0), (50, 1838.2), (50, 1843.7), (100, 2133.4), (100, 2122.8), (100, 2116.4),
         (200, 2464.9), (200, 2477.3), (200, 2484.7), (400, 3119.9), (400, 3104.3), (400, 3095.0)]


def quillmere_document(path: Path) -> Path:
    """The plate as a run document saved by the program, judged by the ligand-binding profile."""
    return plate_run_document(path, PLATE, replicates=3, title="IL-6, Quillmere plate 7", analyte="IL-6", prefix="S")


def test_the_logistic_reason_does_not_recommend_a_curve_that_lacks_fit(tmp_path: Path) -> None:
    p = independent_lack_of_fit_p(PLATE, start=(40, 3200, 45, 1.1))
    assert f"{p:.3g}" == "3.26e-22"  # scipy curve_fit + pure-error F-test (module docstring)
    args = ("compare", str(quillmere_document(tmp_path / "il6.json")))
    as_json = run_cli(*args, "--json")
    assert as_json.returncode == 1, as_json.stderr  # nothing recommended (README's exit codes)
    entry = json.loads(as_json.stdout)[0]
    reasons = entry["reasons"]
    assert reasons[0].startswith("no candidate is acceptable, so none is recommended: the 4PL logistic curve "
                                 "(weighted 1/y²) is rejected by its lack-of-fit test (p = 3.26e-22)")  # JSON gives numbers in machine form
    assert "the 5PL's asymmetry is no significant improvement (F = 1.742, p = 0.2), so the simpler 4PL" in reasons
    (logistic,) = [r for r in reasons if r.startswith("ligand-binding profile:")]
    assert logistic.startswith("ligand-binding profile: a logistic curve is called for, but the 4PL logistic curve "
                               "chosen below lacks fit (see the first reason), so none is recommended; "), logistic
    assert not any("a logistic curve is recommended" in r for r in reasons), reasons
    mark = entry["columns"].index("Recommended")
    assert all(row[mark] == "" for row in entry["rows"])

    out = run_cli(*args)
    assert out.returncode == 1, out.stderr
    text = " ".join(out.stdout.split()).replace("\u00a0", " ")
    assert "a logistic curve is called for, but the 4PL logistic curve chosen below lacks fit" in text, out.stdout
    assert "a logistic curve is recommended" not in text, out.stdout
