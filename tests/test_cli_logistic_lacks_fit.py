"""A logistic curve that its own lack-of-fit test rejects is not recommended under the ligand-binding profile.

Invented scenario: the Fernhollow cytokine plate (duplicates at eight levels, 1 to 128 pg/mL) rises as a
4PL with a periodic distortion of ±12 % along the log-concentration axis, far beyond the duplicates' ±0.5 %
scatter. The ligand-binding profile asks for a logistic curve weighted 1/y² (the scatter grows with the
response); the 5PL cannot be fitted under 1/y², and the 4PL's lack-of-fit test rejects it. Its lack-of-fit
p is worked out here independently: the 4PL fitted with scipy's ``curve_fit`` (sigma = y, i.e. weights
1/y²) and the textbook pure-error F-test, F = [(SSE − SSPE)/(m − 4)] / [SSPE/(n − m)] on (m − 4, n − m) df
(Draper & Smith, *Applied Regression Analysis*, 3rd ed., §2.1, from memory). The comparison then
recommends nothing, as it does for a quadratic that lacks fit: the command line text and JSON, its exit
code, the refusal to quantify on a recommendation, and the record's model evidence agree.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pypdfium2 as pdfium

from curvewright.core.run import Analyte, Reading, RunSettings, Standard
from curvewright.io import run_edits
from curvewright.io.run_document import dumps_run
from tests.test_cli_tables import run_cli, write

PLATE = [(1, 66.3), (1, 65.7), (2, 98.0), (2, 97.0), (4, 127.4), (4, 126.1), (8, 275.5), (8, 272.7),
         (16, 542.6), (16, 537.2), (32, 782.3), (32, 774.5), (64, 1414.3), (64, 1400.2), (128, 1716.2), (128, 1699.2)]


def independent_lack_of_fit_p(plate=PLATE, start=(50, 2000, 40, 1.3)) -> float:  # type: ignore[no-untyped-def]
    """The 4PL's lack-of-fit p of ``plate`` ((concentration, response) pairs), fitted from ``start`` (a, d, c50, b)."""
    from scipy import optimize, stats

    x, y = (np.array(v, dtype=float) for v in zip(*plate))

    def four_pl(c, a, d, c50, b):  # a at zero concentration, d at infinite concentration
        return d + (a - d) / (1 + (c / c50) ** b)

    params, _ = optimize.curve_fit(four_pl, x, y, p0=start, sigma=y, maxfev=20000)
    w = 1 / y**2
    sse = float(np.sum(w * (y - four_pl(x, *params)) ** 2))
    levels = np.unique(x)
    sspe = sum(float(np.sum(w[x == c] * (y[x == c] - np.average(y[x == c], weights=w[x == c])) ** 2)) for c in levels)
    m, n = levels.size, x.size
    f = ((sse - sspe) / (m - 4)) / (sspe / (n - m))
    return float(stats.f.sf(f, m - 4, n - m))


def plate_run_document(path: Path, plate=PLATE, *, replicates: int = 2, title: str = "Cytokine, Fernhollow plate 3",  # type: ignore[no-untyped-def]
                       analyte: str = "cytokine", prefix: str = "C") -> Path:
    """The plate as a run document saved by the program, judged by the ligand-binding profile: ``plate``
    holds (concentration, response) pairs, ``replicates`` of each level one after the other."""
    standards = tuple(Standard(f"{prefix}-{i + 1}", float(c), Reading(r, f"{r:.1f}"), 1 + i % replicates,
                               f"L{i // replicates + 1}") for i, (c, r) in enumerate(plate))
    run = run_edits.new_run(title, (Analyte(analyte, "pg/mL", "RLU", standards),),
                            settings=RunSettings(acceptance_profile="ich-m10-ligand-binding"), user="a.tester")
    path.write_text(dumps_run(run), encoding="utf-8")
    return path


def test_a_logistic_curve_that_lacks_fit_is_not_recommended(tmp_path: Path) -> None:
    p = independent_lack_of_fit_p()
    assert f"{p:.3g}" == "1.22e-09"  # scipy curve_fit + pure-error F-test, as in the module docstring
    shown_p = "p = 1.22\u00a0×\u00a010⁻⁹"
    plate = plate_run_document(tmp_path / "plate.json")
    out = run_cli("compare", str(plate))
    assert out.returncode == 1, out.stderr  # nothing recommended (README's exit codes)
    text = " ".join(out.stdout.split())
    assert (f"• no candidate is acceptable, so none is recommended: the 4PL logistic curve (weighted 1/y²) is rejected "
            f"by its lack-of-fit test ({shown_p})").replace("\u00a0", " ") in text.replace("\u00a0", " "), out.stdout
    as_json = run_cli("compare", str(plate), "--json")
    assert as_json.returncode == 1, as_json.stderr
    entry = json.loads(as_json.stdout)[0]
    assert entry["reasons"][0].startswith("no candidate is acceptable, so none is recommended: the 4PL logistic curve")
    mark = entry["columns"].index("Recommended")
    assert all(row[mark] == "" for row in entry["rows"])

    std = write(tmp_path / "plate_std.csv", ["Concentration,Response", *[f"{c},{r}" for c, r in PLATE]])
    smp = write(tmp_path / "plate_smp.csv", ["Sample,Response", "P-1,300", "P-2,900"])
    refused = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cytokine",
                      "--profile", "ich-m10-ligand-binding")
    assert refused.returncode == 2 and "cytokine: no model recommended: the 4PL logistic curve" in refused.stderr, refused.stderr
    record = tmp_path / "plate.pdf"
    chosen = run_cli("quantify", str(plate), "--report", str(record), "--model", "4pl", "--weighting", "1/y^2")
    assert chosen.returncode in (0, 1), chosen.stderr  # the analyst's own choice is quantified, and judged
    pdf = pdfium.PdfDocument(str(record))
    try:
        printed = " ".join(" ".join(pdf[i].get_textpage().get_text_range() for i in range(len(pdf))).split())
    finally:
        pdf.close()
    evidence = printed[printed.index("Model evidence"):]
    assert "recommended" not in evidence[:evidence.index("•")]
    assert "• no candidate is acceptable, so none is recommended: the 4PL logistic curve" in printed
