"""Fitting a calibration curve to standards, and the immutable result every view reads.

``fit(concentration, response, model, weighting)`` fits by weighted least squares (QR on a centred,
scaled basis; see :mod:`.least_squares` and :mod:`.models`) and returns a :class:`Calibration` that
answers everything the plot, the tables, the command line and the workbook need.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from functools import cached_property

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, as_finite_vector, frozen
from .acceptance import AcceptanceProfile, AcceptanceVerdict
from .errors import CalibrationInputError, LimitsError
from .fitted_curve import Deferred, FittedCurve
from .influence import Influence, leverage_notes, measure_influence, measure_influence_of_fits
from .inverse import Quantitation, quadratic_roots, quantify, solve_z
from .lack_of_fit import LackOfFit, lack_of_fit_test, lack_of_fit_tests
from .least_squares import LeastSquaresSolution, roundoff_floor, solve_weighted, solve_weighted_stack, without_roundoff
from .levels import Levels, group_levels
from .models import Basis, Model, make_basis
from .regression_test import RegressionTest, regression_test, regression_tests
from .response_factor import response_factor_weighting
from .limits import DetectionLimits, detection_limits
from .weighting import Weighting, WeightModel, make_weights
from .notation import entered, figures


@frozen_value(eq=False)
class Calibration(FittedCurve):
    """A fitted calibration curve that answers questions about unknowns, limits and acceptance.

    Every number is a field of :class:`~curvewright.core.fitted_curve.FittedCurve` (see there for
    the attributes and their units); this class adds the questions as methods.
    """

    def quantify(
        self,
        mean_response: object,
        replicates: object = 1,
        level: float = 0.95,
        interval: str = "band",
        limits: DetectionLimits | None = None,
    ) -> Quantitation:
        """Concentrations of unknowns from their mean responses, with intervals and flags.

        Parameters
        ----------
        mean_response : array-like of shape (k,)
            Mean response of each unknown, in response units.
        replicates : int or array-like of shape (k,)
            Number of replicate responses averaged into each mean (m).
        level : float
            Confidence level of the interval (0.95 = 95 %).
        interval : {"band", "symmetric"}
            ``"band"`` inverts the prediction band for the mean of m new responses (Fieller's
            interval for a straight line); ``"symmetric"`` gives x̂ ± t·s_x̂.
        limits : DetectionLimits, optional
            Limits used for the below-LOD/LOQ flags; default ``self.limits()``.

        See :mod:`.inverse` for the formulas.
        """
        return quantify(self, mean_response, replicates, level, interval, limits)

    def limits(self, method: str = "residual_sd", **options: object) -> DetectionLimits:
        """Detection and quantitation limits; see :func:`curvewright.core.limits.detection_limits`."""
        return detection_limits(self, method, **options)  # type: ignore[arg-type]

    @cached_property
    def flag_limits(self) -> tuple[DetectionLimits | None, str | None]:
        """The default :meth:`limits` that set the below-LOD/LOQ flags of :meth:`quantify`, worked out
        once for this calibration (it never changes): (limits, None), or (None, why they could not be)."""
        try:
            return self.limits(), None
        except LimitsError as exc:
            return None, f"LOD/LOQ flags not set: {exc}"

    def evaluate(self, profile: AcceptanceProfile, excluded: int = 0, unusable: int = 0) -> AcceptanceVerdict:
        """Judge the back-calculated standards against an acceptance ``profile``."""
        return profile.evaluate(self, excluded=excluded, unusable=unusable)


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
    curve_fitter: Callable[..., Calibration] | None = None,
) -> Calibration:
    """Fit a calibration curve to standards (:func:`curvewright.core.fitting.fit`, the public entry,
    passes ``curve_fitter``: the fitter of the curves that are not polynomials, which builds on this
    module and so is never imported by it).

    Parameters
    ----------
    concentration : array-like of shape (n,)
        Nominal concentration of each standard. Replicates are standards of equal nominal
        concentration, or of the same ``level_labels`` entry, or (only when ``level_tolerance`` is
        given) within that relative tolerance of each other (see :mod:`.levels`).
    response : array-like of shape (n,)
        Instrument response of each standard.
    model : {"linear", "quadratic", "proportional", "average-rf", "4pl", "5pl", "power"}
        y = b0 + b1·x; y = b0 + b1·x + b2·x²; y = b1·x through the origin; y = RF·x with RF the
        mean response factor yᵢ/xᵢ of the standards (fitted as the line through the origin weighted
        1/x², which it is; weighting none or 1/x^2 only; see :mod:`.response_factor`); the four- and
        five-parameter logistic curves y = d + (a − d)/(1 + (x/c)^b)[^g]; or the power curve
        y = a·x^b. The last three are fitted by weighted nonlinear least squares and return a
        :class:`~curvewright.core.nonlinear_calibration.NonlinearCalibration` (see there).
    weighting : {"none", "1/x", "1/x^2", "1/y", "1/y^2", "1/s^2", "power", "two-component"}
        Weights are scaled to sum to n, so ``residual_sd`` stays in response units (see
        :mod:`.weighting`). 1/x-type weights refuse concentrations ≤ 0, 1/y-type responses ≤ 0, and
        1/s² from replicates needs 10 at every level unless ``response_sd`` is given. "power" and
        "two-component" fit a variance function to all standards (:mod:`.variance_function`), for
        every model but the average response factor.
    response_sd : array-like of shape (n,), optional
        Known response SDs for 1/s² weighting (refused with any other weighting, which would ignore them).
    level_tolerance : float, optional
        Relative tolerance (0.005 = 0.5 %) within which nominal concentrations count as one level.
    level_labels : sequence of str, optional
        The level label of each standard ("" for none); standards sharing a label form one level.
    levels : Levels, optional
        The grouping of these concentrations from :func:`~curvewright.core.levels.group_levels`,
        for callers that fit the same standards many times (it must belong to ``concentration``).
    anchor_points : sequence of bool, optional
        For the logistic curves: True for each standard that is an anchor point, placed beyond the
        range of quantitation to fix an asymptote. Anchor points are fitted but never judged for
        acceptance, and the calibrated range is that of the other standards.

    Raises
    ------
    CalibrationInputError
        With a message naming the standard and the problem: non-finite values, mismatched lengths,
        fewer levels than parameters, no residual degree of freedom, all concentrations equal.
    """
    model = Model.parse(model)
    weighting = Weighting.parse(weighting)
    x, y = _standard_vectors(concentration, response)
    p = model.n_parameters
    if model is Model.AVERAGE_RF:
        weighting = response_factor_weighting(weighting, x, response_sd)
    levels = _checked_design(x, y, model, level_tolerance, level_labels, levels)
    if not model.is_polynomial:
        if curve_fitter is None:
            raise CalibrationInputError(f"model {model.value}: fitted by curvewright.fit, which also fits the curves "
                                        "that are not polynomials.")
        return curve_fitter(model, weighting, x, y, levels, response_sd, anchor_points)
    if anchor_points is not None and np.any(np.asarray(anchor_points, dtype=bool)):
        raise CalibrationInputError(
            f"anchor points: a {model.description} has no asymptotes to anchor; anchor points belong to "
            "the logistic curves (4pl, 5pl)."
        )
    weights = make_weights(weighting, x, y, levels, response_sd, model)
    basis = make_basis(model, x, weights.weights)
    # Values near the ends of double precision overflow here; they are refused by name below.
    with np.errstate(over="ignore", under="ignore", invalid="ignore"):
        solution = solve_weighted(basis.design(x), y, weights.weights)
    core = _polynomial_core(model, weighting, x, y, levels, weights, basis, solution)
    # the influence measures and the lack-of-fit test are worked out when first read (a batch that
    # only quantifies never reads them); the same numbers as made here at once
    return _polynomial_calibration(core, Deferred(lambda: measure_influence(
        solution.weighted_residuals, solution.leverage, p, core.root_wy)))


def fit_weightings(
    concentration: object,
    response: object,
    model: Model | str,
    weightings: Sequence[Weighting | str],
    *,
    response_sd: Sequence[object | None] | None = None,
    level_tolerance: float | None = None,
    levels: Levels | None = None,
    shared_weights: SharedWeights | None = None,
) -> list[Calibration | CalibrationInputError]:
    """:func:`fit` of one polynomial model (line, quadratic, line through the origin) under each of
    ``weightings``, the QR decompositions and the influence measures of all of them taken together.

    ``response_sd`` gives each weighting's ``response_sd`` (None for none). Each entry of the result
    is the calibration :func:`fit` returns for that weighting, or the :class:`CalibrationInputError`
    it raises; every number is the same as from :func:`fit`. ``shared_weights``: kept by a caller
    fitting several models to the same standards (see :func:`shared_weights_for`).
    """
    model = Model.parse(model)
    if not model.is_polynomial or model is Model.AVERAGE_RF:
        raise CalibrationInputError(f"model {model.value}: fitted under several weightings by fit, one at a time.")
    sds = list(response_sd) if response_sd is not None else [None] * len(weightings)
    out: list[Calibration | CalibrationInputError | None] = [None] * len(weightings)
    try:
        x, y, levels = _checked_standards(concentration, response, model, level_tolerance, None, levels)
    except CalibrationInputError as exc:
        return [exc] * len(weightings)
    p = model.n_parameters
    prepared = []
    for i, weighting in enumerate(weightings):
        try:
            w_kind = Weighting.parse(weighting)
            weights = shared_weights_for(shared_weights, w_kind, x, y, levels, sds[i], model)
        except CalibrationInputError as exc:
            out[i] = exc
            continue
        prepared.append((i, w_kind, weights, make_basis(model, x, weights.weights)))
    if prepared:
        designs = np.stack([basis.design(x) for _, _, _, basis in prepared])
        with np.errstate(over="ignore", under="ignore", invalid="ignore"):
            solutions = solve_weighted_stack(designs, y, np.stack([weights.weights for _, _, weights, _ in prepared]))
        cores = []
        for (i, w_kind, weights, basis), solution in zip(prepared, solutions, strict=True):
            if isinstance(solution, CalibrationInputError):
                out[i] = solution
                continue
            try:
                cores.append((i, _polynomial_core(model, w_kind, x, y, levels, weights, basis, solution)))
            except CalibrationInputError as exc:
                out[i] = exc
        if cores:
            influences = measure_influence_of_fits(
                np.stack([core.solution.weighted_residuals for _, core in cores]),
                np.stack([core.solution.leverage for _, core in cores]), p,
                np.stack([core.root_wy for _, core in cores]),
            )
            lacks = lack_of_fit_tests(
                np.stack([core.clean / np.sqrt(core.weights.weights) for _, core in cores]),
                np.stack([core.weights.weights for _, core in cores]), levels, p,
                [core.weights.from_replicates for _, core in cores], np.stack([core.root_wy for _, core in cores]),
            )
            regressions = regression_tests(
                [(core.solution.coefficients, core.z_cov, core.solution.fitted, not np.any(core.clean))
                 for _, core in cores], cores[0][1].basis.powers, y, cores[0][1].df,
            )
            stacked = _stacked_parts([core for _, core in cores])
            for (i, core), influence, lack, regression, parts in zip(cores, influences, lacks, regressions, stacked,
                                                                      strict=True):
                out[i] = _polynomial_calibration(core, influence, lack, regression, parts)
    return [entry for entry in out if entry is not None]


SharedWeights = dict[tuple[Weighting, int | None], tuple[object, "WeightModel | CalibrationInputError"]]
"""Weights already made for a set of standards, by weighting and the identity of the SDs given."""


def shared_weights_for(
    shared: SharedWeights | None, weighting: Weighting, x: FloatArray, y: FloatArray, levels: Levels,
    response_sd: object | None, model: Model, mean_fitter: object | None = None,
) -> WeightModel:
    """:func:`~.weighting.make_weights`, made once per weighting for a caller fitting several models
    to the same standards (a model screen) and kept in ``shared``; the weights that do not depend on
    the model only (a variance function is fitted with the model, so those are always made afresh).
    The weights are read-only, so the calibrations share them; a refusal is raised again as made."""
    if shared is None or weighting.variance_function is not None:
        return make_weights(weighting, x, y, levels, response_sd, model, mean_fitter)  # type: ignore[arg-type]
    key = (weighting, None if response_sd is None else id(response_sd))
    kept = shared.get(key)
    if kept is None:
        try:
            made: WeightModel | CalibrationInputError = make_weights(weighting, x, y, levels, response_sd, model)  # type: ignore[arg-type]
        except CalibrationInputError as exc:
            made = exc
        kept = shared[key] = (response_sd, made)  # the SDs kept with them, so that their identity stays theirs
    if isinstance(kept[1], CalibrationInputError):
        raise kept[1]
    return kept[1]


def _checked_standards(
    concentration: object, response: object, model: Model, level_tolerance: float | None,
    level_labels: Sequence[str] | None, levels: Levels | None,
) -> tuple[FloatArray, FloatArray, Levels]:
    """The standards as read-only arrays with their levels, checked as :func:`fit` checks them for a
    polynomial model (the checks that do not depend on the weighting)."""
    x, y = _standard_vectors(concentration, response)
    return x, y, _checked_design(x, y, model, level_tolerance, level_labels, levels)


def _standard_vectors(concentration: object, response: object) -> tuple[FloatArray, FloatArray]:
    """The standards' concentrations and responses as finite vectors of one length."""
    x = as_finite_vector(concentration, "concentration", CalibrationInputError)
    y = as_finite_vector(response, "response", CalibrationInputError)
    if x.size != y.size:
        raise CalibrationInputError(
            f"standards: {x.size} concentrations but {y.size} responses; each standard needs both."
        )
    return x, y


def _checked_design(
    x: FloatArray, y: FloatArray, model: Model, level_tolerance: float | None,
    level_labels: Sequence[str] | None, levels: Levels | None,
) -> Levels:
    """The standards' levels, once the standards are known to be there and to support the model;
    the vectors are made read-only."""
    if x.size == 0:
        raise CalibrationInputError("standards: none given; a calibration needs standards.")
    distinct = None
    if levels is None or levels.index.size != x.size:
        levels = group_levels(x, level_tolerance, level_labels)
        if not level_tolerance and level_labels is None:
            distinct = levels.n_levels  # each distinct concentration is a level
    _check_design(x, model, model.n_parameters, distinct)
    x.setflags(write=False)
    y.setflags(write=False)
    return levels


def _check_design(x: FloatArray, model: Model, p: int, distinct: int | None = None) -> None:
    # Whether the curve can be fixed depends on the distinct concentrations, never on how they are
    # grouped into levels: 1e6 + 0…10 are eleven concentrations even if a tolerance makes one level.
    # ``distinct``: their number, when the caller has it.
    if distinct is None:
        distinct = int(np.unique(x).size)
    if distinct == 1:
        raise CalibrationInputError(
            f"concentration: all {x.size} standards are at {entered(x[0])}; a curve needs "
            "standards at different concentrations."
        )
    if distinct < p:
        raise CalibrationInputError(
            f"standards: {distinct} concentration levels cannot fix the {p} parameters of the "
            f"{model.description}; add levels or choose a simpler model."
        )
    if x.size <= p:
        raise CalibrationInputError(
            f"standards: {x.size} standards leave no degree of freedom to estimate the scatter of "
            f"the {model.description} ({p} parameters); at least {p + 1} are needed."
        )


@frozen_value(eq=False)
class _PolynomialCore:
    """What a polynomial fit has worked out before its influence measures (see :func:`fit`)."""

    model: Model
    weighting: Weighting
    x: FloatArray
    y: FloatArray
    levels: Levels
    weights: WeightModel
    basis: Basis
    solution: LeastSquaresSolution
    root_wy: FloatArray
    roundoff: float
    """Weighted residuals at or below this are round-off (see :func:`.least_squares.without_roundoff`)."""
    clean: FloatArray
    df: int
    residual_sd: float
    z_cov: FloatArray
    coefficients: FloatArray
    covariance: FloatArray


def _polynomial_core(
    model: Model, weighting: Weighting, x: FloatArray, y: FloatArray, levels: Levels, weights: WeightModel,
    basis: Basis, solution: LeastSquaresSolution,
) -> _PolynomialCore:
    """The coefficients and their covariance in powers of x, refused by name when they leave double precision."""
    p = model.n_parameters
    with np.errstate(over="ignore", under="ignore", invalid="ignore"):
        # unit weights: √1·y is y itself, copied (the general path's product makes a new array)
        root_wy = y.copy() if weighting is Weighting.NONE else np.sqrt(weights.weights) * y
        roundoff = roundoff_floor(root_wy)
        clean = without_roundoff(solution.weighted_residuals, root_wy, roundoff)  # exact standards: zeros
        df = x.size - p
        residual_sd = float(np.sqrt((clean @ clean) / df))
        z_cov = residual_sd**2 * solution.unscaled_covariance
        transform = basis.power_transform()
        coefficients = transform @ solution.coefficients
        covariance = transform @ z_cov @ transform.T
    _refuse_unrepresentable(model, x, y, basis, coefficients, covariance, residual_sd)
    return _PolynomialCore(model, weighting, x, y, levels, weights, basis, solution, root_wy, roundoff, clean, df,
                           residual_sd, z_cov, coefficients, covariance)


def _stacked_parts(cores: list[_PolynomialCore]) -> list[tuple[float, FloatArray, FloatArray]]:
    """For fits of one model to the same standards (:func:`fit_weightings`): each fit's total sum of
    squares about its weighted mean response and its back-calculated concentrations with their
    relative errors, worked out over the (k, n) stack. Every operation is the one
    :func:`_polynomial_calibration` makes for a fit alone, element by element or row by row (a
    reduction along a row of a stack adds in the same order as along the row alone), so the numbers
    are the same to the bit."""
    model, x, y = cores[0].model, cores[0].x, cores[0].y
    w = np.stack([core.weights.weights for core in cores])
    mean_w = np.add.reduce(w * y, axis=1) / np.add.reduce(w, axis=1)
    sst = np.add.reduce(w * (y - mean_w[:, None]) ** 2, axis=1)
    a = np.stack([core.solution.coefficients for core in cores])
    geometry = [_quadratic_geometry(model, core.solution.coefficients, core.basis, x) for core in cores]
    z_back = np.empty((len(cores), y.size))
    # the rows the stack works as the quadratic's root or the line's quotient; the others (no
    # curvature at all, a flat line) each as a fit alone does
    if model is Model.QUADRATIC:
        usual = a[:, 2] != 0.0
    else:
        usual = a[:, -1] != 0.0
    rows = np.flatnonzero(usual)
    if rows.size:
        z_back[rows] = _stacked_roots(model, a[rows], np.array([geometry[i][0] for i in rows]), y)
    low, high = float(x.min()), float(x.max())
    for i in np.flatnonzero(~usual):
        basis = cores[i].basis
        z_range = (float(basis.z(low)), float(basis.z(high)))
        z_back[i] = solve_z(model, cores[i].solution.coefficients, geometry[i][0], z_range, y)[0]
    centre = np.array([core.basis.centre for core in cores])[:, None]
    scale = np.array([core.basis.scale for core in cores])[:, None]
    back = centre + scale * z_back
    with np.errstate(invalid="ignore", divide="ignore"):
        relative = np.where(x != 0, 100.0 * (back - x) / x, np.nan)
    return [(float(sst[i]), geometry[i], back[i], relative[i]) for i in range(len(cores))]


def _stacked_roots(model: Model, a: FloatArray, branch: np.ndarray, y: FloatArray) -> FloatArray:
    """:func:`~.inverse.solve_z`'s root for each row of z-coefficients ``a`` (k, p) at responses ``y``,
    element by element the same operations (rows with a non-zero highest coefficient only)."""
    if model.through_origin:
        return y / a[:, :1]
    if model is not Model.QUADRATIC:
        return (y - a[:, :1]) / a[:, 1:2]
    r1, r2, no_solution = quadratic_roots(a[:, :1], a[:, 1:2], a[:, 2:3], y)
    root = np.where(branch[:, None] > 0, np.maximum(r1, r2), np.minimum(r1, r2))
    root[no_solution] = np.nan
    return root


def _polynomial_calibration(
    core: _PolynomialCore, influence: Influence | Deferred, lack: LackOfFit | None = None,
    regression: RegressionTest | None = None, stacked: tuple | None = None,
) -> Calibration:
    """The calibration from a fit's core and its influence measures: R², lack of fit and the
    regression test (unless given, as :func:`fit_weightings` makes them for all weightings at
    once; the lack of fit is then worked out when first read, as the influence measures may be),
    back-calculation and notes. ``stacked``: the total sum of squares, the quadratic's geometry and
    the back-calculation, when :func:`_stacked_parts` has them; without them the back-calculation is
    worked out when first read)."""
    model, weighting, x, y, levels = core.model, core.weighting, core.x, core.y, core.levels
    weights, basis, solution = core.weights, core.basis, core.solution
    root_wy, clean, df, residual_sd = core.root_wy, core.clean, core.df, core.residual_sd
    z_cov, coefficients, covariance = core.z_cov, core.coefficients, core.covariance
    p = model.n_parameters
    w = weights.weights
    if stacked is None:
        # R² is worked out when first read (quantifying unknowns never reads it): the same numbers
        r_squared, adjusted_r_squared = _deferred_r_squared(weighting, w, y, clean, df, core.roundoff)
    else:
        r_squared, adjusted_r_squared = _r_squared(stacked[0], clean, df, core.roundoff)
    if stacked is None:
        # the calibrated range in z: Python floats, the same operations as Basis.z
        centre, scale = basis.centre, basis.scale
        z_range = ((float(np.minimum.reduce(x)) - centre) / scale, (float(np.maximum.reduce(x)) - centre) / scale)
        branch, vertex_z, notes = _quadratic_geometry(model, solution.coefficients, basis, x, z_range)
    else:
        branch, vertex_z, notes = stacked[1]
    if lack is None:
        lack = Deferred(lambda: lack_of_fit_test(clean / np.sqrt(w), w, levels, p,
                                                 weights_from_replicates=weights.from_replicates, weighted_response=root_wy))
    if regression is None:
        regression = regression_test(
            solution.coefficients, z_cov, basis.powers, solution.fitted, y, not np.any(clean), df
        )
    if not regression.significant:
        notes = (regression.words,) + notes
    if weights.variance_fit is not None:
        notes = notes + (f"weights from a variance function: {weights.variance_fit.function.words}",)
    # the notes the influence measures give, from the leverages alone
    notes = notes + (leverage_notes(solution.leverage) if type(influence) is Deferred else influence.notes)
    if stacked is None:
        # read back when first asked for (the acceptance, the tables; a batch that only quantifies
        # never asks): the same numbers as worked out here at once
        back, relative = _deferred_back_calculation(model, solution.coefficients, branch, z_range, basis, x, y)
    else:
        back, relative = frozen(stacked[2]), frozen(stacked[3])

    return Calibration._assembled(dict(  # type: ignore[return-value]
        model=model,
        weighting=weighting,
        concentration=x,
        response=y,
        levels=levels,
        weight_model=weights,
        basis=basis,
        z_coefficients=frozen(solution.coefficients),
        z_covariance=frozen(z_cov),
        coefficients=frozen(coefficients),
        covariance=frozen(covariance),
        standard_errors=frozen(np.sqrt(np.maximum(covariance.diagonal(), 0.0))),
        residual_sd=residual_sd,
        df_residual=df,
        _r_squared=r_squared,
        _adjusted_r_squared=adjusted_r_squared,
        fitted=frozen(solution.fitted),
        residuals=frozen(y - solution.fitted),
        _influence=influence,
        _lack_of_fit=lack,
        regression=regression,
        _back_calculated=back,
        _relative_error=relative,
        quadratic_branch=branch,
        vertex_z=vertex_z,
        notes=notes,
    ))


def _total_sum_of_squares(weighting: Weighting, w: FloatArray, y: FloatArray) -> float:
    """SST = Σwᵢ(yᵢ − ȳ_w)² about the weighted mean response ȳ_w = Σwᵢyᵢ/Σwᵢ."""
    if weighting is Weighting.NONE:
        # unit weights: w·y is y and Σw is n exactly, so the same sums without the products by one
        mean_w = float(np.add.reduce(y) / np.float64(y.size))
        return float(np.add.reduce((y - mean_w) ** 2))
    mean_w = float(np.add.reduce(w * y) / np.add.reduce(w))
    return float(np.add.reduce(w * (y - mean_w) ** 2))


def _r_squared(sst: float, clean: FloatArray, df: int, roundoff: float) -> tuple[float, float]:
    """R² = 1 − SSE/SST and the adjusted R² = 1 − (1 − R²)·(n − 1)/(n − p), with SSE from the weighted
    residuals ``clean`` (round-off set to zero) and ``df`` = n − p; R² is 0 when SST is round-off
    (the responses do not vary: nothing to explain)."""
    n = clean.size
    adjust = (n - 1) / df
    if sst <= n * roundoff**2:
        r_squared = 0.0
    else:
        r_squared = 1.0 - float(clean @ clean) / sst
    return float(r_squared), float(1.0 - (1.0 - r_squared) * adjust)


def _deferred_r_squared(
    weighting: Weighting, w: FloatArray, y: FloatArray, clean: FloatArray, df: int, roundoff: float
) -> tuple[Deferred, Deferred]:
    """:func:`_r_squared` of the fit's :func:`_total_sum_of_squares`, as two diagnostics worked out
    together the first time either is read."""
    made: list[float] = []

    def both() -> list[float]:
        if not made:
            made.extend(_r_squared(_total_sum_of_squares(weighting, w, y), clean, df, roundoff))
        return made

    return Deferred(lambda: both()[0]), Deferred(lambda: both()[1])


def _deferred_back_calculation(
    model: Model, z_coefficients: FloatArray, branch: int, z_range: tuple[float, float], basis: Basis,
    x: FloatArray, y: FloatArray,
) -> tuple[Deferred, Deferred]:
    """The standards read back through the curve and their relative errors (see
    :class:`~.fitted_curve.FittedCurve`), as two diagnostics worked out together the first time
    either is read: x̂ = c + s·ẑ with ẑ the root of f(z) = y on the calibrated ``branch``
    (:func:`~.inverse.solve_z`), and 100·(x̂ − x)/x where x ≠ 0 (NaN at a zero concentration)."""
    made: list[FloatArray] = []

    def both() -> list[FloatArray]:
        if not made:
            z_back, _, _ = solve_z(model, z_coefficients, branch, z_range, y)
            back = basis.centre + basis.scale * z_back
            with np.errstate(invalid="ignore", divide="ignore"):
                relative = np.where(x != 0, 100.0 * (back - x) / x, np.nan)
            made.extend((frozen(back), frozen(relative)))
        return made

    return Deferred(lambda: both()[0]), Deferred(lambda: both()[1])


def _refuse_unrepresentable(
    model: Model, x: FloatArray, y: FloatArray, basis: Basis, coefficients: FloatArray, covariance: FloatArray,
    residual_sd: float,
) -> None:
    """Refuse a fit whose numbers overflow or underflow double precision, rather than return inf or NaN.

    The coefficient of xᵏ is in units of response/concentrationᵏ and its variance in their square,
    so concentrations near 1e200 (a quadratic) or responses near 1e300 leave the representable range
    even though each value typed is a valid number.
    """
    problem = None
    # at most a dozen numbers: checked as Python floats, the same tests without numpy's call overhead
    if not math.isfinite(residual_sd):
        problem = "the residual variance overflows"
    elif not (all(map(math.isfinite, coefficients.tolist())) and all(map(math.isfinite, covariance.ravel().tolist()))):
        problem = "a coefficient or its variance overflows"
    else:
        scale = float(basis.scale)
        try:  # xᵏ's unit 1/scaleᵏ: a Python float raises on overflow and gives 0.0 on underflow
            representable = all(math.isfinite(unit) and unit > 0 for unit in (scale ** -k for k in basis.powers))
        except (OverflowError, ZeroDivisionError):
            representable = False
        free = covariance.diagonal().tolist()[1 - int(model.has_intercept):]
        if not representable:
            problem = f"x^{max(basis.powers)} leaves the range of representable numbers"
        elif residual_sd > 0 and any(v <= 0 for v in free):
            problem = "a coefficient's variance underflows to zero"
    if problem is not None:
        raise CalibrationInputError(
            f"concentration and response: a {model.description} over concentrations up to "
            f"{entered(float(np.max(np.abs(x))))} and responses up to {entered(float(np.max(np.abs(y))))} cannot be "
            f"computed in double precision ({problem}); express them in units that bring the values "
            "nearer to 1 (a larger or smaller unit)."
        )


def _quadratic_geometry(
    model: Model, z_coefficients: FloatArray, basis: Basis, x: FloatArray, z_range: tuple[float, float] | None = None,
) -> tuple[int, float | None, tuple[str, ...]]:
    """Which side of its vertex a quadratic is calibrated on, and where the vertex is (in z);
    ``z_range``: the lowest and highest standard in z, when the caller has them."""
    if model is not Model.QUADRATIC:
        return 0, None, ()
    _, a1, a2 = z_coefficients
    if a2 == 0.0:
        return (1 if a1 >= 0 else -1), None, ()
    vertex = -a1 / (2.0 * a2)
    z_low, z_high = basis.z(np.array([x.min(), x.max()])) if z_range is None else z_range
    if vertex <= z_low:
        return 1, float(vertex), ()
    if vertex >= z_high:
        return -1, float(vertex), ()
    branch = 1 if (z_high - vertex) >= (vertex - z_low) else -1
    at = basis.centre + basis.scale * vertex
    return branch, float(vertex), (
        f"the quadratic turns over at concentration {figures(at, 6)}, inside the calibrated range: "
        "responses near the top of the curve may be reached twice",
    )
