"""The average response factor: the calibration of methods judged by the spread of their response factors.

Response factor of standard i
    RFᵢ = yᵢ/xᵢ (response per unit concentration); every concentration must be above zero.

Calibration
    RF̄ = (1/n)·ΣRFᵢ, with s_RF = √(Σ(RFᵢ − RF̄)²/(n − 1)) and %RSD = 100·s_RF/RF̄; the curve is
    y = RF̄·x. The mean of the ratios is the least-squares line through the origin weighted 1/x²:
    Σ(yᵢ − b·xᵢ)²/xᵢ² = Σ(RFᵢ − b)² is smallest at b = RF̄ (elementary least squares). Curvewright
    therefore fits the average RF as that weighted line, so it keeps the whole contract of the other
    models (back-calculation, influence, lack of fit, acceptance, limits). Under weights scaled to sum
    to n (:mod:`.weighting`) the reported residual SD is √c·s_RF with c = n/Σ(1/xᵢ²); the standard
    error of RF̄ is s_RF/√n, and each standard back-calculates to yᵢ/RF̄, a relative error of
    100·(RFᵢ/RF̄ − 1) %.

Inverse prediction
    x̂₀ = ȳ₀/RF̄ for the mean ȳ₀ of m responses of an unknown. Under the model's assumption (a
    constant relative SD, so that ȳ₀/x₀ is the mean of m new response factors), the 95 % interval is
    the set of x₀ whose ratio ȳ₀/x₀ lies in the prediction interval for the mean of m future
    observations of the standards' RFs, RF̄ ± h with h = t(1 − α/2; n − 1)·s_RF·√(1/m + 1/n) (the
    normal prediction interval; Hahn & Meeker, *Statistical Intervals*, Wiley 1991, ch. 4 — chapter
    from memory):  ȳ₀/(RF̄ + h) ≤ x₀ ≤ ȳ₀/(RF̄ − h), unbounded above when h ≥ RF̄. It is exactly what
    inverting the prediction band of the 1/x²-weighted line gives inside the calibrated range (the
    general band inversion of :mod:`.inverse`, which below the lowest standard holds the variance of
    the lowest standard rather than let it shrink toward zero).

    A mean response at or below zero lies below the lowest standard x_low, where that rule holds:
    the band is (ȳ₀ − RF̄·x)² ≤ t²·(s_RF²·x_low²/m + s_RF²·x²/n). At ȳ₀ = 0 the estimate is 0 and the
    interval ±t·s_RF·x_low/√(m·(RF̄² − t²·s_RF²/n)), what the scatter of a response at the lowest
    standard allows (the formula above would give [0, 0], a certainty no measurement has); a
    negative ȳ₀ gives a negative estimate and interval. As for every calibration the ends are not cut
    at zero, and such a result is flagged below the range and below the LOD.

Relative response factor
    With an internal standard the response is the ratio A/A_IS of the analyte's response to the
    internal standard's, and RF becomes the relative response factor per unit concentration of
    internal standard: RRF = (A·C_IS)/(A_IS·C) (the usual definition in environmental methods,
    e.g. US EPA SW-846 Method 8000; from memory). The same amount of internal standard goes into
    every standard and sample, so C_IS cancels in the result.
"""

from __future__ import annotations


import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, as_finite_vector, frozen
from .errors import CalibrationInputError, WeightingError
from .weighting import Weighting
from .notation import entered


@frozen_value(eq=False)
class ResponseFactors:
    """The standards' response factors and their spread (arrays of shape (n,), read-only).

    ``factors`` in response units per concentration unit; ``rsd_percent`` = 100·sd/mean.
    """

    factors: FloatArray
    mean: float
    sd: float
    rsd_percent: float

    @property
    def n(self) -> int:
        return int(self.factors.size)

    @property
    def standard_error(self) -> float:
        """Standard error of the mean response factor, s_RF/√n."""
        return self.sd / float(np.sqrt(self.n))


def response_factors(concentration: object, response: object) -> ResponseFactors:
    """Response factors yᵢ/xᵢ of standards, their mean, SD (n − 1) and %RSD.

    Raises
    ------
    CalibrationInputError
        A standard at zero or negative concentration (naming it, 1-based), fewer than two standards,
        or a mean response factor of zero.
    """
    x = as_finite_vector(concentration, "concentration", CalibrationInputError)
    y = as_finite_vector(response, "response", CalibrationInputError)
    if x.size != y.size:
        raise CalibrationInputError(
            f"standards: {x.size} concentrations but {y.size} responses; each standard needs both."
        )
    refuse_non_positive(x)
    if x.size < 2:
        raise CalibrationInputError(
            f"standards: {x.size} standard gives no spread of response factors; at least 2 are needed."
        )
    rf = y / x
    mean = float(np.mean(rf))
    if mean == 0.0:
        raise CalibrationInputError("response: the mean response factor is zero, so the responses do not depend on concentration.")
    sd = float(np.std(rf, ddof=1))
    return ResponseFactors(factors=frozen(rf), mean=mean, sd=sd, rsd_percent=100.0 * sd / abs(mean))


def refuse_non_positive(concentration: FloatArray) -> None:
    """Refuse standards whose response factor is undefined (concentration ≤ 0), naming the first."""
    bad = np.flatnonzero(concentration <= 0)
    if bad.size:
        i = int(bad[0])
        raise CalibrationInputError(
            f"concentration: standard {i + 1} is at {entered(concentration[i])}; a response factor y/x needs a "
            "concentration above zero (leave blanks out of an average response factor calibration)."
        )


def response_factor_weighting(weighting: Weighting, concentration: FloatArray, response_sd: object | None) -> Weighting:
    """The weighting the average RF is fitted with (1/x²), refusing any other the caller asked for.

    ``none`` (the default of :func:`~curvewright.core.calibration.fit`) and ``1/x^2`` both mean the
    mean of the response factors; any other weighting would fit a different line and is refused.
    """
    if weighting not in (Weighting.NONE, Weighting.INVERSE_X2):
        raise WeightingError(
            f"weighting {weighting.value}: the average response factor is the mean of yᵢ/xᵢ, which is the "
            "line through the origin weighted 1/x²; choose weighting none or 1/x^2 for it, or the "
            "proportional model to weight the line through the origin otherwise."
        )
    if response_sd is not None:
        raise WeightingError(
            "response SD: given, but the average response factor does not use it (it weights 1/x²)."
        )
    refuse_non_positive(concentration)
    return Weighting.INVERSE_X2


__all__ = ["ResponseFactors", "refuse_non_positive", "response_factor_weighting", "response_factors"]
