"""Weights for weighted least squares, and the variance they imply for a new response.

A weighting says how the variance of a response changes across the range:
var(yᵢ) = σ²/wᵢ. Curvewright offers

* ``none``   wᵢ = 1                     (ordinary least squares)
* ``1/x``    wᵢ ∝ 1/xᵢ      ``1/x^2``  wᵢ ∝ 1/xᵢ²   (x = nominal concentration)
* ``1/y``    wᵢ ∝ 1/yᵢ      ``1/y^2``  wᵢ ∝ 1/yᵢ²   (y = measured response)
* ``1/s^2``  wᵢ ∝ 1/sᵢ²  with sᵢ the standard deviations the caller gives (known, for instance from
  a validation study), or the replicate standard deviation of the response at the level of standard
  i. Taken from the replicates, the weights are as noisy as the few replicates behind each: in
  simulation (tests/core/test_estimated_weights.py) a 95 % interval covered the truth about 86 % of
  the time with duplicates, 91 % with 5 replicates and 93.5 % with 10. So 1/s² from replicates
  needs at least 10 at every level; with fewer, choose a variance function.
* ``power``, ``two-component``  wᵢ ∝ 1/g(μ̂ᵢ)², a variance function of the fitted mean response
  estimated from all standards pooled (σ ∝ μ^θ, or σ² = a² + b²μ²; see :mod:`.variance_function`).

The weights are scaled so that Σwᵢ = n (Miller & Miller, *Statistics and Chemometrics for
Analytical Chemistry*, ch. 5). With that scaling σ, the residual SD, stays in response units: it is
the SD of a response whose weight is the average weight.

For a new response (an unknown) the same rule gives its weight, on the same scale: 1/x-type
weights use the estimated concentration, 1/y-type the measured mean response, 1/s² the SD
interpolated linearly in concentration between levels (held flat beyond the end levels), and the
variance functions the curve's response at the concentration. Below the lowest standard the
weighting is not extrapolated toward zero variance: the weight of the lowest standard is used (for
the variance functions, the smallest fitted response of the standards), so an interval there is
never narrower than at the bottom of the curve.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, as_finite_vector, frozen
from .errors import WeightingError
from .levels import Levels
from .models import Model
from .weighting_kinds import Weighting
from .notation import entered

if TYPE_CHECKING:  # loaded where a variance function is estimated (make_weights), not on every run
    from .variance_function import MeanFitter, VarianceFunctionFit

MIN_REPLICATES_FOR_S2 = 10
"""Replicates per level below which 1/s² weights from the replicates are refused: their intervals
covered under 93 % at a nominal 95 % in simulation (tests/core/test_estimated_weights.py)."""


@frozen_value(eq=False)
class WeightModel:
    """The weighting of a fitted calibration, able to weigh new responses on the same scale.

    ``weights`` are the standards' weights (Σw = n). They are computed as k·(r/v)^q, with v the
    concentration, response or SD the weighting uses, q its power (1 or 2), r the smallest such
    value among the standards (so that r/v ≤ 1 never overflows, however small or large the units)
    and k = ``normaliser`` the factor that makes them sum to n.
    """

    weighting: Weighting
    weights: FloatArray
    normaliser: float
    lowest_concentration: float
    lowest_response: float
    level_concentration: FloatArray
    level_sd: FloatArray
    reference: float = 1.0
    power: int = 0
    variance_fit: VarianceFunctionFit | None = None
    from_replicates: bool = False
    """1/s² with the SDs taken from the standards' own replicates."""

    @property
    def estimated(self) -> bool:
        """The weights' shape was estimated from these standards (a variance function, or 1/s² from replicates)."""
        return self.variance_fit is not None or self.from_replicates

    def weight_at(self, concentration: FloatArray, response: FloatArray) -> FloatArray:
        """Weight of one new response at ``concentration`` with measured ``response``.

        Both arrays broadcast together; the result has their broadcast shape.
        """
        x = np.asarray(concentration, dtype=np.float64)
        y = np.asarray(response, dtype=np.float64)
        shape = np.broadcast_shapes(x.shape, y.shape)
        k, r, q = self.normaliser, self.reference, self.power
        match self.weighting:
            case Weighting.NONE:
                return np.ones(shape)
            case Weighting.INVERSE_X | Weighting.INVERSE_X2:
                weight = k * _power(r / np.maximum(x, self.lowest_concentration), q)
                # already of the broadcast shape where the response has no more dimensions (quantify's case)
                return weight if weight.shape == shape else np.broadcast_to(weight, shape)
            case Weighting.INVERSE_Y | Weighting.INVERSE_Y2:
                return np.broadcast_to(k * _power(r / np.maximum(y, self.lowest_response), q), shape)
            case Weighting.INVERSE_S2:
                sd = np.interp(x, self.level_concentration, self.level_sd)
                return np.broadcast_to(k * _power(r / sd, 2), shape)
            case Weighting.POWER | Weighting.TWO_COMPONENT:
                fit = self.variance_fit
                assert fit is not None
                x_low = np.maximum(x, self.lowest_concentration)
                return np.broadcast_to(k / fit.function.relative_variance(fit.mean_at(x_low), r), shape)
        raise AssertionError(self.weighting)  # pragma: no cover - every member is matched


_TINY = float(np.finfo(float).tiny)
"""The smallest normal double: weights below it cannot be represented to full precision."""


def _power(ratio: FloatArray, q: int) -> FloatArray:
    """ratio^q for q = 1 or 2 by plain multiplication, exact to the same bits for every array length."""
    return ratio if q == 1 else ratio * ratio


def make_weights(
    weighting: Weighting,
    concentration: FloatArray,
    response: FloatArray,
    levels: Levels,
    response_sd: FloatArray | None = None,
    model: Model = Model.LINEAR,
    mean_fitter: MeanFitter | None = None,
) -> WeightModel:
    """Compute the standards' weights for ``weighting``, refusing data it cannot apply to.

    ``response_sd`` (one SD per standard) is checked whatever the weighting, and refused unless the
    weighting is 1/s², which is the only one that uses it: SDs given and silently ignored would
    leave the analyst believing they had been used. ``model`` is the calibration function, which
    the variance-function weightings fit along the way (by weighted linear least squares, or by
    ``mean_fitter`` when given: the nonlinear fit of a curve that is not a polynomial).
    """
    n = concentration.size
    level_sd = np.full(levels.n_levels, np.nan)
    given_sd = None if response_sd is None else _checked_sd(response_sd, n)
    if given_sd is not None and weighting is not Weighting.INVERSE_S2:
        raise WeightingError(
            f"response SD: given, but weighting {weighting.value} does not use it; choose weighting "
            "1/s^2 to weight by these SDs, or leave them out."
        )
    if weighting in (Weighting.INVERSE_X, Weighting.INVERSE_X2) and np.minimum.reduce(concentration) <= 0:
        bad = np.flatnonzero(concentration <= 0)
        if bad.size:
            i = int(bad[0])
            raise WeightingError(
                f"weighting {weighting.value}: standard {i + 1} has concentration "
                f"{entered(concentration[i])}; 1/x-type weights need every concentration above zero "
                "(leave blanks out of the fit or choose another weighting)."
            )
    if weighting in (Weighting.INVERSE_Y, Weighting.INVERSE_Y2) and np.minimum.reduce(response) <= 0:
        bad = np.flatnonzero(response <= 0)
        if bad.size:
            i = int(bad[0])
            raise WeightingError(
                f"weighting {weighting.value}: standard {i + 1} has response {entered(response[i])}; "
                "1/y-type weights need every response above zero."
            )
    if weighting is Weighting.NONE:
        # unit weights: the general path's numbers worked out (every raw weight 1, their least 1, their
        # sum n exactly, so the normaliser n/n = 1 and the weights 1 × 1)
        return WeightModel(
            weighting=weighting,
            weights=frozen(np.ones(n)),
            normaliser=1.0,
            lowest_concentration=float(concentration[int(concentration.argmin())]),
            lowest_response=float(np.minimum.reduce(response)),
            level_concentration=frozen(levels.concentration.copy()),
            level_sd=frozen(level_sd),
            reference=1.0,
            power=0,
            variance_fit=None,
            from_replicates=False,
        )
    variance_fit = None
    match weighting:
        case Weighting.NONE:
            values, power = np.ones(n), 0
        case Weighting.INVERSE_X:
            values, power = concentration, 1
        case Weighting.INVERSE_X2:
            values, power = concentration, 2
        case Weighting.INVERSE_Y:
            values, power = response, 1
        case Weighting.INVERSE_Y2:
            values, power = response, 2
        case Weighting.INVERSE_S2:
            values, level_sd = _standard_deviations(concentration, response, levels, given_sd)
            power = 2
        case Weighting.POWER | Weighting.TWO_COMPONENT:
            from .variance_function import estimate_variance_function
            variance_fit = estimate_variance_function(weighting.variance_function, model, concentration, response,  # type: ignore[arg-type]
                                                      mean_fitter)
            values, power = variance_fit.fitted_mean, 0
    if variance_fit is not None:
        reference = variance_fit.floor
        raw = 1.0 / variance_fit.function.relative_variance(variance_fit.fitted_mean, reference)
    else:
        reference = float(np.minimum.reduce(values))
        with np.errstate(under="ignore"):
            raw = np.ones(n) if power == 0 else _power(reference / values, power)
    if np.minimum.reduce(raw) < _TINY:
        i = int(np.argmin(raw))
        raise WeightingError(
            f"weighting {weighting.value}: the values it weighs by run from {entered(reference)} to "
            f"{entered(values[i])} (standard {i + 1}), too many orders of magnitude apart for the weights to be "
            "represented as numbers; check the units of the standards."
        )
    normaliser = n / float(np.add.reduce(raw))
    lowest = int(concentration.argmin())
    return WeightModel(
        weighting=weighting,
        weights=frozen(raw * normaliser),
        normaliser=normaliser,
        lowest_concentration=float(concentration[lowest]),
        lowest_response=float(np.minimum.reduce(response)),
        level_concentration=frozen(levels.concentration.copy()),
        level_sd=frozen(level_sd),
        reference=reference,
        power=power,
        variance_fit=variance_fit,
        from_replicates=weighting is Weighting.INVERSE_S2 and given_sd is None,
    )


def _checked_sd(response_sd: object, n: int) -> FloatArray:
    """The response SDs the caller gives: one finite value above zero per standard."""
    sd = as_finite_vector(response_sd, "response SD", WeightingError)
    if sd.size != n:
        raise WeightingError(
            f"response SD: {sd.size} values given for {n} standards; give one standard deviation per standard."
        )
    bad = np.flatnonzero(sd <= 0)
    if bad.size:
        i = int(bad[0])
        raise WeightingError(
            f"response SD: standard {i + 1} has SD {entered(sd[i])}; a standard deviation must be above zero."
        )
    return sd


def _standard_deviations(
    concentration: FloatArray,
    response: FloatArray,
    levels: Levels,
    response_sd: FloatArray | None,
) -> tuple[FloatArray, FloatArray]:
    """SD of each standard's response for 1/s² weighting, and the SD of each level."""
    if response_sd is not None:
        return response_sd, levels.level_means(response_sd)
    few = np.flatnonzero(levels.count < MIN_REPLICATES_FOR_S2)
    if few.size:
        j = int(few[0])
        raise WeightingError(
            f"weighting 1/s^2: the level at concentration {entered(levels.concentration[j])} has "
            f"{int(levels.count[j])} replicate(s); weights from fewer than {MIN_REPLICATES_FOR_S2} "
            "replicates at every level are too imprecise for honest intervals (in simulation a 95 % "
            "interval covered the truth about 86 % of the time with duplicates). Give known response "
            "SDs, or choose 'power' or 'two-component', which fit one variance function to all levels."
        )
    level_sd = levels.level_sd(response)
    zero = np.flatnonzero(level_sd <= 0)
    if zero.size:
        j = int(zero[0])
        raise WeightingError(
            f"weighting 1/s^2: the replicates at concentration {entered(levels.concentration[j])} are all "
            "identical, so their SD is zero and cannot give a weight."
        )
    return level_sd[levels.index], level_sd
