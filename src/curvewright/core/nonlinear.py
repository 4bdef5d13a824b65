"""Weighted nonlinear least squares: the fitter behind the curves that are not polynomials.

Problem
    Minimise S(β) = Σ wᵢ (yᵢ − f(xᵢ; β))² over the parameters β, with known weights wᵢ (scaled to
    sum to n by the caller, so that the residual SD stays in response units).

Method
    Levenberg–Marquardt with a trust region and scaling by the columns of the Jacobian (Moré, "The
    Levenberg–Marquardt algorithm: implementation and theory", Lecture Notes in Mathematics 630,
    1978), as implemented by MINPACK's ``lmder`` (scipy's binding of it, as ``scipy.optimize.leastsq`` calls it).
    The model gives its own analytic Jacobian ∂f/∂β; the fitter never differences numerically.
    Tolerances on the relative change of S, of β and on the gradient are 1e-15, so the fit stops
    only when double precision can improve nothing more.

Standard errors
    At the minimum, with J the Jacobian of the weighted residuals √wᵢ·(f(xᵢ; β) − yᵢ),
    cov(β̂) = s²·(JᵀJ)⁻¹ and s² = S(β̂)/(n − p) (the linearised covariance; Bates & Watts,
    *Nonlinear Regression Analysis and Its Applications*, Wiley 1988, §2.3). (JᵀJ)⁻¹ comes from the
    singular value decomposition of J with its columns scaled to unit length, never from forming
    JᵀJ: its condition number enters once, not squared.

Convergence
    Every fit says whether it converged and why it stopped, in words (:attr:`NonlinearFit.reason`).
    A fit that ran out of evaluations, met a non-finite value or whose parameters the data cannot
    separate (a Jacobian of deficient rank) is not converged, and says which.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from scipy import optimize

from ._arrays import FloatArray, frozen

try:
    from numpy.linalg import _umath_linalg as _numpy_routines  # type: ignore[attr-defined]
except ImportError:  # a numpy that keeps its compiled routines elsewhere: numpy.linalg.svd is used
    _numpy_routines = None
try:
    from scipy.optimize import _minpack as _scipy_minpack  # type: ignore[attr-defined]
except ImportError:  # a scipy that keeps its binding elsewhere: scipy.optimize.leastsq is used
    _scipy_minpack = None
_SVD: Callable[..., tuple[FloatArray, FloatArray, FloatArray]] | None = getattr(_numpy_routines, "svd_s", None)
"""numpy's compiled thin SVD (what numpy.linalg.svd calls), or None where this numpy has it not."""
_LMDER: Callable[..., tuple[FloatArray, dict, int]] | None = getattr(_scipy_minpack, "_lmder", None)  # type: ignore[type-arg]
"""scipy's compiled MINPACK lmder (what scipy.optimize.leastsq calls), or None where this scipy has it not."""

TOLERANCE = 1e-15
"""Relative tolerance on the sum of squares, the parameters and the gradient (MINPACK ftol, xtol, gtol)."""
RANK_TOLERANCE = 1e-10
"""Smallest ratio of singular values of the column-scaled Jacobian accepted as full rank."""
MAX_EVALUATIONS_PER_PARAMETER = 200
_REFINE_STEPS = 3
_NEGLIGIBLE_STEP = 1e-14
"""A Gauss–Newton step of the polish that changes no parameter by more than this (relative) is the
last: the next could only move them by round-off (a few parts in 10¹⁶)."""

ModelFunction = Callable[[FloatArray, FloatArray], FloatArray]
"""f(x, β) → responses of shape (n,)."""
JacobianFunction = Callable[[FloatArray, FloatArray], FloatArray]
"""∂f/∂β at (x, β) → array of shape (n, p)."""

_STATUS = {1: 2, 2: 3, 3: 4, 4: 1, 5: 0}
"""MINPACK's info code → the stop reason of :data:`_STOP_WORDS` (0: out of evaluations; missing: improper input)."""
_STOP_WORDS = {
    1: "the gradient of the sum of squares vanished (to 1e-15 relative)",
    2: "the sum of squares stopped decreasing (relative change below 1e-15)",
    3: "the parameters stopped changing (relative change below 1e-15)",
    4: "the sum of squares and the parameters both stopped changing (relative change below 1e-15)",
}


@dataclass(frozen=True, eq=False)
class NonlinearFit:
    """The outcome of one weighted nonlinear least-squares fit. Arrays are read-only.

    Attributes
    ----------
    parameters : array of shape (p,)
        β̂, or the last point reached when the fit did not converge.
    covariance, standard_errors
        s²·(JᵀJ)⁻¹ and the square roots of its diagonal (NaN when the fit did not converge).
    unscaled_covariance
        (JᵀJ)⁻¹ alone.
    residual_sd : float
        s = √(S/(n − p)), in response units when the weights sum to n.
    df_residual : int
        n − p.
    fitted : array of shape (n,)
        f(xᵢ; β̂).
    weighted_jacobian : array of shape (n, p)
        √wᵢ·∂f/∂β at β̂ (the leverages and the delta method use it).
    converged : bool
        Whether the fit stopped at a minimum that the data determine.
    reason : str
        Why the fit stopped, in words (for a failure, what went wrong).
    evaluations : int
        Number of evaluations of the model.
    """

    parameters: FloatArray
    covariance: FloatArray
    unscaled_covariance: FloatArray
    standard_errors: FloatArray
    residual_sd: float
    df_residual: int
    sse: float
    fitted: FloatArray
    weighted_residuals: FloatArray
    weighted_jacobian: FloatArray
    converged: bool
    reason: str
    evaluations: int
    scaled_u: FloatArray | None = field(default=None, repr=False)
    """U of the SVD of the column-scaled weighted Jacobian at β̂, when the fit computed it."""

    @property
    def leverage(self) -> FloatArray:
        """Diagonal of the tangent-plane hat matrix J(JᵀJ)⁻¹Jᵀ (Bates & Watts 1988, §4.3)."""
        u = self.scaled_u if self.scaled_u is not None else _scaled_svd(self.weighted_jacobian)[0]
        return np.einsum("ij,ij->i", u, u)


def fit_nonlinear(
    function: ModelFunction,
    jacobian: JacobianFunction,
    x: FloatArray,
    y: FloatArray,
    start: FloatArray,
    weights: FloatArray | None = None,
    *,
    max_evaluations: int | None = None,
    problem: Callable[[FloatArray, FloatArray, FloatArray], tuple[Callable[[FloatArray], FloatArray],
                                                                    Callable[[FloatArray], FloatArray]]] | None = None,
) -> NonlinearFit:
    """Fit ``function`` to (x, y) from ``start`` by weighted least squares (see the module docstring).

    ``problem`` (x, y, √w) → (weighted residuals, their Jacobian) as functions of β, when the curve
    gives a cheaper form of √w·(f − y) and √w·∂f/∂β than ``function`` and ``jacobian`` weighted here
    (:attr:`curvewright.core.curve_families.CurveFamily.weighted_problem`); it must give the same numbers.

    Never raises for a fit that fails to converge: the result says so in ``converged`` and ``reason``,
    and the caller decides what to tell the analyst.
    """
    return fit_outcome(function, jacobian, x, y, start, weights, max_evaluations=max_evaluations,
                       problem=problem).record()


def fit_outcome(
    function: ModelFunction,
    jacobian: JacobianFunction,
    x: FloatArray,
    y: FloatArray,
    start: FloatArray,
    weights: FloatArray | None = None,
    *,
    max_evaluations: int | None = None,
    problem: Callable[[FloatArray, FloatArray, FloatArray], tuple[Callable[[FloatArray], FloatArray],
                                                                    Callable[[FloatArray], FloatArray]]] | None = None,
) -> "FitOutcome":
    """:func:`fit_nonlinear` up to its record: the point reached, whether it converged and why, its sum
    of squares, and :meth:`FitOutcome.record` to make the :class:`NonlinearFit` (a caller trying
    several starts makes the record of the one it keeps only; the same numbers)."""
    x = np.asarray(x, dtype=np.float64)
    y = np.asarray(y, dtype=np.float64)
    beta0 = np.asarray(start, dtype=np.float64).copy()
    n, p = y.size, beta0.size
    w = np.ones(n) if weights is None else np.asarray(weights, dtype=np.float64)
    root_w = np.sqrt(w)
    limit = max_evaluations or MAX_EVALUATIONS_PER_PARAMETER * (p + 1)

    residuals, weighted_jacobian = (
        _weighted_problem(function, jacobian, x, y, root_w) if problem is None else _finite(*problem(x, y, root_w))
    )
    if not np.all(np.isfinite(beta0)):
        return _failed(function, jacobian, x, y, beta0, root_w, 0, "the start values are not all finite numbers")
    if n < p:
        return _failed(function, jacobian, x, y, beta0, root_w, 0,
                       f"the fit could not start ({n} standards for {p} parameters)")
    try:
        # MINPACK's lmder itself (mode 1: the scaling follows the Jacobian's column norms, step bound
        # factor 100); the same iterations as least_squares(method="lm", x_scale="jac"), without its
        # per-call set-up, which costs more than the fit on a few dozen standards.
        with np.errstate(all="ignore"):
            beta, info, code = _lmder(residuals, weighted_jacobian, beta0, limit)
    except (ValueError, TypeError, np.linalg.LinAlgError) as exc:  # improper input reported by MINPACK
        return _failed(function, jacobian, x, y, beta0, root_w, 0, f"the fit could not start ({exc})")
    status = _STATUS.get(int(code), -1)
    beta = np.asarray(beta, dtype=np.float64)
    evaluations = int(info["nfev"])
    # MINPACK's fvec: the weighted residuals at the β it returns, as the residuals function gave them
    fvec = info.get("fvec")
    return _finish(function, jacobian, x, y, root_w, residuals, weighted_jacobian, beta, status, code, evaluations,
                   limit, None if fvec is None else np.asarray(fvec, dtype=np.float64))


def _lmder(
    residuals: Callable[[FloatArray], FloatArray], jacobian: Callable[[FloatArray], FloatArray],
    beta0: FloatArray, limit: int,
) -> tuple[FloatArray, dict, int]:  # type: ignore[type-arg]
    """MINPACK's lmder from ``beta0``: the parameters reached, the information record (``nfev``…) and
    MINPACK's info code.

    scipy's binding of lmder is called directly where it is present: ``leastsq`` around it would
    evaluate the residuals and the Jacobian once more to check their shapes (ours are (n,) and
    (n, p) by construction), and invert R for a covariance that is not used here. The iterations
    are MINPACK's own either way, with the same arguments, so the results are the same.
    """
    binding = _LMDER
    if binding is not None:
        try:
            # lmder(fcn, Dfun, x0, args, full_output, col_deriv, ftol, xtol, gtol, maxfev, factor, diag)
            beta, info, code = binding(residuals, jacobian, beta0, (), 1, 0, TOLERANCE, TOLERANCE, TOLERANCE, limit,
                                       100.0, None)
            return beta, info, int(code)
        except TypeError:
            pass  # a scipy whose binding takes other arguments: leastsq below (which raises improper input again)
    beta, _, info, _, code = optimize.leastsq(
        residuals, beta0, Dfun=jacobian, full_output=True, col_deriv=False,
        ftol=TOLERANCE, xtol=TOLERANCE, gtol=TOLERANCE, maxfev=limit, factor=100.0, diag=None,
    )
    return beta, info, int(code)


def _weighted_problem(
    function: ModelFunction, jacobian: JacobianFunction, x: FloatArray, y: FloatArray, root_w: FloatArray
) -> tuple[Callable[[FloatArray], FloatArray], Callable[[FloatArray], FloatArray]]:
    """The weighted residuals √wᵢ·(f(xᵢ; β) − yᵢ) and their Jacobian, as functions of β."""

    return _finite(lambda beta: root_w * (function(x, beta) - y), lambda beta: root_w[:, None] * jacobian(x, beta))


def _finite(
    residuals: Callable[[FloatArray], FloatArray], jacobian: Callable[[FloatArray], FloatArray]
) -> tuple[Callable[[FloatArray], FloatArray], Callable[[FloatArray], FloatArray]]:
    """The weighted residuals and Jacobian with their non-finite values replaced (see below).

    Called only inside np.errstate(all="ignore") (around MINPACK and the Gauss–Newton steps), so
    that an overflow on the way is not reported as an error: one context for all evaluations. A
    finite sum means every term is finite (an infinity or NaN anywhere makes it infinite or NaN);
    only when it is not are the values looked at one by one. The Jacobian's function keeps, in its
    attribute ``finite``, whether the last Jacobian it gave was the curve's own (no value replaced), so
    that the fit's record may take the refinement's last Jacobian and still refuse one that was not.
    """

    def finite_residuals(beta: FloatArray) -> FloatArray:
        r = residuals(beta)
        if math.isfinite(np.add.reduce(r)):
            return r
        # A non-finite residual makes MINPACK wander; a huge finite one makes it step back instead.
        finite = np.isfinite(r)
        return r if finite.all() else np.where(finite, r, 1e150)

    def finite_jacobian(beta: FloatArray) -> FloatArray:
        j = jacobian(beta)
        if math.isfinite(np.add.reduce(j, axis=None)):
            finite_jacobian.finite = True  # type: ignore[attr-defined]
            return j
        finite = np.isfinite(j)
        everywhere = bool(finite.all())
        finite_jacobian.finite = everywhere  # type: ignore[attr-defined]
        return j if everywhere else np.where(finite, j, 0.0)

    finite_jacobian.finite = True  # type: ignore[attr-defined]  # whether the last Jacobian given was the curve's own
    return finite_residuals, finite_jacobian


def _finish(
    function: ModelFunction, jacobian: JacobianFunction, x: FloatArray, y: FloatArray, root_w: FloatArray,
    residuals: Callable[[FloatArray], FloatArray], weighted_jacobian: Callable[[FloatArray], FloatArray],
    beta: FloatArray, status: int, code: int, evaluations: int, limit: int, fvec: FloatArray | None = None,
) -> "FitOutcome":
    """The fit's outcome from the point MINPACK reached, polished by :func:`_refine` when it converged.
    ``fvec``: the weighted residuals at ``beta`` as MINPACK returned them (None: worked out again)."""
    n, p = y.size, beta.size
    svd = None
    j = None
    if status > 0:
        with np.errstate(all="ignore"):
            beta, extra, svd, j, j_finite = _refine(residuals, weighted_jacobian, beta, fvec)
        evaluations += extra
        if not j_finite:
            # the refinement's copy holds zeros in place of values that were not finite: its Jacobian
            # is not the curve's, and the fit is refused below as the one worked out afresh would be
            j = np.full((n, p), np.nan)
    with np.errstate(all="ignore"):
        fitted = function(x, beta)
        if j is None:
            j = root_w[:, None] * jacobian(x, beta)
    # the refinement's Jacobian at β is √w·∂f/∂β there, the same numbers as worked out afresh here
    # (``weighted_jacobian`` is √w times ``jacobian``, or the curve's own form of it giving the same numbers)
    r = root_w * (y - fitted)
    if not (np.all(np.isfinite(fitted)) and np.all(np.isfinite(j)) and np.all(np.isfinite(beta))):
        return _failed(
            function, jacobian, x, y, beta, root_w, evaluations,
            "the curve or its derivatives stopped being finite numbers at the last parameters reached",
        )
    if status <= 0:
        reason = (
            f"no minimum was reached within {limit} evaluations of the curve"
            if status == 0 else f"the fit stopped: MINPACK reported code {int(code)} (improper input)"
        )
        return FitOutcome(beta, j, fitted, r, n, p, evaluations, False, reason)
    # the refinement's SVD was taken of this same Jacobian (weighted_jacobian(β) is j when j is finite)
    svd = svd if svd is not None else _scaled_svd(j)
    s = svd[1]
    if s.size < p or s[-1] <= RANK_TOLERANCE * s[0]:
        return FitOutcome(
            beta, j, fitted, r, n, p, evaluations, False,
            "the data cannot separate the parameters at the point reached (the curve's derivatives "
            "with respect to them are linearly dependent over these concentrations)",
        )
    return FitOutcome(beta, j, fitted, r, n, p, evaluations, True, _STOP_WORDS[status], svd)


def _refine(
    residuals: Callable[[FloatArray], FloatArray], jacobian: Callable[[FloatArray], FloatArray], beta: FloatArray,
    r: FloatArray | None = None,
) -> tuple[FloatArray, int, tuple[FloatArray, FloatArray, FloatArray, FloatArray], FloatArray, bool]:
    """Up to three full Gauss–Newton steps from the converged point, each kept while it brings the
    gradient of S closer to zero, and none after a step whose successor could only move the
    parameters by round-off (:data:`_NEGLIGIBLE_STEP`).

    MINPACK stops when a step changes S by less than its tolerance relative to S. Near the minimum S
    changes only in the square of the step, so S itself locates the minimum to no better than about
    √ε times the parameters' standard errors (a few parts in 10⁸ where those are large). The gradient
    Jᵀr vanishes linearly there, so it locates the minimum to about ε times the condition number.
    A Gauss–Newton step, solved through the SVD of the column-scaled Jacobian, is kept while the
    scaled gradient shrinks, which gives the same parameters in any units. Returns the parameters,
    the evaluations made, the SVD of the column-scaled Jacobian at them (:func:`_scaled_svd`), that
    Jacobian, and whether it was finite as the curve gave it (``jacobian`` from :func:`_finite`, which
    puts zeros in place of values that are not; True when ``jacobian`` does not say). ``r``: the
    residuals at ``beta`` when the caller has them (MINPACK returns them with its point).
    """
    if r is None:
        r = residuals(beta)
    j = jacobian(beta)
    j_finite = getattr(jacobian, "finite", True)
    scale = _column_scale(j)
    scaled = j / scale
    u, s, vt = _thin_svd(scaled, quiet=True)
    gradient = _norm(scaled.T @ r)
    evaluations = 0
    last_step = math.inf
    for _ in range(_REFINE_STEPS):
        if s[-1] <= RANK_TOLERANCE * s[0] or gradient == 0.0:
            break
        trial = beta - (vt.T @ ((u.T @ r) / s)) / scale
        r_trial = residuals(trial)
        j_trial = jacobian(trial)
        j_trial_finite = getattr(jacobian, "finite", True)
        evaluations += 1
        scale_t = _column_scale(j_trial)
        scaled_t = j_trial / scale_t
        gradient_trial = _norm(scaled_t.T @ r_trial)
        if not gradient_trial < gradient:
            break  # the trial is not kept: its SVD is never needed
        step = _relative_step(trial, beta)
        beta, r, gradient, j, j_finite = trial, r_trial, gradient_trial, j_trial, j_trial_finite
        u, s, vt = _thin_svd(scaled_t, quiet=True)
        scale = scale_t
        # Gauss–Newton closes in linearly, each step about the last one's ratio to the one before it
        # times its size: stop once the next step could only move the parameters by round-off
        if step <= _NEGLIGIBLE_STEP or (last_step < math.inf and step * step <= _NEGLIGIBLE_STEP * last_step):
            break
        last_step = step
    return beta, evaluations, (u, s, vt, scale), j, j_finite


def _relative_step(new: FloatArray, old: FloatArray) -> float:
    """The largest change of a parameter relative to its new value, max |Δβᵢ|/|βᵢ| (inf when a
    parameter that changed is zero): the same in any units of the parameters."""
    # a few parameters: worked as Python floats (the same IEEE operations as numpy's on each element)
    ratios = []
    for a, b in zip(new.tolist(), old.tolist()):
        change, size = abs(a - b), abs(a)
        if size == 0.0:
            if change > 0.0:
                return math.inf  # a parameter that left zero (whatever the others did)
            size = 1.0
        ratios.append(change / size)
    if any(ratio != ratio for ratio in ratios):
        return math.nan  # as numpy's maximum, which a NaN wins
    return max(ratios)


def _norm(v: FloatArray) -> float:
    """‖v‖₂ of a vector as numpy.linalg.norm takes it (√(v·v)), without its argument handling."""
    return math.sqrt(float(v @ v))


def _column_scale(j: FloatArray) -> FloatArray:
    """The column norms of J (1 for a column of zeros)."""
    scale = np.sqrt(np.add.reduce(j * j, axis=0))
    return np.where(scale > 0, scale, 1.0)


def _scaled_svd(j: FloatArray, quiet: bool = False) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray]:
    """SVD of J with its columns scaled to unit length: J·D⁻¹ = U·diag(s)·Vᵀ, D = column norms."""
    scale = _column_scale(j)
    u, s, vt = _thin_svd(j / scale, quiet)
    return u, s, vt, scale


def _thin_svd(a: FloatArray, quiet: bool = False) -> tuple[FloatArray, FloatArray, FloatArray]:
    """numpy.linalg.svd(a, full_matrices=False) of a real matrix: the same LAPACK routine through
    numpy's own binding, without the wrapper's checks and error-state set-up, which cost more than
    the decomposition of a few dozen rows by two to five columns. Where the routine does not
    converge (its values are not finite) the answer is numpy.linalg.svd's, which raises.
    ``quiet``: the caller runs inside np.errstate(invalid="ignore") already (the Gauss–Newton steps)."""
    binding = _SVD
    if binding is not None:
        try:
            if quiet:
                u, s, vt = binding(a, signature="d->ddd")
            else:
                with np.errstate(invalid="ignore"):  # a failure is answered by numpy.linalg.svd below
                    u, s, vt = binding(a, signature="d->ddd")
        except (TypeError, ValueError):
            s = np.array([np.nan])  # a numpy whose binding is called otherwise: numpy.linalg.svd below
        if np.isfinite(np.add.reduce(s)):
            return u, s, vt
    u, s, vt = np.linalg.svd(a, full_matrices=False)
    return u, s, vt


class FitOutcome:
    """Where one fit from one start ended, before its record is made: the point reached, the weighted
    Jacobian, fitted values and residuals there, whether it converged and why, and its sum of squares
    (:func:`fit_outcome`). :meth:`record` makes the :class:`NonlinearFit`."""

    __slots__ = ("parameters", "jacobian", "fitted", "residuals", "n", "p", "evaluations", "converged", "reason",
                 "svd", "sse")

    def __init__(
        self, beta: FloatArray, j: FloatArray, fitted: FloatArray, r: FloatArray, n: int, p: int,
        evaluations: int, converged: bool, reason: str,
        svd: tuple[FloatArray, FloatArray, FloatArray, FloatArray] | None = None,
    ) -> None:
        self.parameters, self.jacobian, self.fitted, self.residuals = beta, j, fitted, r
        self.n, self.p, self.evaluations, self.converged, self.reason, self.svd = n, p, evaluations, converged, reason, svd
        self.sse = float(r @ r)

    def record(self) -> NonlinearFit:
        """The fit's record (see :func:`_result`)."""
        return _result(self.parameters, self.jacobian, self.fitted, self.residuals, self.n, self.p, self.evaluations,
                       self.converged, self.reason, self.svd, self.sse)


def _result(
    beta: FloatArray, j: FloatArray, fitted: FloatArray, r: FloatArray, n: int, p: int,
    evaluations: int, converged: bool, reason: str,
    svd: tuple[FloatArray, FloatArray, FloatArray, FloatArray] | None = None, sse: float | None = None,
) -> NonlinearFit:
    """The fit's record; ``svd`` is :func:`_scaled_svd` of ``j`` and ``sse`` is r·r when the caller has them already."""
    df = n - p
    sse = float(r @ r) if sse is None else sse
    residual_sd = float(np.sqrt(sse / df)) if df > 0 else float("nan")
    unscaled = np.full((p, p), np.nan)
    u = None
    if converged:
        u, s, vt, scale = svd if svd is not None else _scaled_svd(j)
        # (JᵀJ)⁻¹ = D⁻¹·V·diag(1/s²)·Vᵀ·D⁻¹
        unscaled = ((vt.T / s) @ (vt.T / s).T) / np.outer(scale, scale)
    covariance = residual_sd**2 * unscaled
    return NonlinearFit(
        parameters=frozen(beta.copy()),
        covariance=frozen(covariance),
        unscaled_covariance=frozen(unscaled),
        standard_errors=frozen(np.sqrt(np.abs(np.diag(covariance)))),
        residual_sd=residual_sd,
        df_residual=df,
        sse=sse,
        fitted=frozen(np.asarray(fitted, dtype=np.float64).copy()),
        weighted_residuals=frozen(r),
        weighted_jacobian=frozen(j),
        converged=converged,
        reason=reason,
        evaluations=evaluations,
        scaled_u=None if u is None else frozen(u),
    )


def _failed(
    function: ModelFunction, jacobian: JacobianFunction, x: FloatArray, y: FloatArray, beta: FloatArray,
    root_w: FloatArray, evaluations: int, reason: str,
) -> FitOutcome:
    n, p = y.size, beta.size
    with np.errstate(all="ignore"):
        fitted = np.asarray(function(x, beta), dtype=np.float64) if np.all(np.isfinite(beta)) else np.full(n, np.nan)
    j = np.full((n, p), np.nan)
    return FitOutcome(beta, j, fitted, root_w * (y - fitted), n, p, evaluations, False, reason)
