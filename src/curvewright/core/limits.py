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
``"blank_sd"`` — ICH Q2(R1) §6.3.2 / §7.3.2 "based on the standard deviation of the blank":
    LOD = 3.3·σ_b/S, LOQ = 10·σ_b/S, with σ_b the SD (n − 1 in the denominator) of the responses of
    the blank samples measured in the run and S the slope of the calibration at zero concentration
    (b1; for the quadratic too, whose slope at zero is b1). Needs at least two numeric blank readings
    whose SD is above zero.
``"blank_mean"`` — common practice (not an ICH formula): the responses ȳ_b + 3·σ_b and ȳ_b + 10·σ_b,
    ȳ_b the mean of the blank readings, read through the fitted curve as concentrations (the LOD and
    the LOQ). Needs the same readings as ``"blank_sd"``; a response that reads below zero
    concentration (blanks below the curve's intercept) gives no limit.

Blank readings are every numeric response (each replicate; a response ratio where the analyte uses
an internal standard) of the run's samples of type blank, in response units; censored or unreadable
readings cannot enter an SD and are counted apart (:class:`BlankReadings`).
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

LIMIT_METHODS = ("residual_sd", "intercept_sd", "iso11843", "blank_sd", "blank_mean")

LIMIT_METHOD_NAMES = {
    "residual_sd": "ICH Q2: 3.3σ/slope and 10σ/slope, σ the residual SD",
    "intercept_sd": "ICH Q2: 3.3σ/slope and 10σ/slope, σ the SD of the intercept",
    "iso11843": "ISO 11843-2: critical value and minimum detectable value",
    "blank_sd": "ICH Q2: 3.3σ/slope and 10σ/slope, σ the SD of the blanks",
    "blank_mean": "mean blank + 3 SD and + 10 SD read through the curve (common practice)",
}
"""Each limits method in the words every list of them uses (the settings dialog, the record's
formulas, the error a wrong method name gets)."""

BLANK_METHODS = ("blank_sd", "blank_mean")
"""The methods computed from the run's blank samples."""


def limit_methods_words() -> str:
    """The methods' names as a file writes them, for a message: "'residual_sd', …, or 'blank_mean'"."""
    quoted = [repr(m) for m in LIMIT_METHODS]
    return f"{', '.join(quoted[:-1])} or {quoted[-1]}"


@frozen_value
class BlankReadings:
    """The blank readings of one analyte in a run: ``values`` the numeric responses (response units;
    every replicate of every blank sample), ``samples`` the number of blank samples, ``not_numeric``
    the readings that cannot enter an SD, each as "sample id: why" (censored, not a number)."""

    values: tuple[float, ...]
    samples: int
    not_numeric: tuple[str, ...] = ()

    def words(self) -> str:
        """How many readings there are, in words: "4 numeric readings from 2 blank samples (1 not numeric: B-2: response is censored (ND))"."""
        n = len(self.values)
        said = f"{n} numeric reading{'s' if n != 1 else ''} from {self.samples} blank sample{'s' if self.samples != 1 else ''}"
        if self.not_numeric:
            shown = "; ".join(self.not_numeric[:3]) + (f"; and {len(self.not_numeric) - 3} more" if len(self.not_numeric) > 3 else "")
            said += f" ({len(self.not_numeric)} not numeric: {shown})"
        return said


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
    blank_readings: int = 0
    """Blank methods: the number of blank readings σ (``sigma``, their SD) comes from; 0 for the others."""
    blank_mean: float | None = None
    """Blank methods: the mean ȳ_b of the blank readings (response units)."""

    def blank_words(self, response_unit: str = "") -> str:
        """The blank readings the limits come from, to show beside them: "from 6 blank readings: mean
        ȳ_b 2.31 counts, SD σ_b 0.412 counts" (4 significant figures); "" for the other methods."""
        if not self.blank_readings:
            return ""
        u = f" {response_unit}" if response_unit else ""
        return (f"from {self.blank_readings} blank readings: mean ȳ_b {figures(self.blank_mean, 4)}{u}, "
                f"SD σ_b {figures(self.sigma, 4)}{u}")

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

    @property
    def name(self) -> str:
        """The method in the words every list of methods uses (:data:`LIMIT_METHOD_NAMES`)."""
        return LIMIT_METHOD_NAMES[self.method]


def detection_limits(
    cal: "FittedCurve",
    method: str = "residual_sd",
    *,
    alpha: float = 0.05,
    beta: float = 0.05,
    replicates: int = 1,
    blanks: BlankReadings | None = None,
) -> DetectionLimits:
    """Compute LOD and LOQ of ``cal`` by ``method`` (one of :data:`LIMIT_METHODS`); the blank methods
    take the run's ``blanks``."""
    if method not in LIMIT_METHODS:
        raise LimitsError(f"limits method: {method!r} is not one of {', '.join(map(repr, LIMIT_METHODS))}.")
    if method in BLANK_METHODS:
        # the blanks are judged first: without two distinct readings no calibration can help
        mean_b, sd_b, n_b = _blank_statistics(blanks)
    if not cal.regression.significant:
        raise LimitsError(f"no limit can be computed: {cal.regression.words}.")
    slope = float(cal.coefficients[1])
    if slope == 0.0:
        raise LimitsError("the calibration has zero slope at zero concentration, so no limit can be computed.")
    slope_words = "slope at zero concentration b1" if cal.model is Model.QUADRATIC else "slope b1"
    if method in BLANK_METHODS:
        return _from_blanks(cal, method, slope, slope_words, mean_b, sd_b, n_b)
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


def _blank_statistics(blanks: BlankReadings | None) -> tuple[float, float, int]:
    """Mean, SD (n − 1 in the denominator) and number of the numeric blank readings, or the reason
    there are too few to give an SD above zero."""
    if blanks is None or not blanks.samples:
        raise LimitsError("the limits from blanks need the responses of blank samples (samples of type blank); "
                          "this run has no blank sample for this analyte.")
    values = np.asarray(blanks.values, dtype=float)
    if values.size < 2:
        raise LimitsError(f"the limits from blanks need at least 2 numeric blank readings for an SD; this run has "
                          f"{blanks.words()}.")
    sd = float(np.std(values, ddof=1))
    if sd == 0.0:
        raise LimitsError(f"the {values.size} numeric blank readings are all {entered(float(values[0]))}, so their "
                          "SD is 0 and gives no limit; this run has " + blanks.words() + ".")
    return float(np.mean(values)), sd, int(values.size)


def _from_blanks(cal: "FittedCurve", method: str, slope: float, slope_words: str, mean_b: float, sd_b: float,
                 n_b: int) -> DetectionLimits:
    """The limits from the blank readings' mean and SD (see the module docstring)."""
    if method == "blank_sd":
        return DetectionLimits(
            method=method,
            description=(f"ICH Q2 (based on the SD of the blank): LOD = 3.3·σ_b/S, LOQ = 10·σ_b/S; σ_b = SD of "
                         f"{n_b} blank readings, S = {slope_words}"),
            lod=float(3.3 * sd_b / abs(slope)), loq=float(10.0 * sd_b / abs(slope)), sigma=sd_b, slope=slope,
            blank_readings=n_b, blank_mean=mean_b,
        )
    responses = np.array([mean_b + 3.0 * sd_b, mean_b + 10.0 * sd_b])
    at_zero = float(np.asarray(cal.predict(np.array([0.0])))[0])
    # read back through the curve by the calibration's own inverse (the inverse module imports this one)
    estimate = np.asarray(cal.quantify(responses).estimate, dtype=float)  # type: ignore[attr-defined]
    for name, y, x in (("LOD", responses[0], estimate[0]), ("LOQ", responses[1], estimate[1])):
        if not np.isfinite(x):
            raise LimitsError(f"the {name} response ȳ_b + {3 if name == 'LOD' else 10}·σ_b = {figures(y, 4)} is "
                              f"not reached by the {cal.model.description}, so it gives no {name}.")
        if x <= 0.0:
            raise LimitsError(f"the {name} response ȳ_b + {3 if name == 'LOD' else 10}·σ_b = {figures(y, 4)} lies at "
                              f"or below the curve's response at zero concentration ({figures(at_zero, 4)}): the "
                              f"blanks read below the calibration's intercept, so it gives no {name} (check the "
                              "blanks, or use the SD of the blanks with the slope).")
    return DetectionLimits(
        method=method,
        description=(f"common practice: LOD and LOQ = the responses ȳ_b + 3·σ_b and ȳ_b + 10·σ_b read through "
                     f"the fitted curve; ȳ_b, σ_b = mean and SD of {n_b} blank readings"),
        lod=float(estimate[0]), loq=float(estimate[1]), sigma=sd_b, slope=slope,
        blank_readings=n_b, blank_mean=mean_b,
    )
