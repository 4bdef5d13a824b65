"""What the calibration figures plot, as arrays: which standards and samples have a place on the axes
and where, and the acceptance limits as steps. Shared by the screen's plots (:mod:`.figures`, drawn
with pyqtgraph) and the printed record's figures (:mod:`.record_figures`, drawn with QPainter), so the
two always show the same points. Needs neither Qt nor pyqtgraph; nothing here computes a statistic.
"""

from __future__ import annotations

import numpy as np

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import AnalyteResult


def wide_range(a: AnalyteResult) -> bool:
    """True when the positive standards span two decades or more: a log concentration axis reads better."""
    cal = a.calibration
    if cal is None:
        return False
    positive = cal.concentration[cal.concentration > 0]
    return positive.size > 1 and positive.max() / positive.min() >= 100


def shaded_ends(a: AnalyteResult, low: float, high: float, tx) -> tuple[float, float]:  # type: ignore[no-untyped-def]
    """The ends of the range the plots leave unshaded, as plotted: the calibrated range (``low``,
    ``high``, already through the axis transform ``tx``), or the narrowed reporting range (LLOQ–ULOQ)
    when a failing end level narrowed it (:attr:`.reporting.ReportingRange.narrowing`)."""
    rng = a.reporting
    if rng is None or not rng.narrowing:
        return low, high
    return float(tx(rng.lloq)), float(tx(rng.uloq))


def excluded_points(a: AnalyteResult, tx, ty, log_x: bool, log_y: bool) -> tuple[list[float], list[float]]:  # type: ignore[no-untyped-def]
    """The excluded standards that have a usable response and a place on the axes, as plotted
    (concentration and response through the axis transforms ``tx`` and ``ty``)."""
    from ..core.run_analysis import response_value

    ex_x, ex_y = [], []
    for s in a.excluded_standards:
        used, _ = response_value(s.response, s.internal_standard_response, a.analyte.uses_internal_standard)
        if used is not None and (s.concentration > 0 or not log_x) and (used > 0 or not log_y):
            ex_x.append(float(tx(s.concentration)))
            ex_y.append(float(ty(used)))
    return ex_x, ex_y


def sample_points(a: AnalyteResult, kind, tx, ty, log_x: bool, log_y: bool):  # type: ignore[no-untyped-def]
    """The samples of ``kind`` with an estimate that the axes can show, as plotted: estimate, mean
    response, and the interval's ends (an end that is missing, open or off a log axis drawn at the
    estimate), each through the axis transforms ``tx`` and ``ty``; None when there is none.

    The results are read from the analysis's sample columns (a missing value as NaN), chosen over arrays."""
    columns = a.sample_columns
    if columns is None or not len(columns):
        return None
    of_kind = np.fromiter((k is kind for k in columns.kinds), bool, len(columns))
    of_kind &= columns.quantified & ~np.isnan(columns.estimate)
    if not of_kind.any():
        return None
    estimate, mean = columns.estimate[of_kind], columns.mean_response[of_kind]
    shown = np.ones(estimate.size, bool)
    if log_x:
        shown &= estimate > 0
    if log_y:
        shown &= mean > 0
    if not shown.any():
        return None
    lower = columns.lower[of_kind][shown]  # a missing end is NaN: not finite
    upper = columns.upper[of_kind][shown]
    estimate, mean = estimate[shown], mean[shown]
    lower_shown = np.isfinite(lower) & (lower > 0) if log_x else np.isfinite(lower)
    lo_raw = np.where(lower_shown, lower, estimate)
    hi_raw = np.where(np.isfinite(upper), upper, estimate)
    return tx(estimate), ty(mean), tx(lo_raw), tx(hi_raw)


def finite(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The points of (x, y) where both are finite (a band or curve off a log axis is NaN there)."""
    keep = np.isfinite(x) & np.isfinite(y)
    return x[keep], y[keep]


def acceptance_steps(x: np.ndarray, verdict) -> tuple[np.ndarray, np.ndarray] | None:  # type: ignore[no-untyped-def]
    """The acceptance limits as steps over the plotted concentrations ``x``: each judged level's
    tolerance (%) held from midway to its neighbours; the step edges and the tolerances, or None
    when no standard is judged."""
    judged_levels = np.unique(x[verdict.judged])
    if not judged_levels.size:
        return None
    tol_at = np.array([verdict.tolerance_percent[x == lv][0] for lv in judged_levels])
    mids = (judged_levels[1:] + judged_levels[:-1]) / 2
    spread = (judged_levels[-1] - judged_levels[0]) or abs(judged_levels[0]) or 1.0
    edges = np.concatenate([[judged_levels[0] - 0.03 * spread], mids, [judged_levels[-1] + 0.03 * spread]])
    return edges, tol_at


