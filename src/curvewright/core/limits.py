"""Detection and quantitation limits from a calibration.

Methods (the result always states which one was used):

``"residual_sd"`` — ICH Q2(R1) §6.3/§7.3 (Q2(R2) keeps them): LOD = 3.3·σ/S, LOQ = 10·σ/S, with σ
    the residual SD of the calibration and S its slope. For a weighted fit σ is the SD the weighting
    gives a response at the lowest standard, s/√w(x_lowest), because the residual SD of a weighted
    fit describes a response of average weight, not the low end. For the quadratic, S is the slope
    at zero concentration (b1).
``"intercept_sd"`` — the same ICH formulas with σ the standard error of the intercept b0.
``"iso11843"`` — ISO 11843-2:2000 for an unweighted straight line with constant variance (formulas
    as recalled from the standard, not re-read): with K replicates of the test sample, N standards,
    ν = N − 2 and q = √(1/K + 1/N + x̄²/Σ(xᵢ − x̄)²),
    critical value of the net concentration x_c = t(1 − α; ν)·(σ/b)·q,
    critical response y_c = a + t(1 − α; ν)·σ·q,
    minimum detectable value x_d = δ(ν; α; β)·(σ/b)·q, δ the non-centrality of the non-central t
    whose β-quantile is t(1 − α; ν). The standard defines no quantitation limit (``loq`` is None).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from .values import frozen_value
from .number_words import full_number
from ._arrays import as_whole_count
from .errors import LimitsError
from .models import Model
from .weighting import Weighting
from .notation import entered, figures

if TYPE_CHECKING:  # pragma: no cover
    from .rounding import RoundingRule
    from .fitted_curve import FittedCurve

LIMIT_METHODS = ("residual_sd", "intercept_sd", "iso11843")


@frozen_value
class DetectionLimits:
    """Limits in concentration units, with the method that produced them in words."""

    method: str
    description: str
    lod: float
    loq: float | None
    sigma: float
    slope: float
    critical_response: float | None = None
    critical_concentration: float | None = None
    readings: int = 1
    """ISO 11843-2: the number K of readings of a test sample the limits are for (1 for other methods)."""

    def values_words(self, unit: str = "", rule: "RoundingRule | None" = None) -> str:
        """The limits with their values, in words: "LOD 0.35 ng/mL, LOQ 1.05 ng/mL", or for ISO 11843-2
        the critical value x_c, the critical response y_c and the minimum detectable value x_d; each
        rounded by ``rule`` (the run's rounding rule; without one, 4 significant figures) and written as
        :mod:`.notation` says ("LOD 2.56 × 10⁻⁷ mg/L")."""
        from .notation import computed, figures

        def shown(value: float) -> str:
            return computed(value, rule) if rule is not None else figures(value, 4)

        u = f" {unit}" if unit else ""
        if self.critical_concentration is not None:
            return (f"critical value x_c {shown(self.critical_concentration)}{u} (critical response y_c "
                    f"{shown(self.critical_response)}), minimum detectable value x_d {shown(self.lod)}{u}; "
                    "LOQ not defined")
        loq = f"{shown(self.loq)}{u}" if self.loq is not None else "not defined"
        return f"LOD {shown(self.lod)}{u}, LOQ {loq}"


def detection_limits(
    cal: "FittedCurve",
    method: str = "residual_sd",
    *,
    alpha: float = 0.05,
    beta: float = 0.05,
    replicates: int = 1,
) -> DetectionLimits:
    """Compute LOD and LOQ of ``cal`` by ``method`` (one of :data:`LIMIT_METHODS`)."""
    if method not in LIMIT_METHODS:
        raise LimitsError(f"limits method: {method!r} is not one of {', '.join(map(repr, LIMIT_METHODS))}.")
    if not cal.regression.significant:
        raise LimitsError(f"no limit can be computed: {cal.regression.words}.")
    slope = float(cal.coefficients[1])
    if slope == 0.0:
        raise LimitsError("the calibration has zero slope at zero concentration, so no limit can be computed.")
    slope_words = "slope at zero concentration b1" if cal.model is Model.QUADRATIC else "slope b1"
    if method == "iso11843":
        return _iso11843(cal, slope, alpha, beta, replicates)
    if method == "intercept_sd":
        if not cal.model.has_intercept:
            raise LimitsError(f"the {cal.model.description} has no intercept, so its SD cannot serve as σ.")
        sigma = float(cal.standard_errors[0])
        sigma_words = "standard error of the intercept"
    else:
        if cal.weighting is Weighting.NONE:
            sigma = cal.residual_sd
            sigma_words = "residual SD"
        else:
            x_low = float(cal.concentration.min())
            # only 1/y-type weights follow the response; the others are the same whatever it is
            y_low = float(cal.predict(x_low)) if cal.weighting in (Weighting.INVERSE_Y, Weighting.INVERSE_Y2) else x_low
            weight = float(cal.weight_model.weight_at(np.array(x_low), np.array(y_low)))
            sigma = cal.residual_sd / np.sqrt(weight)
            sigma_words = f"residual SD at the lowest standard ({entered(x_low)}) under {cal.weighting.value} weighting"
    lod = 3.3 * sigma / abs(slope)
    loq = 10.0 * sigma / abs(slope)
    return DetectionLimits(
        method=method,
        description=f"ICH Q2: LOD = 3.3·σ/S, LOQ = 10·σ/S; σ = {sigma_words}, S = {slope_words}",
        lod=float(lod),
        loq=float(loq),
        sigma=float(sigma),
        slope=slope,
    )


def _iso11843(cal: "FittedCurve", slope: float, alpha: float, beta: float, replicates: int) -> DetectionLimits:
    from scipy import optimize, stats  # the non-central t is needed here only; loading it is slow

    if cal.model is not Model.LINEAR or cal.weighting is not Weighting.NONE:
        raise LimitsError(
            "ISO 11843-2 limits apply to an unweighted straight line with an intercept; this "
            f"calibration is {cal.model.description}, {cal.weighting.description}."
        )
    for name, value in (("alpha", alpha), ("beta", beta)):
        if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) or not (0.0 < value < 0.5):
            raise LimitsError(f"{name}: {value!r} must be a number between 0 and 0.5 (e.g. 0.05).")
    replicates = as_whole_count(
        replicates, "replicates", LimitsError, "the number of times the test sample is measured (K)"
    )
    x = cal.concentration
    n = x.size
    nu = cal.df_residual
    sxx = float(np.sum((x - x.mean()) ** 2))
    q = np.sqrt(1.0 / replicates + 1.0 / n + x.mean() ** 2 / sxx)
    t = float(stats.t.ppf(1.0 - alpha, nu))
    delta = float(
        optimize.brentq(lambda d: stats.nct.cdf(t, nu, d) - beta, 0.0, 10.0 * t + 20.0, xtol=1e-14)
    )
    sigma = cal.residual_sd
    x_c = t * sigma / abs(slope) * q
    x_d = delta * sigma / abs(slope) * q
    return DetectionLimits(
        method="iso11843",
        description=(
            f"ISO 11843-2: critical value x_c = t·(σ/b)·q, minimum detectable value x_d = δ·(σ/b)·q; "
            f"α = {entered(alpha)}, β = {entered(beta)}, K = {replicates} replicate(s), ν = {nu}, δ = {figures(delta, 6)}; "
            "no quantitation limit is defined"
        ),
        lod=float(x_d),
        loq=None,
        sigma=float(sigma),
        slope=slope,
        critical_response=float(cal.coefficients[0] + t * sigma * q),
        critical_concentration=float(x_c),
        readings=replicates,
    )
