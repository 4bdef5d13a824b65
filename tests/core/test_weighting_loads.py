"""Estimated weights' variance functions are loaded only by a fit that estimates one.

A run quantified under fixed weights (here 1/x²) does not import ``core.variance_function``; a fit
under the power weighting does, and gives the same numbers as before. Checked in a fresh process
with ``python -X importtime``, which lists every module the process imported.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
RUN = ROOT / "sample_runs" / "veltaprine_plasma_weighted.json"
VARIANCE_FUNCTION = "curvewright.core.variance_function"


def _imported(*args: str) -> tuple[set[str], subprocess.CompletedProcess]:
    done = subprocess.run([sys.executable, "-X", "importtime", *args], capture_output=True, text=True,
                          cwd=ROOT, timeout=300)
    names = {line.rsplit("|", 1)[1].strip() for line in done.stderr.splitlines()
             if line.startswith("import time:") and "|" in line}
    return names, done


def test_quantify_under_fixed_weights_does_not_load_the_variance_functions() -> None:
    run = json.loads(RUN.read_text(encoding="utf-8"))
    assert {a["weighting"] for a in run["analytes"]} == {"1/x^2"}, "the demo run's weighting is fixed"
    names, done = _imported("-m", "curvewright", "quantify", str(RUN), "--json")
    assert done.returncode == 0, done.stderr[-2000:]
    assert json.loads(done.stdout)["chain_check"].startswith("verified")
    assert "curvewright.core.weighting" in names
    assert VARIANCE_FUNCTION not in names


def test_a_fit_under_estimated_weights_loads_them_where_it_needs_them() -> None:
    code = ("import sys, curvewright as cw; "
            "x = [1, 1, 2, 2, 5, 5, 10, 10, 20, 20, 50, 50]; "
            "y = [0.101, 0.098, 0.203, 0.196, 0.49, 0.515, 1.03, 0.97, 1.96, 2.05, 5.2, 4.85]; "
            "before = '" + VARIANCE_FUNCTION + "' in sys.modules; "
            "fixed = cw.fit(x, y, 'linear', '1/x^2'); "
            "middle = '" + VARIANCE_FUNCTION + "' in sys.modules; "
            "cal = cw.fit(x, y, 'linear', 'power'); "
            "print(before, middle, '" + VARIANCE_FUNCTION + "' in sys.modules, cal.weight_model.estimated)")
    names, done = _imported("-c", code)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["False", "False", "True", "True"]
