"""Benchmark 1: batch quantitation with intervals, 50 analytes × 2,000 unknowns.

Models: straight line, quadratic, straight line weighted 1/x². Compared with
* the reference: the obvious per-unknown loop — statsmodels' prediction interval evaluated inside a
  scipy root finder (brentq) for each end of each unknown's interval — timed on a subset and scaled;
* the floor (straight line only): Fieller's interval as a handful of vectorised numpy expressions,
  with no checks and no flags.
Targets: ≥ 1,000× faster than the reference for every model; within 3× of the floor for the line.

Run: python benchmarks/bench_batch_quantitation.py [--smoke]
"""

from __future__ import annotations

import numpy as np
from common import measure, print_table, smoke_requested
from scipy import optimize, stats

import curvewright as cw

LEVELS = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0], 3)


def invented_analyte(model: str, seed: int) -> tuple[np.ndarray, np.ndarray, str]:
    rng = np.random.default_rng(seed)
    b0, b1 = rng.uniform(0.01, 0.5), rng.uniform(0.5, 5.0)
    truth = b0 + b1 * LEVELS - (0.0015 * b1 * LEVELS**2 if model == "quadratic" else 0.0)
    if model == "weighted":
        y = truth * (1 + 0.03 * rng.standard_normal(LEVELS.size))
        return LEVELS, y, "1/x^2"
    return LEVELS, truth + 0.02 * b1 * 10 * rng.standard_normal(LEVELS.size), "none"


def engine(analytes: list[tuple[np.ndarray, np.ndarray, str]], model: str, unknowns: list[np.ndarray]):  # type: ignore[no-untyped-def]
    out = []
    for (x, y, weighting), y0 in zip(analytes, unknowns):
        cal = cw.fit(x, y, "quadratic" if model == "quadratic" else "linear", weighting)
        out.append(cal.quantify(y0))
    return out


def fieller_floor(analytes, unknowns):  # type: ignore[no-untyped-def]
    """Straight line, unweighted: Fieller's interval written out, vectorised, nothing else."""
    out = []
    for (x, y, _), y0 in zip(analytes, unknowns):
        n = x.size
        xm, ym = x.mean(), y.mean()
        sxx = ((x - xm) ** 2).sum()
        b1 = ((x - xm) * (y - ym)).sum() / sxx
        b0 = ym - b1 * xm
        s2 = ((y - b0 - b1 * x) ** 2).sum() / (n - 2)
        t2 = stats.t.ppf(0.975, n - 2) ** 2
        g = t2 * s2 / (b1 * b1 * sxx)
        x0 = (y0 - b0) / b1
        d = x0 - xm
        half = np.sqrt(t2 * s2) / b1 * np.sqrt((1 - g) * (1 + 1 / n) + d * d / sxx)
        centre = xm + d / (1 - g)
        out.append((x0, centre - half / (1 - g), centre + half / (1 - g)))
    return out


def reference_one(x, y, weighting, model, y0):  # type: ignore[no-untyped-def]
    """The obvious way, for one unknown: statsmodels fit and prediction interval inside brentq."""
    import statsmodels.api as sm

    design = (lambda v: np.column_stack([np.ones_like(v), v, v**2])) if model == "quadratic" else \
        (lambda v: np.column_stack([np.ones_like(v), v]))
    w = 1 / x**2 if weighting == "1/x^2" else np.ones_like(x)
    w = w * x.size / w.sum()
    fitted = sm.WLS(y, design(x), weights=w).fit()
    k = x.size / (1 / x**2).sum() if weighting == "1/x^2" else 1.0

    def band(v: float, column: str) -> float:
        weight = np.array([k / max(v, x.min()) ** 2 if weighting == "1/x^2" else 1.0])
        frame = fitted.get_prediction(design(np.array([v])), weights=weight).summary_frame(alpha=0.05)
        return float(frame[column].iloc[0])

    coefficients = fitted.params
    if model == "quadratic":
        roots = np.roots([coefficients[2], coefficients[1], coefficients[0] - y0])
        real = roots[np.isreal(roots)].real
        x0 = float(real[np.argmin(np.abs(real - x.mean()))])
    else:
        x0 = float((y0 - coefficients[0]) / coefficients[1])
    span = x.max() - x.min()
    lower = optimize.brentq(lambda v: band(v, "obs_ci_upper") - y0, x0 - span, x0, xtol=1e-12)
    upper = optimize.brentq(lambda v: band(v, "obs_ci_lower") - y0, x0, x0 + span, xtol=1e-12)
    return x0, lower, upper


def main() -> None:
    smoke = smoke_requested()
    n_analytes, n_unknowns, subset = (3, 50, 3) if smoke else (50, 2000, 10)
    rows = []
    results = {}
    for model in ("linear", "quadratic", "weighted"):
        analytes = [invented_analyte(model, seed) for seed in range(n_analytes)]
        rng = np.random.default_rng(99)
        unknowns = [rng.uniform(*np.sort([a[1].min(), a[1].max()]), n_unknowns) for a in analytes]
        ours = measure(f"{model} engine", lambda: engine(analytes, model, unknowns), repeats=3 if smoke else 5)
        x, y, weighting = analytes[0]
        sample = unknowns[0][:subset]
        reference = measure(f"{model} reference", lambda: [reference_one(x, y, weighting, model, v) for v in sample],
                            repeats=1, warmup=0)
        per_unknown = reference.median / subset
        scaled = per_unknown * n_analytes * n_unknowns
        speedup = scaled / ours.median
        # agreement with the reference on the subset
        engine_result = engine([analytes[0]], model, [sample])[0]
        ref = np.array([reference_one(x, y, weighting, model, v) for v in sample])
        agree = float(np.max(np.abs(np.column_stack([engine_result.estimate, engine_result.lower, engine_result.upper]) - ref)
                             / np.abs(ref)))
        results[model] = agree
        floor_text = ""
        if model == "linear":
            floor = measure("linear floor", lambda: fieller_floor(analytes, unknowns), repeats=3 if smoke else 5)
            floor_text = f"{ours.median / floor.median:.2f}× the floor (target ≤ 3×)"
            ours_first = engine([analytes[0]], model, [unknowns[0]])[0]
            flo = fieller_floor([analytes[0]], [unknowns[0]])[0]
            results["floor"] = float(np.max(np.abs(ours_first.lower - flo[1]) / np.abs(flo[1])))
        rows.append((model, f"{ours.median:.3f} s", f"{scaled:.0f} s (scaled from {subset})", f"{speedup:,.0f}×",
                     "met" if speedup >= 1000 else "NOT met", floor_text, f"{agree:.1e}"))
    print_table(f"Batch quantitation: {n_analytes} analytes × {n_unknowns} unknowns, 95 % intervals",
                rows, ("model", "engine (median)", "reference", "speed-up", "≥ 1000×", "floor", "max rel. diff"))
    print(f"\nthe engine's interval ends agree with the reference to {max(results.values()):.1e} (relative)")
    assert max(results.values()) < 1e-6, results


if __name__ == "__main__":
    main()
