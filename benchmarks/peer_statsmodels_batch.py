"""The peer of the many-runs benchmark: quantify run documents with statsmodels, as an analyst would script it.

For each run document, for each analyte: the included standards with numeric responses (as ratios
to the internal standard where the analyte uses one), one statsmodels WLS fit with the run's model
and weighting, then each sample's mean response read back through the curve with its 95 %
calibration interval: a vectorised ``get_prediction`` sizes the brackets and scipy's ``brentq``
finds each end on a scalar band function. It does less than ``curvewright quantify``: one model per
run and no comparison of candidates, no influence, lack of fit, limits, acceptance or audit check.
Prints one JSON document with every run's results.

Run: python benchmarks/peer_statsmodels_batch.py RUN.json [RUN.json ...]
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np
import statsmodels.api as sm
from scipy import optimize, special


def numeric(cell: dict | None) -> float | None:  # type: ignore[type-arg]
    value = None if cell is None else cell.get("value")
    return float(value) if isinstance(value, (int, float)) and math.isfinite(value) else None


def analyte_data(run: dict, analyte: dict):  # type: ignore[no-untyped-def,type-arg]
    """Standards (x, y) and the samples' mean responses and replicate counts for one analyte."""
    ratio = analyte.get("uses_internal_standard", False)
    x, y = [], []
    for s in analyte["standards"]:
        response = numeric(s["response"])
        internal = s.get("internal_standard_response")
        if ratio:
            internal = internal if isinstance(internal, (int, float)) else numeric(internal)
            response = None if response is None or not internal else response / internal
        if s["included"] and response is not None:
            x.append(float(s["concentration"]))
            y.append(response)
    names, means, counts = [], [], []
    for sample in run["samples"]:
        values = []
        for m in sample["measurements"]:
            if m["analyte"] != analyte["name"]:
                continue
            response = numeric(m["response"])
            internal = m.get("internal_standard_response")
            if ratio:
                internal = internal if isinstance(internal, (int, float)) else numeric(internal)
                response = None if response is None or not internal else response / internal
            if response is not None:
                values.append(response)
        if values:
            names.append(sample["id"])
            means.append(float(np.mean(values)))
            counts.append(len(values))
    return np.array(x), np.array(y), names, np.array(means), np.array(counts)


def quantify(x, y, model: str, weighting: str, y0, m, level: float = 0.95):  # type: ignore[no-untyped-def]
    quadratic = model == "quadratic"

    def design(v):  # type: ignore[no-untyped-def]
        return np.column_stack([np.ones_like(v), v, v * v] if quadratic else [np.ones_like(v), v])

    power = {"none": 0, "1/x": 1, "1/x^2": 2, "1/y": 1, "1/y^2": 2}[weighting]
    by_response = weighting in ("1/y", "1/y^2")
    basis = y if by_response else x
    raw = basis ** -float(power)
    k = x.size / raw.sum()
    floor = float(basis.min())

    def new_weight(v, y_new):  # type: ignore[no-untyped-def]
        at = np.maximum(y_new if by_response else v, floor)
        return k * at ** -float(power)

    fitted = sm.WLS(y, design(x), weights=raw * k).fit()
    b = [float(v) for v in fitted.params] + ([] if quadratic else [0.0])
    p = 3 if quadratic else 2
    cov = np.zeros((3, 3))
    cov[:p, :p] = fitted.cov_params()
    s2 = float(fitted.scale)
    t = float(special.stdtrit(fitted.df_resid, 0.5 + level / 2))
    if quadratic:
        disc = np.sqrt(np.maximum(b[1] ** 2 - 4 * b[2] * (b[0] - y0), 0.0))
        roots = np.stack([(-b[1] + disc) / (2 * b[2]), (-b[1] - disc) / (2 * b[2])])
        x0 = roots[np.argmin(np.abs(roots - x.mean()), axis=0), np.arange(y0.size)]
    else:
        x0 = (y0 - b[0]) / b[1]
    frame = fitted.get_prediction(design(x0), weights=new_weight(x0, y0) * m).summary_frame(alpha=1 - level)
    slope = b[1] + 2 * b[2] * x0
    half = (frame["obs_ci_upper"].to_numpy() - frame["mean"].to_numpy()) / np.abs(slope)
    c00, c01, c02, c11, c12, c22 = cov[0, 0], cov[0, 1], cov[0, 2], cov[1, 1], cov[1, 2], cov[2, 2]
    increasing = np.sign(slope)

    def edge(v: float, target: float, replicates: float, sign: float) -> float:
        mean = b[0] + v * (b[1] + v * b[2])
        var = c00 + v * (2 * c01 + v * (c11 + 2 * c02 + v * (2 * c12 + v * c22)))
        w = float(new_weight(np.array([v]), np.array([target]))[0]) * replicates
        return mean + sign * t * math.sqrt(var + s2 / w) - target

    def far_end(direction: float, sign: np.ndarray):  # type: ignore[no-untyped-def]
        far = x0 + direction * 2.0 * half
        for _ in range(60):
            at = fitted.get_prediction(design(far), weights=new_weight(far, y0) * m).summary_frame(alpha=1 - level)
            edge_value = np.where(sign > 0, at["obs_ci_upper"].to_numpy(), at["obs_ci_lower"].to_numpy()) - y0
            short = np.where(sign > 0, edge_value >= 0, edge_value <= 0)
            if not short.any():
                break
            far = np.where(short, x0 + 2.0 * (far - x0), far)
        return far

    lower_far, upper_far = far_end(-1.0, increasing), far_end(1.0, -increasing)
    lower, upper = [], []
    for i in range(y0.size):
        try:
            lower.append(optimize.brentq(edge, lower_far[i], x0[i], args=(y0[i], m[i], increasing[i]), xtol=1e-13))
        except ValueError:
            lower.append(float("-inf"))
        try:
            upper.append(optimize.brentq(edge, x0[i], upper_far[i], args=(y0[i], m[i], -increasing[i]), xtol=1e-13))
        except ValueError:
            upper.append(float("inf"))
    return x0, np.array(lower), np.array(upper)


def quantify_run(path: Path) -> dict:  # type: ignore[type-arg]
    run = json.loads(path.read_text(encoding="utf-8"))
    out = {"run": run.get("name"), "source": str(path), "analytes": []}
    level = float(run.get("settings", {}).get("confidence_level", 0.95))
    for analyte in run["analytes"]:
        x, y, names, y0, m = analyte_data(run, analyte)
        estimate, lower, upper = quantify(x, y, analyte["model"], analyte["weighting"], y0, m, level)
        out["analytes"].append({
            "name": analyte["name"], "model": analyte["model"], "weighting": analyte["weighting"],
            "samples": [{"id": n, "estimate": float(e), "lower": float(lo), "upper": float(hi)}
                        for n, e, lo, hi in zip(names, estimate, lower, upper)],
        })
    return out


def main(paths: list[str]) -> None:
    results = [quantify_run(Path(p)) for p in paths]
    json.dump(results, sys.stdout, indent=1, allow_nan=True)
    print()


if __name__ == "__main__":
    main(sys.argv[1:])
