"""Benchmark 2: the model screen for one analyte (8 levels × 3 replicates).

Every candidate model (line, quadratic) and weighting (none, 1/x, 1/x², 1/y, 1/y², 1/s²) with
all diagnostics, by ``curvewright.compare``, against doing the same with statsmodels: WLS fits,
influence from OLS on the whitened problem (get_influence), lack of fit from anova_lm of the model
against the cell-means model. Target ≥ 10× faster; results equal to 1e-9.

Run: python benchmarks/bench_model_screen.py [--smoke]
"""

from __future__ import annotations

import numpy as np
from common import measure, print_table, smoke_requested

import curvewright as cw

X = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0], 3)
RNG = np.random.default_rng(8)
Y = (0.05 + 0.8 * X) * (1 + 0.04 * RNG.standard_normal(X.size))
WEIGHTINGS = ("none", "1/x", "1/x^2", "1/y", "1/y^2", "1/s^2")


def statsmodels_screen() -> dict[tuple[str, str], dict[str, object]]:
    import pandas as pd
    import statsmodels.api as sm
    from statsmodels.stats.anova import anova_lm

    levels = np.unique(X)
    sd = np.array([Y[X == v].std(ddof=1) for v in levels])
    raw = {"none": np.ones_like(X), "1/x": 1 / X, "1/x^2": 1 / X**2, "1/y": 1 / Y, "1/y^2": 1 / Y**2,
           "1/s^2": 1 / sd[np.searchsorted(levels, X)] ** 2}
    cells = pd.get_dummies(pd.Series(X).astype(str)).to_numpy(dtype=float)
    out = {}
    for weighting in WEIGHTINGS:
        w = raw[weighting] * X.size / raw[weighting].sum()
        for model, design in (("linear", np.column_stack([np.ones_like(X), X])),
                              ("quadratic", np.column_stack([np.ones_like(X), X, X**2]))):
            fit = sm.WLS(Y, design, weights=w).fit()
            influence = sm.OLS(Y * np.sqrt(w), design * np.sqrt(w)[:, None]).fit().get_influence()
            full = sm.WLS(Y, cells, weights=w).fit()
            lof = anova_lm(fit, full)
            out[(model, weighting)] = {
                "coefficients": fit.params, "standard_errors": fit.bse, "residual_sd": np.sqrt(fit.scale),
                "adjusted_r_squared": fit.rsquared_adj, "leverage": influence.hat_matrix_diag,
                "cooks": influence.cooks_distance[0], "studentized": influence.resid_studentized_external,
                "lof_f": lof["F"].iloc[1], "lof_p": lof["Pr(>F)"].iloc[1],
            }
    return out


def engine_screen() -> cw.ModelComparison:
    # the reference weights 1/s² by the replicates' SDs; the engine takes them as given SDs (it refuses
    # to estimate them from three replicates)
    levels = np.unique(X)
    sd = np.array([Y[X == v].std(ddof=1) for v in levels])[np.searchsorted(levels, X)]
    return cw.compare(X, Y, weightings=WEIGHTINGS, response_sd=sd)


def max_difference(ours: cw.ModelComparison, reference: dict) -> float:  # type: ignore[type-arg]
    worst = 0.0
    for (model, weighting), ref in reference.items():
        cal = ours.candidate(model, weighting).calibration
        pairs = [(cal.coefficients, ref["coefficients"]), (cal.standard_errors, ref["standard_errors"]),
                 (cal.residual_sd, ref["residual_sd"]), (cal.adjusted_r_squared, ref["adjusted_r_squared"]),
                 (cal.leverage, ref["leverage"]), (cal.cooks_distance, ref["cooks"]),
                 (cal.studentized_residuals, ref["studentized"]), (cal.lack_of_fit.f_statistic, ref["lof_f"]),
                 (cal.lack_of_fit.p_value, ref["lof_p"])]
        for a, b in pairs:
            a, b = np.atleast_1d(np.asarray(a, float)), np.atleast_1d(np.asarray(b, float))
            worst = max(worst, float(np.max(np.abs(a - b) / np.maximum(np.abs(b), 1e-300))))
    return worst


def main() -> None:
    repeats = 3 if smoke_requested() else 15
    ours = measure("engine compare()", engine_screen, repeats=repeats)
    reference = measure("statsmodels", statsmodels_screen, repeats=repeats)
    difference = max_difference(engine_screen(), statsmodels_screen())
    speedup = reference.median / ours.median
    print_table("Model screen, 8 levels × 3 replicates, 12 candidates with all diagnostics",
                [(ours.describe(),), (reference.describe(),),
                 (f"speed-up {speedup:.1f}× (target ≥ 10×: {'met' if speedup >= 10 else 'NOT met'})",),
                 (f"largest relative difference {difference:.1e} (target ≤ 1e-9: {'met' if difference <= 1e-9 else 'NOT met'})",)],
                ("result",))
    assert difference <= 1e-9, difference


if __name__ == "__main__":
    main()
