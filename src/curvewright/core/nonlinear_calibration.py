"""Calibrations on curves that are not polynomials (4PL, 5PL, power), fitted by nonlinear least squares.

:func:`fit_nonlinear_curve` is what :func:`curvewright.core.fitting.fit` passes to :func:`.calibration.fit` for these models.
It returns a :class:`NonlinearCalibration`, a :class:`~curvewright.core.calibration.Calibration`
that answers the same questions; only the formulas differ.

Fit
    Weighted nonlinear least squares (:mod:`.nonlinear`) from start values derived from the
    standards (:mod:`.curve_families`); every start is tried and the converged, plausible fit with the
    smallest weighted sum of squares is kept. A fit that converges from no start raises
    :class:`~curvewright.core.errors.ConvergenceError` with the reason; a converged fit says how it
    stopped in ``convergence`` and in its notes. The weightings are those of the polynomials (see
    :mod:`.weighting`); a variance function ("power", "two-component") is estimated from all standards
    as for them (:mod:`.variance_function`), each cycle's curve fitted by weighted nonlinear least
    squares, and the notes say so.

Standard errors and bands
    cov(β̂) = s²·(JᵀWJ)⁻¹ (linearised); the variance of the fitted curve at x is
    ∇ᵦf(x)ᵀ·cov(β̂)·∇ᵦf(x) (delta method; Bates & Watts, *Nonlinear Regression Analysis and Its
    Applications*, Wiley 1988, §2.3). Leverages are those of the tangent plane, J(JᵀWJ)⁻¹JᵀW.

Regression test
    Whether the response changes with concentration: the extra-sum-of-squares F-test of the fitted
    curve against a constant, F = ((SST − SSE)/(p − 1))/(SSE/(n − p)) on (p − 1, n − p) degrees of
    freedom (approximate for a nonlinear curve; Bates & Watts 1988, §3.2.2, from memory).

Inverse prediction
    x̂ solves f(x̂) = ȳ₀ in closed form (see :mod:`.curve_families`). A response at or beyond an
    asymptote of the curve has no solution and is flagged (``NO_SOLUTION`` and ``BEYOND_ASYMPTOTE``).
    Standard error by the delta method, s_x̂ = √(σ²/(m·w₀) + var f̂(x̂))/|f'(x̂)|. The interval
    inverts the prediction band for the mean of m new responses: the concentrations x ≥ 0 with
    (ȳ₀ − f̂(x))² ≤ t²·(σ²/(m·w(x)) + var f̂(x)), searched outward from x̂ in ln x and refined by
    bisection to full precision, each unknown on its own. Where the band still holds ȳ₀ as x → 0 the
    lower end is 0; where it never closes upward the upper end is +inf (flagged unbounded).

Anchor points
    Standards marked as anchor points (ligand-binding assays place them beyond the range of
    quantitation to fix the asymptotes) take part in the fit but not in acceptance, and the
    calibrated range (LLOQ to ULOQ) is that of the other standards.

Limits
    The ICH Q2 LOD/LOQ (3.3σ/S, 10σ/S) need the slope of a straight line at zero; these curves have
    none that means the same thing, so :meth:`NonlinearCalibration.limits` refuses with the reason:
    the range of quantitation is set by the lowest and highest standards that meet acceptance.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._arrays import FloatArray, frozen
from .calibration import Calibration, SharedWeights, shared_weights_for
from .curve_families import FAMILIES, CurveFamily
from .distributions import f_upper_tail, t_quantile
from .errors import CalibrationInputError, ConvergenceError, LimitsError
from .influence import Influence, measure_influence, measure_influence_of_fits
from .limits import BLANK_METHODS
from .inverse import RANGE_SLACK, QuantFlag, Quantitation, _refuse_unrepresentable, checked_request
from .lack_of_fit import LackOfFit, lack_of_fit_test, lack_of_fit_tests
from .least_squares import ROUNDOFF, without_roundoff
from .levels import Levels
from .limits import DetectionLimits
from .models import Basis, Model
from .nonlinear import FitOutcome, NonlinearFit, fit_nonlinear, fit_outcome
from .regression_test import RegressionTest
from .variance_function import CYCLES, MeanFit
from .weighting import Weighting, WeightModel
from .notation import entered, figures

LOGISTIC_MODELS = (Model.FOUR_PL, Model.FIVE_PL)
SEARCH_DECADES = 20.0
"""How far beyond the standards the band inversion looks for an interval's ends, in spans of ln x
(at least one natural-log unit)."""
_EXPANSIONS = 80
_BISECTIONS = 200


@dataclass(frozen=True, eq=False)
class NonlinearCalibration(Calibration):
    """A calibration on a 4PL, 5PL or power curve. Immutable; see :mod:`.nonlinear_calibration`.

    ``coefficients`` are the named parameters in the order of ``parameter_names`` (a, b, c, d[, g] for
    the logistic curves, a, b for the power curve), with ``covariance`` and ``standard_errors``.
    """

    family: CurveFamily | None = None
    convergence: str = ""
    evaluations: int = 0
    anchor_points: np.ndarray | None = None
    """One flag per standard: True for an anchor point (fitted, never judged, outside the range)."""

    @property
    def parameter_names(self) -> tuple[str, ...]:
        assert self.family is not None
        return self.family.parameter_names

    @property
    def coefficient_names(self) -> tuple[str, ...]:
        return self.parameter_names

    @property
    def coefficient_descriptions(self) -> tuple[str, ...]:
        assert self.family is not None
        return self.family.parameter_words

    @property
    def parameters(self) -> dict[str, float]:
        """The fitted parameters by name."""
        return dict(zip(self.parameter_names, (float(v) for v in self.coefficients), strict=True))

    @property
    def anchors(self) -> np.ndarray:
        """Boolean mask of the anchor points (all False when none were marked)."""
        if self.anchor_points is None:
            return np.zeros(self.concentration.size, dtype=bool)
        return self.anchor_points

    @property
    def calibrated_range(self) -> tuple[float, float]:
        """Lowest and highest standard concentration, anchor points left out (LLOQ to ULOQ)."""
        x = self.concentration[~self.anchors]
        return float(x.min()), float(x.max())

    def equation(self, digits: int = 10) -> str:
        """The formula and its fitted parameters to ``digits`` significant figures."""
        assert self.family is not None
        values = ", ".join(f"{name} = {figures(value, digits)}" for name, value in self.parameters.items())
        return f"{self.family.formula} with {values}"

    def predict(self, concentration: object) -> FloatArray:
        assert self.family is not None
        return self.family.function(np.asarray(concentration, dtype=np.float64), self.coefficients)

    def curve_sd(self, concentration: object) -> FloatArray:
        """Standard error of the fitted curve at ``concentration`` (delta method)."""
        assert self.family is not None
        g = self.family.jacobian(np.asarray(concentration, dtype=np.float64), self.coefficients)
        # term by term in a fixed order, so that each concentration's value has the same bits whatever
        # else is computed alongside it
        variance = np.zeros(g.shape[:-1])
        p = g.shape[-1]
        for i in range(p):
            for j in range(p):
                variance = variance + g[..., i] * self.covariance[i, j] * g[..., j]
        return np.sqrt(np.maximum(variance, 0.0))

    def limits(self, method: str = "residual_sd", **options: object) -> DetectionLimits:
        """Refused: see the module docstring (the range of quantitation comes from acceptance)."""
        if method in BLANK_METHODS:
            raise LimitsError(
                f"LOD and LOQ from blanks are computed here for straight lines and quadratics; for a "
                f"{self.model.description} the range of quantitation runs from the lowest to the highest "
                "standard that meets acceptance (LLOQ to ULOQ).")
        raise LimitsError(
            f"LOD and LOQ from the residual SD and the slope (ICH Q2) are defined for straight lines and "
            f"quadratics; for a {self.model.description} the range of quantitation runs from the lowest "
            "to the highest standard that meets acceptance (LLOQ to ULOQ)."
        )

    def quantify(
        self,
        mean_response: object,
        replicates: object = 1,
        level: float = 0.95,
        interval: str = "band",
        limits: DetectionLimits | None = None,
    ) -> Quantitation:
        """Concentrations of unknowns from their mean responses; see the module docstring."""
        return _quantify(self, mean_response, replicates, level, interval, limits)


def fit_nonlinear_curve(
    model: Model,
    weighting: Weighting,
    x: FloatArray,
    y: FloatArray,
    levels: Levels,
    response_sd: FloatArray | None,
    anchor_points: object | None,
    shared: dict[str, list[FloatArray]] | None = None,
) -> NonlinearCalibration:
    """Fit a 4PL, 5PL or power curve to checked standards (passed by :func:`~.fitting.fit` to :func:`~.calibration.fit`).

    ``shared``: a dictionary kept by a caller fitting the same standards under several weightings, in
    which the start values (they depend on the standards alone) are kept after the first fit."""
    core = _curve_core(model, weighting, x, y, levels, response_sd, anchor_points, shared)
    influence = measure_influence(core.fit.weighted_residuals, core.fit.leverage, model.n_parameters, core.root_wy)
    lack = lack_of_fit_test(core.clean / core.root_w, core.weights.weights, levels, model.n_parameters,
                            weights_from_replicates=core.weights.from_replicates, weighted_response=core.root_wy)
    return _curve_calibration(core, influence, lack)


@dataclass(frozen=True, eq=False)
class _CurveCore:
    """What a fit of a curve family has worked out before its influence measures and lack of fit."""

    model: Model
    weighting: Weighting
    family: CurveFamily
    x: FloatArray
    y: FloatArray
    levels: Levels
    anchors: np.ndarray
    weights: WeightModel
    fit: NonlinearFit
    root_w: FloatArray
    root_wy: FloatArray
    clean: FloatArray


def _curve_core(
    model: Model, weighting: Weighting, x: FloatArray, y: FloatArray, levels: Levels,
    response_sd: FloatArray | None, anchor_points: object | None, shared: dict[str, list[FloatArray]] | None,
    shared_weights: SharedWeights | None = None,
) -> _CurveCore:
    """The checks, the weights and the best fit of :func:`fit_nonlinear_curve`."""
    family = FAMILIES[model]
    anchors = _anchor_mask(model, x, anchor_points)
    if model is Model.POWER:
        bad = np.flatnonzero(x <= 0)
        if bad.size:
            i = int(bad[0])
            raise CalibrationInputError(
                f"concentration: standard {i + 1} is at {entered(x[i])}; a power curve y = a·x^b is fitted to "
                "concentrations above zero (leave blanks out of this fit)."
            )
    else:
        bad = np.flatnonzero(x < 0)
        if bad.size:
            i = int(bad[0])
            raise CalibrationInputError(
                f"concentration: standard {i + 1} is at {entered(x[i])}; a logistic curve needs concentrations of zero or more."
            )
    fitter = _MeanFitter(family) if weighting.variance_function is not None else None
    weights = shared_weights_for(shared_weights, weighting, x, y, levels, response_sd, model, fitter)
    w = weights.weights
    if shared is None:
        starts = None
    else:
        if "starts" not in shared:
            shared["starts"] = family.starts(x, y)
        starts = shared["starts"]
    fit = _best_fit(family, x, y, w, starts)
    if fitter is not None:
        fitter.start = fit.parameters.copy()
    root_w = np.sqrt(w)
    root_wy = root_w * y
    clean = without_roundoff(fit.weighted_residuals, root_wy)
    return _CurveCore(model, weighting, family, x, y, levels, anchors, weights, fit, root_w, root_wy, clean)


def _curve_calibration(core: _CurveCore, influence: Influence, lack: LackOfFit) -> NonlinearCalibration:
    """The calibration from a curve fit's core, its influence measures and lack of fit: R², the
    regression test, back-calculation and notes."""
    model, weighting, family, x, y, levels = core.model, core.weighting, core.family, core.x, core.y, core.levels
    anchors, weights, fit, root_wy, clean = core.anchors, core.weights, core.fit, core.root_wy, core.clean
    w = weights.weights
    p = model.n_parameters
    df = x.size - p
    residual_sd = float(np.sqrt((clean @ clean) / df))
    covariance = residual_sd**2 * fit.unscaled_covariance
    coefficients = fit.parameters.copy()
    mean_w = float(np.add.reduce(w * y) / np.add.reduce(w))
    sst = float(np.add.reduce(w * (y - mean_w) ** 2))
    sse = float(clean @ clean)
    if sst <= x.size * (ROUNDOFF * float(np.maximum.reduce(np.abs(root_wy)))) ** 2:
        r_squared = 0.0
    else:
        r_squared = 1.0 - sse / sst
    regression = _regression_test(fit.fitted, y, sst, sse, p, df)
    back, _ = family.inverse(y, coefficients)
    with np.errstate(invalid="ignore", divide="ignore"):
        relative = np.where(x != 0, 100.0 * (back - x) / x, np.nan)
    notes: tuple[str, ...] = (f"fitted by nonlinear least squares: converged ({fit.reason}) after {fit.evaluations} evaluations",)
    if not regression.significant:
        notes = (regression.words,) + notes
    beyond = int(np.count_nonzero(np.isnan(back)))
    if beyond:
        notes = notes + (f"{beyond} standard(s) lie beyond an asymptote of the fitted curve and cannot be read back",)
    if anchors.any():
        notes = notes + (
            f"{int(anchors.sum())} anchor point(s) fitted but left out of acceptance and of the calibrated range",
        )
    if weights.variance_fit is not None:
        notes = notes + (
            f"weights from a variance function: {weights.variance_fit.function.words}; the curve fitted by "
            f"weighted nonlinear least squares with weights 1/g(μ̂)² from the fitted responses μ̂ "
            f"({CYCLES} cycles of fit and estimate, then the final fit)",
        )
    notes = notes + influence.notes
    adjust = (x.size - 1) / df
    return NonlinearCalibration(
        model=model,
        weighting=weighting,
        concentration=x,
        response=y,
        levels=levels,
        weight_model=weights,
        basis=Basis(centre=0.0, scale=1.0, powers=()),
        z_coefficients=frozen(coefficients.copy()),
        z_covariance=frozen(covariance.copy()),
        coefficients=frozen(coefficients),
        covariance=frozen(covariance),
        standard_errors=frozen(np.sqrt(np.maximum(covariance.diagonal(), 0.0))),
        residual_sd=residual_sd,
        df_residual=df,
        r_squared=float(r_squared),
        adjusted_r_squared=float(1.0 - (1.0 - r_squared) * adjust),
        fitted=frozen(fit.fitted.copy()),
        residuals=frozen(y - fit.fitted),
        influence=influence,
        lack_of_fit=lack,
        regression=regression,
        back_calculated=frozen(back),
        relative_error=frozen(relative),
        notes=notes,
        family=family,
        convergence=fit.reason,
        evaluations=fit.evaluations,
        anchor_points=frozen(anchors) if anchors.any() else None,
    )


def fit_curve_weightings(
    concentration: object,
    response: object,
    model: Model,
    weightings: list[Weighting],
    *,
    response_sd: list[object | None],
    level_tolerance: float | None = None,
    levels: Levels | None = None,
    shared_weights: SharedWeights | None = None,
) -> list[Calibration | CalibrationInputError]:
    """:func:`~.fitting.fit` of the power curve under each of ``weightings`` (``response_sd``: each
    one's, None for none): the standards checked once and the start values worked out once. Each
    entry is the calibration fit() returns for that weighting or the error it raises, the same numbers.
    ``shared_weights``: as :func:`~.calibration.fit_weightings` takes it."""
    from .calibration import _checked_standards

    try:
        x, y, levels = _checked_standards(concentration, response, model, level_tolerance, None, levels)
    except CalibrationInputError as exc:
        return [exc] * len(weightings)
    shared: dict[str, list[FloatArray]] = {}
    out: list[Calibration | CalibrationInputError | None] = []
    cores: list[tuple[int, _CurveCore]] = []
    for weighting, sd in zip(weightings, response_sd, strict=True):
        try:
            cores.append((len(out), _curve_core(model, weighting, x, y, levels, sd, None, shared, shared_weights)))
            out.append(None)
        except CalibrationInputError as exc:
            out.append(exc)
    if cores:
        # the influence measures and lack of fit of all weightings at once, the same numbers as fit by fit
        p = model.n_parameters
        influences = measure_influence_of_fits(
            np.stack([core.fit.weighted_residuals for _, core in cores]),
            np.stack([core.fit.leverage for _, core in cores]), p, np.stack([core.root_wy for _, core in cores]),
        )
        lacks = lack_of_fit_tests(
            np.stack([core.clean / core.root_w for _, core in cores]),
            np.stack([core.weights.weights for _, core in cores]), levels, p,
            [core.weights.from_replicates for _, core in cores], np.stack([core.root_wy for _, core in cores]),
        )
        for (i, core), influence, lack in zip(cores, influences, lacks, strict=True):
            out[i] = _curve_calibration(core, influence, lack)
    return [entry for entry in out if entry is not None]


class _MeanFitter:
    """The weighted nonlinear fit of ``family`` as the variance-function cycles call it (a
    :data:`~.variance_function.MeanFitter`).

    The cycles fit from every start derived from the standards, as the calibration does. Once the
    calibration is fitted, ``start`` holds its parameters, and the jackknife's fits with one standard
    left out (:meth:`~.variance_function.VarianceFunctionFit.shape_variance`) start from them, falling
    back on every start only when that fit fails: the same minimum, found in a few evaluations.
    """

    def __init__(self, family: CurveFamily) -> None:
        self.family = family
        self.start: FloatArray | None = None

    def __call__(self, x: FloatArray, y: FloatArray, w: FloatArray) -> MeanFit:
        family = self.family
        fit = None
        if self.start is not None:
            fit = fit_nonlinear(family.function, family.jacobian, x, y, self.start, w, problem=family.weighted_problem)
            if not fit.converged or _implausible(family, fit):
                fit = None
        if fit is None:
            fit = _best_fit(family, x, y, w)
        return MeanFit(fit.fitted, fit.leverage, fit.weighted_residuals, _FittedFamily(family, fit.parameters))


@dataclass(frozen=True, eq=False)
class _FittedFamily:
    """μ̂(x) = f(x; β̂) of one fit of a curve family."""

    family: CurveFamily
    parameters: FloatArray

    def __call__(self, concentration: FloatArray) -> FloatArray:
        return self.family.function(np.asarray(concentration, dtype=np.float64), self.parameters)


def _anchor_mask(model: Model, x: FloatArray, anchor_points: object | None) -> np.ndarray:
    """The anchor points as a boolean mask, checked: logistic curves only, outside the other standards' range."""
    if anchor_points is None:
        return np.zeros(x.size, dtype=bool)
    mask = np.asarray(anchor_points)
    if mask.shape != x.shape or mask.dtype != bool:
        raise CalibrationInputError(
            f"anchor points: give one True/False per standard ({x.size} standards); found {mask.shape[0] if mask.ndim else 1} value(s)."
        )
    if not mask.any():
        return mask.copy()
    if model not in LOGISTIC_MODELS:
        raise CalibrationInputError(
            f"anchor points: a {model.description} has no asymptotes to anchor; anchor points belong to "
            "the logistic curves (4pl, 5pl)."
        )
    rest = x[~mask]
    if rest.size == 0:
        raise CalibrationInputError("anchor points: every standard is marked as one; the calibration standards are needed too.")
    low, high = rest.min(), rest.max()
    inside = np.flatnonzero(mask & (x >= low) & (x <= high))
    if inside.size:
        i = int(inside[0])
        raise CalibrationInputError(
            f"anchor points: the standard at concentration {entered(x[i])} is marked as an anchor point but lies "
            f"within the range of the calibration standards ({entered(low)} to {entered(high)}); anchor points lie outside it."
        )
    return mask.copy()


def _best_fit(
    family: CurveFamily, x: FloatArray, y: FloatArray, w: FloatArray, starts: list[FloatArray] | None = None
) -> NonlinearFit:
    """Fit from every start; keep the converged, plausible fit with the smallest weighted sum of squares.

    A start that does not converge stops after a bounded number of evaluations (:mod:`.nonlinear`), and
    the reasons of every failure are reported if no start succeeds. ``starts``: the family's start
    values from these standards when the caller has them already.
    """
    starts = family.starts(x, y) if starts is None else list(starts)
    if family.model is Model.FIVE_PL:
        four = FAMILIES[Model.FOUR_PL]
        try:
            start = _best_fit(four, x, y, w).parameters
            starts = [np.append(start, 1.0)] + starts
        except ConvergenceError:
            pass
    best: FitOutcome | None = None
    failures: list[str] = []
    for start in starts:
        # each start's outcome; the record is made of the one kept only
        result = fit_outcome(family.function, family.jacobian, x, y, start, w, problem=family.weighted_problem)
        problem = _implausible(family, result) if result.converged else result.reason
        if problem:
            failures.append(problem)
            continue
        if best is None or result.sse < best.sse:
            best = result
    if best is None:
        reasons = "; ".join(dict.fromkeys(failures))
        raise ConvergenceError(
            f"standards: the {family.model.description} could not be fitted to these standards from any of "
            f"{len(starts)} start values derived from them ({reasons}); check the standards, or choose another model."
        )
    return best.record()


def _implausible(family: CurveFamily, result: NonlinearFit | FitOutcome) -> str | None:
    """Why a converged logistic fit is not a calibration curve (None when it is)."""
    if family.model not in LOGISTIC_MODELS:
        return None
    b, c = result.parameters[1], result.parameters[2]
    if not c > 0:
        return f"the fit converged to an inflection point of {figures(c, 4)}, not a concentration above zero"
    if not b > 0:
        return "the fit converged to a slope factor b ≤ 0"
    if family.model is Model.FIVE_PL and not result.parameters[4] > 0:
        return "the fit converged to an asymmetry g ≤ 0"
    return None


def _regression_test(fitted: FloatArray, y: FloatArray, sst: float, sse: float, p: int, df: int) -> RegressionTest:
    dfs = (p - 1, df)
    # the spread of the fitted values, max − min (numpy.ptp's reductions, without its wrapper)
    if float(np.maximum.reduce(fitted) - np.minimum.reduce(fitted)) <= ROUNDOFF * float(np.maximum.reduce(np.abs(y))):
        return RegressionTest(0.0, dfs, 1.0)
    if sse == 0.0:
        return RegressionTest(float("inf"), dfs, 0.0)
    f = ((sst - sse) / (p - 1)) / (sse / df)
    if not f > 0:
        return RegressionTest(0.0, dfs, 1.0)
    return RegressionTest(float(f), dfs, f_upper_tail(float(f), p - 1, df))


# --- inverse prediction ------------------------------------------------------------------------------
def _quantify(
    cal: NonlinearCalibration,
    mean_response: object,
    replicates: object,
    level: float,
    interval: str,
    limits: DetectionLimits | None,
) -> Quantitation:
    assert cal.family is not None
    y0, m, level = checked_request(cal, mean_response, replicates, level, interval)
    probability = 0.5 + level / 2.0
    params = cal.coefficients
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        x_hat, beyond = cal.family.inverse(y0, params)
        solved = ~beyond
        at = np.where(solved, x_hat, cal.calibrated_range[0])
        new_var = cal.residual_sd**2 / (m * cal.weight_model.weight_at(at, y0))
        curve_var = cal.curve_sd(at) ** 2
        slope = cal.family.slope(at, params)
        se = np.sqrt(new_var + curve_var) / np.abs(slope)
        if interval == "symmetric":
            t_hat = cal.band_t(probability, at, new_var, curve_var)
            lower, upper = x_hat - t_hat * se, x_hat + t_hat * se
        else:
            lower, upper = _band_ends(cal, y0, m, probability, at, se, solved)
    _refuse_unrepresentable(y0, solved & ~(np.isfinite(x_hat) & np.isfinite(se) & ~np.isnan(lower) & ~np.isnan(upper)))
    unbounded = solved & (np.isinf(lower) | np.isinf(upper))

    limits_note = None
    if limits is None:
        limits, limits_note = cal.flag_limits
    low, high = cal.calibrated_range
    slack = RANGE_SLACK * (high - low)
    low, high = low - slack, high + slack
    bits = np.zeros(y0.size, dtype=np.int64)
    bits |= np.where(solved & (x_hat < low), int(QuantFlag.BELOW_RANGE), 0)
    bits |= np.where(solved & (x_hat > high), int(QuantFlag.ABOVE_RANGE), 0)
    bits |= np.where(solved & (x_hat >= low) & (x_hat <= high), int(QuantFlag.IN_RANGE), 0)
    if limits is not None:
        if limits.loq is not None:
            bits |= np.where(solved & (x_hat < limits.loq), int(QuantFlag.BELOW_LOQ), 0)
        bits |= np.where(solved & (x_hat < limits.lod), int(QuantFlag.BELOW_LOD), 0)
    bits |= np.where(beyond, int(QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_ASYMPTOTE), 0)
    bits |= np.where(unbounded, int(QuantFlag.UNBOUNDED_INTERVAL), 0)
    nan = np.where(beyond, np.nan, 0.0)
    return Quantitation(
        mean_response=frozen(y0),
        replicates=frozen(m),
        level=float(level),
        interval=interval,
        df=cal.df_residual,
        estimate=frozen(np.where(beyond, np.nan, x_hat)),
        standard_error=frozen(se + nan),
        lower=frozen(np.where(beyond, np.nan, lower)),
        upper=frozen(np.where(beyond, np.nan, upper)),
        flag_bits=frozen(bits),
        limits=limits,
        limits_note=limits_note,
    )


def _band_excess(
    cal: NonlinearCalibration, y0: FloatArray, m: np.ndarray, probability: float, u: FloatArray
) -> FloatArray:
    """(ȳ₀ − f̂(x))² − t²·(σ²/(m·w(x)) + var f̂(x)) at x = eᵘ; ≤ 0 inside the calibration interval."""
    x = np.exp(u)
    fitted = cal.predict(x)
    curve_var = cal.curve_sd(x) ** 2
    new_var = cal.residual_sd**2 / (m * cal.weight_model.weight_at(x, y0))
    t = cal.band_t(probability, x, new_var, curve_var)
    return (y0 - fitted) ** 2 - t * t * (new_var + curve_var)


def _band_ends(
    cal: NonlinearCalibration, y0: FloatArray, m: np.ndarray, probability: float, x_hat: FloatArray,
    se: FloatArray, solved: np.ndarray,
) -> tuple[FloatArray, FloatArray]:
    """Both ends of the calibration interval, in x (vectorised; each unknown on its own).

    Works in u = ln x: from û = ln x̂ each side steps outward, doubling from the symmetric half-width
    t·s_x̂/x̂, until it leaves the band or reaches ``SEARCH_DECADES`` spans beyond the standards, then
    bisects the bracket to full precision. A lower side that never leaves the band ends at x = 0;
    an upper side that never leaves it is unbounded (+inf).
    """
    positive = cal.concentration[cal.concentration > 0]
    ln_low, ln_high = float(np.log(positive.min())), float(np.log(positive.max()))
    reach = SEARCH_DECADES * max(1.0, ln_high - ln_low)
    k = y0.size
    u0 = np.tile(np.log(np.where(solved, x_hat, np.exp(ln_low))), 2)
    direction = np.repeat([-1.0, 1.0], k)
    limit = np.where(direction < 0, ln_low - reach, ln_high + reach)
    limit = np.maximum(np.abs(limit - u0), 1e-3)  # distance available on each side
    yy, mm = np.tile(y0, 2), np.tile(m, 2)
    t = t_quantile(probability, cal.df_residual)
    first = np.tile(t * se / np.where(solved, x_hat, 1.0), 2)
    first = np.where(np.isfinite(first) & (first > 0), np.minimum(first, limit), 1e-3)
    inner = np.zeros(2 * k)
    outer = first.copy()
    closed = _band_excess(cal, yy, mm, probability, u0 + direction * outer) > 0
    for _ in range(_EXPANSIONS):
        open_ = ~closed & (outer < limit)
        if not open_.any():
            break
        inner = np.where(open_, outer, inner)
        outer = np.where(open_, np.minimum(2.0 * outer, limit), outer)
        closed = closed | (open_ & (_band_excess(cal, yy, mm, probability, u0 + direction * outer) > 0))
    for _ in range(_BISECTIONS):
        mid = 0.5 * (inner + outer)
        moving = closed & (mid > inner) & (mid < outer)
        if not moving.any():
            break
        out = _band_excess(cal, yy, mm, probability, u0 + direction * mid) > 0
        outer = np.where(moving & out, mid, outer)
        inner = np.where(moving & ~out, mid, inner)
    edge = np.exp(u0 + direction * outer)
    edge = np.where(closed, edge, np.where(direction < 0, 0.0, np.inf))
    lower, upper = edge[:k], edge[k:]
    return np.where(solved, lower, np.nan), np.where(solved, upper, np.nan)


