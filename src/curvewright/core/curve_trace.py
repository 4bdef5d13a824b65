"""Points along a calibration for drawing: the curve, its confidence band and its prediction band.

Plain arrays for any view (the app's plot, the report's figure); every value comes from the
calibration's own methods (:meth:`Calibration.predict`, ``confidence_band``, ``prediction_band``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._arrays import FloatArray, frozen
from .calibration import Calibration


@dataclass(frozen=True, eq=False)
class CurveTrace:
    concentration: FloatArray
    response: FloatArray
    confidence_lower: FloatArray
    confidence_upper: FloatArray
    prediction_lower: FloatArray
    prediction_upper: FloatArray
    level: float


def curve_trace(
    cal: Calibration, *, level: float = 0.95, points: int = 200, log_spacing: bool = False, margin: float = 0.05
) -> CurveTrace:
    """Sample the curve over the standards' concentrations widened by ``margin`` (fraction of the span).

    The span is that of every standard in the fit, the anchor points of a logistic curve included (for
    the other models it is the calibrated range). With ``log_spacing`` the points are spaced evenly in
    log(x) over the positive part of the range.
    """
    low, high = float(cal.concentration.min()), float(cal.concentration.max())
    if log_spacing:
        positive = cal.concentration[cal.concentration > 0]
        start = float(positive.min()) if positive.size else max(high * 1e-3, 1e-12)
        x = np.geomspace(start / (1 + margin), high * (1 + margin), points)
    else:
        span = high - low
        start = low - margin * span
        if not cal.model.is_polynomial:
            start = max(start, 0.0)  # the logistic and power curves are defined for concentrations ≥ 0
        x = np.linspace(start, high + margin * span, points)
    if cal.model.value == "quadratic" and cal.vertex is not None:
        # never draw the curve past its vertex on the calibrated side
        if cal.quadratic_branch > 0:
            x = x[x >= cal.vertex]
        else:
            x = x[x <= cal.vertex]
    conf = cal.confidence_band(x, level)
    pred = cal.prediction_band(x, level)
    return CurveTrace(
        concentration=frozen(x),
        response=frozen(cal.predict(x)),
        confidence_lower=frozen(conf[0]),
        confidence_upper=frozen(conf[1]),
        prediction_lower=frozen(pred[0]),
        prediction_upper=frozen(pred[1]),
        level=level,
    )
