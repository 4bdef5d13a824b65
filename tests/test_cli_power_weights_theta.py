"""Power weighting: the θ the weights use is shown, told apart from the replicate evidence's θ.

Invented scenario: lead standards at eight levels from 1 to 200 ng/mL, five replicates each, whose
scatter grows as about the 0.75th power of the response. The variance evidence estimates θ of
SD ∝ mean^θ from the replicates' scatter about their level means (0.83, worked out here with scipy
from the pure-error sums of squares, the likelihood in ``core/variance.py``); the power weighting fits
θ to the residuals of all standards about the curve (0.808). No fixed weighting matches the evidence's
interval, so the power weighting is recommended: the reasons and the calibration's note must give the
θ the weights use, and say which estimate each θ is.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
from scipy.optimize import minimize_scalar

from tests.test_cli_tables import run_cli, write

LEAD = {
    1: (12.783, 13.145, 13.333, 12.468, 13.420),
    2: (23.214, 23.658, 23.229, 23.976, 22.212),
    5: (55.791, 54.889, 52.057, 54.037, 53.699),
    10: (98.485, 104.540, 101.486, 102.353, 101.442),
    20: (201.158, 203.309, 203.416, 196.292, 201.844),
    50: (491.573, 492.202, 500.052, 510.267, 508.360),
    100: (994.379, 992.871, 991.203, 1005.035, 1016.355),
    200: (2003.432, 2019.593, 2010.555, 2039.029, 1954.935),
}


def evidence_theta() -> float:
    """θ maximising −(N/2)·log(Σ SSᵢ·μᵢ^(−2θ)/N) − θ·Σ νᵢ·log μᵢ over the levels' pure-error sums of
    squares SSᵢ (νᵢ = 4 degrees of freedom each, N = Σνᵢ), μᵢ the level means (scipy's bounded search)."""
    groups = [np.array(v) for v in LEAD.values()]
    means = np.array([g.mean() for g in groups])
    ss = np.array([np.sum((g - g.mean()) ** 2) for g in groups])
    nu = np.array([g.size - 1 for g in groups])
    n = nu.sum()

    def minus_log_likelihood(theta: float) -> float:
        return 0.5 * n * np.log(np.sum(ss * means ** (-2 * theta)) / n) + theta * np.sum(nu * np.log(means))

    return float(minimize_scalar(minus_log_likelihood, bounds=(-1, 3), method="bounded").x)


def test_the_theta_the_weights_use_is_shown_beside_the_evidence(tmp_path: Path) -> None:
    assert f"{evidence_theta():.2f}" == "0.83"  # scipy, on the likelihood stated above
    std = write(tmp_path / "lead_std.csv", ["Standard,Concentration (ng/mL),Response",
                                            *[f"P{c}-{i + 1},{c},{r:.3f}" for c, rs in LEAD.items()
                                              for i, r in enumerate(rs)]])
    smp = write(tmp_path / "lead_smp.csv", ["Sample,Response", "X-1,250.4", "X-2,1500.2"])
    out = run_cli("compare", "--standards", str(std), "--analyte", "lead")
    assert out.returncode == 0, out.stderr
    assert "recommended: linear, power" in out.stdout
    assert ("no fixed weighting matches, so the weights follow a variance function fitted to all standards (power): "
            "the straight line's weights use θ = 0.808, fitted to the residuals of all standards about the curve; "
            "θ = 0.83 is the replicate evidence's estimate, fitted to the replicates' scatter about their level "
            "means") in out.stdout

    done = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "lead", "--json")
    assert done.returncode in (0, 1), done.stderr
    analyte = json.loads(done.stdout)["analytes"][0]
    notes = [n for n in analyte["notes"] if n.startswith("weights from a variance function")]
    assert notes == ["weights from a variance function: SD ∝ (mean response)^θ with θ = 0.808, the θ the weights "
                     "use, fitted to the residuals of all standards"]
    assert analyte["weighting"] == "power"
    # every θ in the reasons is one of the two, each labelled where it is given
    said = " ".join([*analyte["choice_reasons"], analyte["choice_reason"]])
    assert "the straight line's weights use θ = 0.808" in said
    assert set(re.findall(r"θ = (0\.\d+)", said)) == {"0.83", "0.808"}
