"""Influence of each standard on the calibration: leverage, studentized residuals, Cook's distance.

For a weighted fit these are the measures of ordinary least squares on the whitened problem
(√w·y against √w·X), as in Cook & Weisberg, *Residuals and Influence in Regression* (1982), §2.

* leverage hᵢ: diagonal of the hat matrix, Σhᵢ = p.
* internally studentized residual rᵢ = eᵢ/(s·√(1 − hᵢ)), eᵢ the weighted residual.
* externally studentized (deleted) residual tᵢ = rᵢ·√((n − p − 1)/(n − p − rᵢ²))
  (Belsley, Kuh & Welsch, *Regression Diagnostics*, 1980, eq. 2.26).
* Cook's distance Dᵢ = rᵢ²·hᵢ/(p·(1 − hᵢ)) (Cook 1977, Technometrics 19:15).

A standard with leverage 1 fixes the fit at its own value whatever that value is: its residual is
zero and its studentized residual and Cook's distance are undefined (NaN in the arrays). It is
flagged ``DETERMINES_FIT`` so that no report shows a bare NaN without saying why.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import Enum

import numpy as np

from ._arrays import FloatArray, frozen

FULL_LEVERAGE = 1.0 - 1e-9
"""Leverage at or above which a standard is taken to fix the curve through itself."""

STUDENTIZED_LIMIT = 3.0
"""|externally studentized residual| above which a standard is flagged (common practice)."""


class InfluenceFlag(str, Enum):
    """Why a standard may be distorting the calibration; each carries its threshold's source."""

    HIGH_LEVERAGE = "leverage above 2p/n"
    COOKS_ABOVE_4_OVER_N = "Cook's distance above 4/n"
    COOKS_ABOVE_1 = "Cook's distance above 1"
    LARGE_STUDENTIZED = "|studentized residual| above 3"
    DETERMINES_FIT = "leverage 1: the curve passes through this standard whatever its value"

    @property
    def source(self) -> str:
        return {
            InfluenceFlag.HIGH_LEVERAGE: "Hoaglin & Welsch (1978), The American Statistician 32:17",
            InfluenceFlag.COOKS_ABOVE_4_OVER_N: "common practice (Bollen & Jackman 1990)",
            InfluenceFlag.COOKS_ABOVE_1: "Cook & Weisberg (1982), Residuals and Influence in Regression",
            InfluenceFlag.LARGE_STUDENTIZED: "common practice",
            InfluenceFlag.DETERMINES_FIT: "definition of leverage (Hoaglin & Welsch 1978)",
        }[self]


@dataclass(frozen=True, eq=False)
class Influence:
    """Influence measures, one value per standard (arrays of shape (n,))."""

    leverage: FloatArray
    studentized_residuals: FloatArray
    cooks_distance: FloatArray
    flags: tuple[tuple[InfluenceFlag, ...], ...]
    internal_studentized: FloatArray
    leverage_threshold: float
    cooks_threshold: float


def measure_influence(
    weighted_residuals: FloatArray, leverage: FloatArray, n_parameters: int
) -> Influence:
    """Compute the influence measures of every standard from one weighted fit."""
    n = weighted_residuals.size
    p = n_parameters
    df = n - p
    full = leverage >= FULL_LEVERAGE
    sse = float(weighted_residuals @ weighted_residuals)
    s = np.sqrt(sse / df)
    one_minus_h = np.where(full, np.nan, 1.0 - leverage)
    with np.errstate(invalid="ignore", divide="ignore"):
        internal = weighted_residuals / (s * np.sqrt(one_minus_h))
        if df > 1:
            # Deleted residual variance s²₍ᵢ₎ = (SSE − eᵢ²/(1 − hᵢ))/(n − p − 1); clip round-off.
            deleted_sse = np.maximum(sse - weighted_residuals**2 / one_minus_h, 0.0)
            external = weighted_residuals / np.sqrt(deleted_sse / (df - 1) * one_minus_h)
        else:
            external = np.full(n, np.nan)
        cooks = internal**2 * leverage / (p * one_minus_h)
    if s == 0.0:
        # A perfect fit: every residual is zero, nothing stands out.
        internal = np.where(full, np.nan, 0.0)
        external = np.where(full, np.nan, 0.0)
        cooks = np.where(full, np.nan, 0.0)
    leverage_threshold = 2.0 * p / n
    cooks_threshold = 4.0 / n
    with np.errstate(invalid="ignore"):
        tests = (
            (leverage > leverage_threshold, InfluenceFlag.HIGH_LEVERAGE),
            (cooks > cooks_threshold, InfluenceFlag.COOKS_ABOVE_4_OVER_N),
            (cooks > 1.0, InfluenceFlag.COOKS_ABOVE_1),
            (np.abs(external) > STUDENTIZED_LIMIT, InfluenceFlag.LARGE_STUDENTIZED),
        )
    flags: list[tuple[InfluenceFlag, ...]] = [()] * n
    standing_out = np.flatnonzero(full | np.logical_or.reduce([mask for mask, _ in tests]))
    for i in standing_out:
        flags[i] = (InfluenceFlag.DETERMINES_FIT,) if full[i] else tuple(f for mask, f in tests if mask[i])
    return Influence(
        leverage=frozen(np.minimum(leverage, 1.0)),
        studentized_residuals=frozen(external),
        cooks_distance=frozen(cooks),
        flags=tuple(flags),
        leverage_threshold=leverage_threshold,
        cooks_threshold=cooks_threshold,
        internal_studentized=frozen(internal),
    )


def cooks_contour(distance: float, n_parameters: int, leverage: FloatArray) -> FloatArray:
    """|internally studentized residual| at which Cook's distance equals ``distance`` for each leverage.

    From D = r²·h/(p·(1 − h)): |r| = √(D·p·(1 − h)/h), for 0 < h < 1.
    """
    h = np.asarray(leverage, dtype=np.float64)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.sqrt(distance * n_parameters * (1.0 - h) / h)


def cooks_contour_external(distance: float, n_parameters: int, n_standards: int, leverage: FloatArray) -> FloatArray:
    """|externally studentized residual| at which Cook's distance equals ``distance``, per leverage.

    The internal residual r of :func:`cooks_contour` converted with t = r·√((n − p − 1)/(n − p − r²))
    (Belsley, Kuh & Welsch 1980, eq. 2.26), so that the contour can be drawn against the same
    studentized residual the flags use. NaN where r² ≥ n − p (no such residual exists) or n − p < 2.
    """
    df = n_standards - n_parameters
    r = cooks_contour(distance, n_parameters, leverage)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = r * np.sqrt((df - 1) / (df - r * r))
    return np.where((df >= 2) & (r * r < df), t, np.nan)

