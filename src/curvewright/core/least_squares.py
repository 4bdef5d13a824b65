"""Weighted least squares by QR decomposition.

The weighted problem min Σ wᵢ (yᵢ − zᵢᵀa)² is solved as ordinary least squares on the whitened
system (√w·Z) a = √w·y with a Householder QR decomposition (numpy.linalg.qr), never through the
normal equations: the condition number enters once, not squared (Björck, *Numerical Methods for
Least Squares Problems*, SIAM 1996, §2.4). With Q the thin orthogonal factor, the leverages are the
row sums of Q² and (RᵀR)⁻¹ is the unscaled covariance of a.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import solve_triangular

from ._arrays import FloatArray
from .errors import CalibrationInputError

RANK_TOLERANCE = 1e-11
"""Smallest |R_jj|/max|R_kk| accepted before the design is called rank deficient."""


@dataclass(frozen=True, eq=False)
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
    q, r = np.linalg.qr(design * root_w[:, None], mode="reduced")
    diagonal = np.abs(np.diag(r))
    if diagonal.min() <= RANK_TOLERANCE * diagonal.max():
        raise CalibrationInputError(
            "the standards cannot determine this model: its terms are not independent over these "
            "concentrations (too few distinct levels, or levels too close together)."
        )
    qty = q.T @ (response * root_w)
    coefficients = solve_triangular(r, qty, lower=False)
    r_inverse = solve_triangular(r, np.eye(r.shape[0]), lower=False)
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
