"""The one entry point for fitting a calibration: ``fit(concentration, response, model, weighting)``.

Polynomials and the average response factor are fitted by weighted linear least squares
(:func:`.calibration.fit`, where every parameter, formula and source is described); the logistic and
power curves by weighted nonlinear least squares (:func:`.nonlinear_calibration.fit_nonlinear_curve`).
Kept apart so that the core's modules import each other in one direction: the nonlinear calibration
builds on :mod:`.calibration`, which therefore never imports it.
"""

from __future__ import annotations

from collections.abc import Sequence

from .calibration import Calibration
from .calibration import fit as _fit_checked
from .levels import Levels
from .model_kinds import Model
from .weighting_kinds import Weighting


def fit(
    concentration: object,
    response: object,
    model: Model | str = "linear",
    weighting: Weighting | str = "none",
    *,
    response_sd: object | None = None,
    level_tolerance: float | None = None,
    level_labels: Sequence[str] | None = None,
    levels: Levels | None = None,
    anchor_points: Sequence[bool] | None = None,
) -> Calibration:
    """Fit a calibration curve to standards; see :func:`.calibration.fit` for the parameters, the
    formulas and their sources. The nonlinear fitter (and scipy.optimize) loads only when a curve that
    is not a polynomial is asked for."""
    curve_fitter = None
    if not Model.parse(model).is_polynomial:
        from .nonlinear_calibration import fit_nonlinear_curve

        curve_fitter = fit_nonlinear_curve
    return _fit_checked(concentration, response, model, weighting, response_sd=response_sd,
                        level_tolerance=level_tolerance, level_labels=level_labels, levels=levels,
                        anchor_points=anchor_points, curve_fitter=curve_fitter)
