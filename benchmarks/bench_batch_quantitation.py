"""Benchmark 1: batch quantitation with 95 % calibration intervals.

Part A, 50 analytes × 2,000 unknowns, for the straight line, the straight line weighted 1/x², the
quadratic and the quadratic weighted 1/x². The engine (``fit`` and ``quantify`` for each analyte)
against a fair peer written as a competent analyst would write it with statsmodels: one WLS fit per
analyte, one vectorised ``get_prediction`` at the estimates to size and check brackets for the
ends, then scipy's ``brentq`` on a scalar band function for each end of each unknown. Both sides run
on every unknown, both are warmed, and they are timed in interleaved rounds. Every end of every
unknown must agree to 1e-9 (relative).
Target: ≥ 100× the peer for every model.

Part B, 1,000,000 unknowns on one calibration per model, the fit made beforehand:
* every model's ``quantify`` against the unweighted straight line's (Fieller's closed form);
  target ≤ 3×;
* the unweighted straight line against Fieller's interval as bare numpy on the same unknowns
  (the fit's summary numbers computed beforehand, no checks and no flags); target ≤ 3×;
* peak memory traced during ``quantify``, per unknown; target ≤ 200 B.

Beside each wall-clock median, the CPU time (time.process_time) of the same calls, median over the
same rounds: on a shared machine the CPU time a side uses is less disturbed by the others' load.

Run: python benchmarks/bench_batch_quantitation.py [--smoke]
"""

from __future__ import annotations

import gc
import math
import os
import statistics
import time

import numpy as np
from common import peak_bytes, print_table, smoke_requested
from scipy import optimize, special

import curvewright as cw

LEVELS = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0], 3)
MODELS = {  # label: (model, weighting)
    "line": ("linear", "none"),
    "line 1/x²": ("linear", "1/x^2"),
    "quadratic": ("quadratic", "none"),
    "quadratic 1/x²": ("quadratic", "1/x^2"),
}


def invented_analyte(model: str, weighting: str, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Standards of an invented assay: a gently bending response, 3 % CV when weighted, else a constant SD."""
    rng = np.random.default_rng(seed)
    b0, b1 = rng.uniform(0.01, 0.5), rng.uniform(0.5, 5.0)
    truth = b0 + b1 * LEVELS - (0.0015 * b1 * LEVELS**2 if model == "quadratic" else 0.0)
    if weighting == "1/x^2":
        return LEVELS, truth * (1 + 0.03 * rng.standard_normal(LEVELS.size))
    return LEVELS, truth + 0.2 * b1 * rng.standard_normal(LEVELS.size)


def unknowns_for(y: np.ndarray, k: int, seed: int) -> np.ndarray:
    """Responses spread over the standards' up to 100 (of 200): every interval then closes on both
    sides before the quadratic turns over, which the peer, like most hand-written scripts, does not handle."""
    return np.random.default_rng(seed).uniform(np.min(y), np.max(y[LEVELS <= 100.0]), k)


def timed_rounds(fns, rounds: int, warmup: int):  # type: ignore[no-untyped-def]
    """Each function timed in interleaved rounds after ``warmup`` calls of each, with the garbage
    collector held off while it runs (as ``common.interleaved``); the median wall-clock and CPU
    seconds of each, from the same calls."""
    for _ in range(warmup):
        for fn in fns.values():
            fn()
    wall: dict[str, list[float]] = {label: [] for label in fns}
    cpu: dict[str, list[float]] = {label: [] for label in fns}
    for _ in range(rounds):
        for label, fn in fns.items():
            gc.collect()
            gc.disable()
            try:
                start, start_cpu = time.perf_counter(), time.process_time()
                fn()
                cpu[label].append(time.process_time() - start_cpu)
                wall[label].append(time.perf_counter() - start)
            finally:
                gc.enable()
    return ({label: statistics.median(v) for label, v in wall.items()},
            {label: statistics.median(v) for label, v in cpu.items()})


# --- the engine --------------------------------------------------------------------------------
def engine(analytes, model: str, weighting: str, unknowns):  # type: ignore[no-untyped-def]
    out = []
    for (x, y), y0 in zip(analytes, unknowns):
        q = cw.fit(x, y, model, weighting).quantify(y0)
        out.append((q.estimate, q.lower, q.upper))
    return out


# --- the fair peer -----------------------------------------------------------------------------
def peer(analytes, model: str, weighting: str, unknowns):  # type: ignore[no-untyped-def]
    """One statsmodels fit per analyte; vectorised get_prediction for the brackets; brentq per end."""
    import statsmodels.api as sm

    quadratic = model == "quadratic"
    out = []
    for (x, y), y0 in zip(analytes, unknowns):
        def design(v):  # type: ignore[no-untyped-def]
            return np.column_stack([np.ones_like(v), v, v * v] if quadratic else [np.ones_like(v), v])

        raw = 1.0 / x**2 if weighting == "1/x^2" else np.ones_like(x)
        scale_w = x.size / raw.sum()
        x_low = float(x.min())

        def new_weight(v):  # type: ignore[no-untyped-def]
            # the weight of a new response: 1/x² on the standards' scale, held at the lowest standard below it
            return scale_w / np.maximum(v, x_low) ** 2 if weighting == "1/x^2" else np.ones_like(v)

        fitted = sm.WLS(y, design(x), weights=raw * scale_w).fit()
        b = [float(v) for v in fitted.params] + ([] if quadratic else [0.0])
        cov = np.zeros((3, 3))
        p = 3 if quadratic else 2
        cov[:p, :p] = fitted.cov_params()
        s2, t = float(fitted.scale), float(special.stdtrit(fitted.df_resid, 0.975))
        # the estimate: the root on the branch that holds the standards
        if quadratic:
            disc = np.sqrt(b[1] ** 2 - 4 * b[2] * (b[0] - y0))
            roots = np.stack([(-b[1] + disc) / (2 * b[2]), (-b[1] - disc) / (2 * b[2])])
            x0 = roots[np.argmin(np.abs(roots - x.mean()), axis=0), np.arange(y0.size)]
        else:
            x0 = (y0 - b[0]) / b[1]
        frame = fitted.get_prediction(design(x0), weights=new_weight(x0)).summary_frame(alpha=0.05)
        slope = b[1] + 2 * b[2] * x0
        half = (frame["obs_ci_upper"].to_numpy() - frame["mean"].to_numpy()) / np.abs(slope)
        c00, c01, c02, c11, c12, c22 = cov[0, 0], cov[0, 1], cov[0, 2], cov[1, 1], cov[1, 2], cov[2, 2]

        def edge(v: float, target: float, sign: float) -> float:
            """The band's upper (sign +1) or lower (−1) edge at concentration v, less the response."""
            mean = b[0] + v * (b[1] + v * b[2])
            var = c00 + v * (2 * c01 + v * (c11 + 2 * c02 + v * (2 * c12 + v * c22)))
            w = scale_w / max(v, x_low) ** 2 if weighting == "1/x^2" else 1.0
            return mean + sign * t * math.sqrt(var + s2 / w) - target

        def bracket(sign: float, direction: float):  # type: ignore[no-untyped-def]
            """Far ends for brentq: widened (vectorised) until the band edge is past the response there."""
            far = x0 + direction * 2.0 * half
            column = "obs_ci_upper" if sign > 0 else "obs_ci_lower"
            while True:
                at_far = fitted.get_prediction(design(far), weights=new_weight(far)).summary_frame(alpha=0.05)
                value = at_far[column].to_numpy() - y0
                # the lower end needs the upper edge below the response; the upper end the lower edge above it
                short = (value >= 0) if sign > 0 else (value <= 0)
                if not short.any():
                    return far
                far = np.where(short, x0 + 2.0 * (far - x0), far)

        low_far, high_far = bracket(1.0, -1.0), bracket(-1.0, 1.0)
        lower = np.array([optimize.brentq(edge, lo, c, args=(v, 1.0), xtol=1e-13)
                          for lo, c, v in zip(low_far, x0, y0)])
        upper = np.array([optimize.brentq(edge, c, hi, args=(v, -1.0), xtol=1e-13)
                          for hi, c, v in zip(high_far, x0, y0)])
        out.append((x0, lower, upper))
    return out


def largest_difference(ours, theirs) -> float:  # type: ignore[no-untyped-def]
    worst = 0.0
    for a, b in zip(ours, theirs):
        for u, v in zip(a, b):
            worst = max(worst, float(np.max(np.abs(u - v) / np.abs(v))))
    return worst


# --- Fieller's interval as bare numpy -----------------------------------------------------------
def fieller_summary(x: np.ndarray, y: np.ndarray) -> tuple[float, ...]:
    """What Fieller's interval needs from an unweighted straight-line fit, computed once."""
    n = x.size
    xm, ym = x.mean(), y.mean()
    sxx = float(((x - xm) ** 2).sum())
    b1 = float(((x - xm) * (y - ym)).sum() / sxx)
    b0 = float(ym - b1 * xm)
    s2 = float(((y - b0 - b1 * x) ** 2).sum() / (n - 2))
    t2 = float(special.stdtrit(n - 2, 0.975)) ** 2
    return n, float(xm), sxx, b0, b1, s2, t2


def fieller_floor(summary: tuple[float, ...], y0: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Estimate and Fieller's interval (Draper & Smith, Applied Regression Analysis, §3.2), vectorised."""
    n, xm, sxx, b0, b1, s2, t2 = summary
    g = t2 * s2 / (b1 * b1 * sxx)
    x0 = (y0 - b0) / b1
    d = x0 - xm
    half = math.sqrt(t2 * s2) / abs(b1) * np.sqrt((1 - g) * (1 + 1 / n) + d * d / sxx) / (1 - g)
    centre = xm + d / (1 - g)
    return x0, centre - half, centre + half


def load_average() -> str:
    """The system's load average over 1, 5 and 15 minutes, as `uptime` shows it."""
    return ", ".join(f"{value:.2f}" for value in os.getloadavg()) if hasattr(os, "getloadavg") else "not known"


def main() -> None:
    smoke = smoke_requested()
    print(f"load average at the start: {load_average()}")
    n_analytes, n_unknowns = (2, 40) if smoke else (50, 2000)
    rounds = 2 if smoke else 3
    rows = []
    worst = 0.0
    # Part A: against the fair peer
    for label, (model, weighting) in MODELS.items():
        analytes = [invented_analyte(model, weighting, seed) for seed in range(n_analytes)]
        unknowns = [unknowns_for(y, n_unknowns, 99 + i) for i, (_, y) in enumerate(analytes)]
        # both sides warmed (imports, first calls) on a few unknowns of one analyte
        engine(analytes[:1], model, weighting, [unknowns[0][:20]])
        peer(analytes[:1], model, weighting, [unknowns[0][:20]])
        wall, cpu = timed_rounds({
            "engine": lambda: engine(analytes, model, weighting, unknowns),
            "peer": lambda: peer(analytes, model, weighting, unknowns),
        }, rounds=rounds, warmup=0)
        difference = largest_difference(engine(analytes, model, weighting, unknowns),
                                        peer(analytes, model, weighting, unknowns))
        worst = max(worst, difference)
        speedup = wall["peer"] / wall["engine"]
        rows.append((label, f"{wall['engine']:.3f} s", f"{wall['peer']:.2f} s",
                     f"{speedup:,.0f}×", "met" if speedup >= 100 else "NOT met",
                     f"{cpu['engine']:.3f} s / {cpu['peer']:.2f} s, {cpu['peer'] / cpu['engine']:,.0f}×",
                     f"{difference:.1e}"))
    print_table(f"A. {n_analytes} analytes × {n_unknowns:,} unknowns, 95 % intervals, against the fair statsmodels peer "
                f"(median of {rounds} interleaved rounds)",
                rows, ("model", "engine", "peer", "speed-up", "≥ 100×", "CPU time engine / peer", "max rel. diff"))

    # Part B: one calibration per model, 1e6 unknowns, the fit made beforehand
    k = 20_000 if smoke else 1_000_000
    calibrations = {}
    for label, (model, weighting) in MODELS.items():
        x, y = invented_analyte(model, weighting, 7)
        calibrations[label] = (cw.fit(x, y, model, weighting), unknowns_for(y, k, 3))
    x, y = invented_analyte("linear", "none", 7)
    summary = fieller_summary(x, y)
    y0_line = calibrations["line"][1]
    jobs = {label: (lambda cal=cal, y0=y0: cal.quantify(y0)) for label, (cal, y0) in calibrations.items()}
    jobs["Fieller, bare numpy"] = lambda: fieller_floor(summary, y0_line)
    wall, cpu = timed_rounds(jobs, rounds=3 if smoke else 7, warmup=1)
    line, line_cpu = wall["line"], cpu["line"]
    ours = calibrations["line"][0].quantify(y0_line)
    floor = fieller_floor(summary, y0_line)
    floor_difference = max(float(np.max(np.abs(a - b) / np.abs(b)))
                           for a, b in zip((ours.estimate, ours.lower, ours.upper), floor))
    rows = []
    for label, (cal, y0) in calibrations.items():
        peak = peak_bytes(lambda: cal.quantify(y0)) / k
        ratio = wall[label] / line
        rows.append((label, f"{wall[label] * 1e3:.1f} ms", f"{ratio:.2f}×", "met" if ratio <= 3 else "NOT met",
                     f"{cpu[label] * 1e3:.1f} ms, {cpu[label] / line_cpu:.2f}×",
                     f"{peak:.0f} B", "met" if peak <= 200 else "NOT met"))
    floor = "Fieller, bare numpy"
    floor_ratio = line / wall[floor]
    print_table(f"B. {k:,} unknowns, one calibration, quantify only (median of interleaved rounds)",
                rows, ("model", "quantify", "× the line", "≤ 3×", "CPU time, × the line's", "peak memory per unknown",
                       "≤ 200 B"))
    print(f"\nline against Fieller as bare numpy: {line * 1e3:.1f} ms against "
          f"{wall[floor] * 1e3:.1f} ms, {floor_ratio:.2f}× "
          f"({'met' if floor_ratio <= 3 else 'NOT met'}, target ≤ 3×); in CPU time {line_cpu * 1e3:.1f} ms against "
          f"{cpu[floor] * 1e3:.1f} ms, {line_cpu / cpu[floor]:.2f}×; ends agree to {floor_difference:.1e}")
    print(f"the engine's interval ends agree with the peer's to {worst:.1e} (relative)")
    print(f"load average at the end: {load_average()}")
    assert worst < 1e-9, worst
    assert floor_difference < 1e-9, floor_difference


if __name__ == "__main__":
    main()
