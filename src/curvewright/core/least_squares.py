"""Weighted least squares by QR decomposition.

The weighted problem min Σ wᵢ (yᵢ − zᵢᵀa)² is solved as ordinary least squares on the whitened
system (√w·Z) a = √w·y with a Householder QR decomposition (numpy.linalg.qr), never through the
normal equations: the condition number enters once, not squared (Björck, *Numerical Methods for
Least Squares Problems*, SIAM 1996, §2.4). With Q the thin orthogonal factor, the leverages are the
row sums of Q² and (RᵀR)⁻¹ is the unscaled covariance of a.
"""

from __future__ import annotations


import numpy as np

from .values import frozen_value
from ._arrays import FloatArray
from .errors import CalibrationInputError

try:
    from numpy.linalg import _umath_linalg as _numpy_routines  # type: ignore[attr-defined]
except ImportError:  # a numpy that keeps its compiled routines elsewhere: numpy.linalg.qr is used
    _numpy_routines = None
_QR: tuple[object, object] = (getattr(_numpy_routines, "qr_r_raw", None), getattr(_numpy_routines, "qr_reduced", None))
"""numpy's compiled QR steps (what numpy.linalg.qr calls), or Nones where this numpy has them not."""

RANK_TOLERANCE = 1e-11
"""Smallest |R_jj|/max|R_kk| accepted before the design is called rank deficient."""
ROUNDOFF = 1000.0 * np.finfo(float).eps
"""Weighted residuals below ROUNDOFF·max|√w·y| are round-off of standards exactly on the curve, not scatter."""


def roundoff_floor(weighted_response: FloatArray) -> float:
    """ROUNDOFF·max|√w·y|: weighted residuals at or below it are round-off."""
    return ROUNDOFF * float(np.maximum.reduce(np.abs(weighted_response))) if weighted_response.size else 0.0


def without_roundoff(
    weighted_residuals: FloatArray, weighted_response: FloatArray, floor: float | None = None
) -> FloatArray:
    """``weighted_residuals`` with those at the level of round-off set to exactly zero; ``floor``:
    :func:`roundoff_floor` of ``weighted_response``, when the caller has it."""
    if floor is None:
        floor = roundoff_floor(weighted_response)
    return np.where(np.abs(weighted_residuals) <= floor, 0.0, weighted_residuals)


@frozen_value(eq=False)
class LeastSquaresSolution:
    """The raw output of one weighted QR fit (not part of the public API)."""

    coefficients: FloatArray  # shape (p,), in the fitting basis
    unscaled_covariance: FloatArray  # (RᵀR)⁻¹, shape (p, p)
    fitted: FloatArray  # shape (n,), in response units
    weighted_residuals: FloatArray  # √w·(y − ŷ)
    leverage: FloatArray  # diagonal of the weighted hat matrix
    sse: float  # Σ w (y − ŷ)²


def solve_weighted(design: FloatArray, response: FloatArray, weights: FloatArray) -> LeastSquaresSolution:
    """Solve the weighted least-squares problem for ``design`` (n, p) and ``response`` (n,)."""
    root_w = np.sqrt(weights)
    q, r = _thin_qr(design * root_w[:, None])
    return _solution(q, r, design, response, root_w)


def solve_weighted_stack(
    designs: FloatArray, response: FloatArray, weights: FloatArray
) -> list[LeastSquaresSolution | CalibrationInputError]:
    """:func:`solve_weighted` of k problems on the same responses: ``designs`` (k, n, p) and
    ``weights`` (k, n), the k QR decompositions taken in one call. Each entry is the solution, or the
    error :func:`solve_weighted` would raise for that problem; the numbers are the same as k calls."""
    root_w = np.sqrt(weights)
    qs, rs = _thin_qr(designs * root_w[:, :, None])
    out: list[LeastSquaresSolution | CalibrationInputError] = []
    for j in range(designs.shape[0]):
        try:
            out.append(_solution(qs[j], rs[j], designs[j], response, root_w[j]))
        except CalibrationInputError as exc:
            out.append(exc)
    return out


def _solution(
    q: FloatArray, r: FloatArray, design: FloatArray, response: FloatArray, root_w: FloatArray
) -> LeastSquaresSolution:
    """The solution from the QR decomposition of the whitened design √w·Z = Q·R."""
    # R is at most 3 × 3 here: its few numbers are worked as Python floats, which costs less than
    # the call overhead of the numpy operations on arrays of one to three elements
    rows = r.tolist()
    p = len(rows)
    diagonal = [abs(rows[i][i]) for i in range(p)]
    if min(diagonal) <= RANK_TOLERANCE * max(diagonal):
        raise CalibrationInputError(
            "the standards cannot determine this model: its terms are not independent over these "
            "concentrations (too few distinct levels, or levels too close together)."
        )
    qty = (q.T @ (response * root_w)).tolist()
    r_inverse = np.array([_back_substitute(rows, [1.0 if i == j else 0.0 for i in range(p)]) for j in range(p)]).T
    coefficients = np.array(_back_substitute(rows, qty))
    fitted = design @ coefficients
    weighted_residuals = root_w * (response - fitted)
    return LeastSquaresSolution(
        coefficients=coefficients,
        unscaled_covariance=r_inverse @ r_inverse.T,
        fitted=fitted,
        weighted_residuals=weighted_residuals,
        leverage=np.einsum("ij,ij->i", q, q),
        sse=float(weighted_residuals @ weighted_residuals),
    )


def _thin_qr(a: FloatArray) -> tuple[FloatArray, FloatArray]:
    """numpy.linalg.qr(a, mode="reduced") of a real n × p matrix (n ≥ p), or of a stack of them
    (k, n, p), each decomposed on its own: the same LAPACK routines (Householder QR, then Q formed
    from the reflectors) through numpy's own binding, without the wrapper's checks and error-state
    set-up. Where they give numbers that are not finite, the answer is numpy.linalg.qr's."""
    qr_raw, qr_reduced = _QR
    if qr_raw is not None and qr_reduced is not None:
        packed = np.array(a, dtype=np.float64, order="C")  # overwritten by R and the reflectors
        try:
            with np.errstate(invalid="ignore"):  # a failure is answered by numpy.linalg.qr below
                tau = qr_raw(packed, signature="d->d")
                q = qr_reduced(packed, tau, signature="dd->d")
        except (TypeError, ValueError):
            q = None  # a numpy whose bindings are called otherwise: numpy.linalg.qr below
        if q is not None:
            p = packed.shape[-1]
            r = packed[..., :p, :].copy()  # R is the upper triangle (numpy.triu's numbers: zeros below)
            for i in range(1, p):
                r[..., i, :i] = 0.0
            if np.isfinite(np.add.reduce(q, axis=None)) and np.isfinite(np.add.reduce(r, axis=None)):
                return q, r
    q, r = np.linalg.qr(a, mode="reduced")
    return q, r


def _back_substitute(r: list[list[float]], b: list[float]) -> list[float]:
    """Solve R·a = b for upper-triangular R (as nested lists) by back substitution (p is 1 to 3 here)."""
    p = len(r)
    a = [0.0] * p
    for i in range(p - 1, -1, -1):
        row = r[i]
        total = 0.0
        for k in range(i + 1, p):
            total += row[k] * a[k]
        a[i] = (b[i] - total) / row[i]
    return a
