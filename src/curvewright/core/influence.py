"""Influence of each standard on the calibration: leverage, studentized residuals, Cook's distance.

For a weighted fit these are the measures of ordinary least squares on the whitened problem
(√w·y against √w·X), as in Cook & Weisberg, *Residuals and Influence in Regression* (1982), §2.

* leverage hᵢ: diagonal of the hat matrix, Σhᵢ = p.
* internally studentized residual rᵢ = eᵢ/(s·√(1 − hᵢ)), eᵢ the weighted residual.
* externally studentized (deleted) residual tᵢ = rᵢ·√((n − p − 1)/(n − p − rᵢ²))
  (Belsley, Kuh & Welsch, *Regression Diagnostics*, 1980, eq. 2.26). When the model holds and the
  errors are normal, tᵢ follows Student's t with n − p − 1 degrees of freedom exactly.
* Cook's distance Dᵢ = rᵢ²·hᵢ/(p·(1 − hᵢ)) (Cook 1977, Technometrics 19:15).

What is flagged, and why these rules
    A flag must mean that the data, not the design, make a standard stand out: standards drawn from
    the true curve should see a flag in no more than about 5 % of calibrations. Leverage alone
    (hᵢ > 2p/n) is a property of where the standards were placed, so it marks the end standards of
    every run; Cook's distance above 4/n or even above 1 marks any standard of high leverage with an
    ordinary residual. Both were dropped as flags: in simulations from the true curve of common
    designs they flagged most calibrations. The rules kept (checked by the simulation in
    ``tests/core/test_influence_rules.py``) split a 5 % false-alarm rate between two tests by the
    Bonferroni inequality, which holds for any split of α whose parts sum to α:

    * ``OUTLIER``: |tᵢ| > t(1 − α₁/(2n); n − p − 1), α₁ = 0.025 — the Bonferroni outlier test
      (Cook & Weisberg 1982, §2.2; Weisberg, *Applied Linear Regression*, ch. on outliers; both from
      memory).
    * ``INFLUENTIAL``: Dᵢ above the median of F(p, n − p) (Cook & Weisberg 1982, §3.5, from memory)
      *and* |tᵢ| > t(1 − α₂·hᵢ/(2p); n − p − 1), α₂ = 0.025: a standard that would move the curve
      markedly if left out, with a residual beyond chance for its leverage. Since Σhᵢ/p = 1 the
      shares α₂·hᵢ/p sum to α₂; a standard of high leverage, which pulls the curve toward itself and
      hides its own residual, is tested at a larger share (the split in proportion to leverage is
      this program's choice).

    A standard of leverage above 0.5 is named in ``notes`` instead: the curve near it rests mostly
    on that one standard, whatever its value (Huber, *Robust Statistics*, 1981: leverage above 0.5 is
    best avoided; from memory).

A standard with leverage 1 fixes the fit at its own value whatever that value is: its residual is
zero and its studentized residual and Cook's distance are undefined (NaN in the arrays). It is
flagged ``DETERMINES_FIT`` so that no report shows a bare NaN without saying why. With n − p = 1
no scatter is left once a standard is set aside, so every deleted residual is undefined (NaN) and
every standard is flagged ``NOT_STUDENTIZED``.

Residuals at the level of round-off (standards exactly on the curve) are treated as zero: they are
not evidence of anything, and dividing by a deleted SD of round-off size would give absurdly large
or infinite studentized residuals.
"""

from __future__ import annotations

from dataclasses import field
from functools import lru_cache
from enum import Enum

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, frozen
from .least_squares import ROUNDOFF
from .notation import entered

FULL_LEVERAGE = 1.0 - 1e-9
"""Leverage at or above which a standard is taken to fix the curve through itself."""

OUTLIER_ALPHA = 0.025
"""Share of the 5 % false-alarm rate given to the Bonferroni outlier test."""
INFLUENCE_ALPHA = 0.025
"""Share of the 5 % false-alarm rate given to the influence test (split in proportion to leverage)."""
COOKS_QUANTILE = 0.5
"""Cook's distance is compared with this quantile of F(p, n − p) (the median; Cook & Weisberg 1982)."""
HIGH_LEVERAGE = 0.5
"""Leverage above which a standard is named in the notes (Huber 1981, from memory)."""

STUDENTIZED_LIMIT = 3.0
"""|studentized residual| = 3, drawn as a guide in plots (common practice); the flags use
:attr:`Influence.studentized_threshold`."""


class InfluenceFlag(str, Enum):
    """Why a standard may be distorting the calibration; each carries its rule's source."""

    OUTLIER = "studentized residual beyond the Bonferroni outlier limit"
    INFLUENTIAL = "Cook's distance above the median of F(p, n − p), with a residual beyond chance for its leverage"
    DETERMINES_FIT = "leverage 1: the curve passes through this standard whatever its value"
    NOT_STUDENTIZED = (
        "studentized residual undefined: with n − p = 1 no scatter is left once a standard is set aside"
    )

    @property
    def source(self) -> str:
        return {
            InfluenceFlag.OUTLIER: (
                "Bonferroni outlier test, |t| > t(1 − 0.025/(2n); n − p − 1) "
                "(Cook & Weisberg 1982, Residuals and Influence in Regression, §2.2; from memory)"
            ),
            InfluenceFlag.INFLUENTIAL: (
                "Cook's distance against the median of F(p, n − p) (Cook & Weisberg 1982, §3.5; from memory) "
                "with |t| > t(1 − 0.025·h/(2p); n − p − 1), a Bonferroni split in proportion to leverage"
            ),
            InfluenceFlag.DETERMINES_FIT: "definition of leverage (Hoaglin & Welsch 1978, The American Statistician 32:17)",
            InfluenceFlag.NOT_STUDENTIZED: "definition of the deleted residual (Belsley, Kuh & Welsch 1980, eq. 2.26)",
        }[self]


@frozen_value(eq=False)
class Influence:
    """Influence measures, one value per standard (arrays of shape (n,)).

    ``studentized_threshold`` is the Bonferroni outlier limit for |tᵢ|, ``cooks_threshold`` the
    median of F(p, n − p) (both NaN when n − p < 2); ``influence_thresholds`` the leverage-dependent
    limit for |tᵢ| of the influence rule; ``notes`` names standards of leverage above 0.5.
    """

    leverage: FloatArray
    studentized_residuals: FloatArray
    cooks_distance: FloatArray
    flags: tuple[tuple[InfluenceFlag, ...], ...]
    internal_studentized: FloatArray
    studentized_threshold: float
    cooks_threshold: float
    influence_thresholds: FloatArray
    notes: tuple[str, ...] = field(default=())


_FLAG_SETS: tuple[tuple[InfluenceFlag, ...], ...] = (
    (), (InfluenceFlag.OUTLIER,), (InfluenceFlag.INFLUENTIAL,), (InfluenceFlag.OUTLIER, InfluenceFlag.INFLUENTIAL),
    (InfluenceFlag.DETERMINES_FIT,), (InfluenceFlag.NOT_STUDENTIZED,),
)


def measure_influence(
    weighted_residuals: FloatArray,
    leverage: FloatArray,
    n_parameters: int,
    weighted_response: FloatArray | None = None,
) -> Influence:
    """Compute the influence measures of every standard from one weighted fit.

    ``weighted_response`` (√w·y) sets the round-off level below which residuals count as zero.
    """
    return measure_influence_of_fits(
        weighted_residuals[None, :], leverage[None, :], n_parameters,
        None if weighted_response is None else weighted_response[None, :],
    )[0]


def measure_influence_of_fits(
    weighted_residuals: FloatArray,
    leverage: FloatArray,
    n_parameters: int,
    weighted_response: FloatArray | None = None,
) -> list[Influence]:
    """:func:`measure_influence` of k fits of one model to the same n standards (under k weightings),
    from arrays of shape (k, n), in one pass: the same numbers as k calls, fit by fit."""
    k, n = weighted_residuals.shape
    p = n_parameters
    df = n - p
    full = leverage >= FULL_LEVERAGE
    scale = np.maximum.reduce(np.abs(weighted_response), axis=1) if weighted_response is not None else np.zeros(k)
    floor = ROUNDOFF * scale
    e = np.where(np.abs(weighted_residuals) <= floor[:, None], 0.0, weighted_residuals)
    # each fit's sum of squares as a dot product of its own row, as one fit alone takes it
    sse = np.array([float(row @ row) for row in e])
    s = np.sqrt(sse / df)
    one_minus_h = np.where(full, np.nan, 1.0 - leverage)
    with np.errstate(invalid="ignore", divide="ignore"):
        internal = e / (s[:, None] * np.sqrt(one_minus_h))
        if df > 1:
            # Deleted residual variance s²₍ᵢ₎ = (SSE − eᵢ²/(1 − hᵢ))/(n − p − 1), never below round-off.
            deleted_sse = np.maximum(sse[:, None] - e**2 / one_minus_h, (df - 1) * floor[:, None] ** 2)
            external = e / np.sqrt(deleted_sse / (df - 1) * one_minus_h)
            external = np.where(e == 0.0, np.where(full, np.nan, 0.0), external)
        else:
            external = np.full((k, n), np.nan)
        cooks = internal**2 * leverage / (p * one_minus_h)
    perfect = s == 0.0
    if perfect.any():
        # A perfect fit: every residual is zero (or round-off), nothing stands out.
        rows = perfect[:, None]
        internal = np.where(rows, np.where(full, np.nan, 0.0), internal)
        external = np.where(rows, np.where(full | (df <= 1), np.nan, 0.0), external)
        cooks = np.where(rows, np.where(full, np.nan, 0.0), cooks)
    if df > 1:
        studentized_threshold, cooks_threshold = _thresholds(n, p)
        influence_thresholds = influence_limit(leverage, p, n)
    else:
        studentized_threshold = cooks_threshold = float("nan")
        influence_thresholds = np.full((k, n), np.nan)
    with np.errstate(invalid="ignore"):
        outlier = np.abs(external) > studentized_threshold
        influential = (cooks > cooks_threshold) & (np.abs(external) > influence_thresholds)
    # each standard's flags, by a code: 0 none, 1 outlier, 2 influential, 3 both, 4 leverage 1, 5 not studentized
    code = np.where(full, 4, 5) if df <= 1 else np.where(full, 4, outlier + 2 * influential.astype(np.int64))
    high = (leverage > HIGH_LEVERAGE) & ~full
    named = np.logical_or.reduce(high, axis=1).tolist()  # the fits with a standard to name in the notes
    # each fit's arrays are the rows of these read-only stacks (its own values, as copies would hold them)
    capped = frozen(np.minimum(leverage, 1.0))
    external, cooks, internal = frozen(np.asarray(external)), frozen(np.asarray(cooks)), frozen(np.asarray(internal))
    thresholds = frozen(np.array(influence_thresholds, dtype=float))
    pick = _FLAG_SETS.__getitem__
    out = []
    for j, codes in enumerate(code.tolist()):
        out.append(Influence(
            leverage=capped[j],
            studentized_residuals=external[j],
            cooks_distance=cooks[j],
            flags=tuple(map(pick, codes)),
            internal_studentized=internal[j],
            studentized_threshold=studentized_threshold,
            cooks_threshold=cooks_threshold,
            influence_thresholds=thresholds[j],
            notes=_leverage_notes(leverage[j], high[j]) if named[j] else (),
        ))
    return out


def leverage_notes(leverage: FloatArray) -> tuple[str, ...]:
    """The notes :func:`measure_influence` gives a fit with these leverages (standards whose leverage
    is above :data:`HIGH_LEVERAGE` and below 1), from the leverages alone."""
    leverage = np.asarray(leverage, dtype=np.float64)
    high = leverage > HIGH_LEVERAGE
    if not high.any():
        return ()  # the usual case: no standard stands out
    return _leverage_notes(leverage, high & ~(leverage >= FULL_LEVERAGE))


def _leverage_notes(leverage: FloatArray, high: np.ndarray) -> tuple[str, ...]:
    return tuple(
        f"standard {i + 1} has leverage {leverage[i]:.2f} (above {entered(HIGH_LEVERAGE)}): the curve near it rests "
        "mostly on this one standard, so an error in it would hardly show in its residual; replicate it "
        "or add a standard nearby"
        for i in np.flatnonzero(high)
    )


@lru_cache(maxsize=256)
def _thresholds(n: int, p: int) -> tuple[float, float]:
    """The Bonferroni outlier limit t(1 − α₁/(2n); n − p − 1) and the median of F(p, n − p), for n − p > 1.

    They depend on n and p alone, so the candidates of a model screen share them."""
    from scipy import special  # loaded on first use: importing the engine stays light

    df = n - p
    return (float(special.stdtrit(df - 1, 1.0 - OUTLIER_ALPHA / (2 * n))),
            float(special.fdtri(p, df, COOKS_QUANTILE)))


def influence_limit(leverage: FloatArray, n_parameters: int, n_standards: int) -> FloatArray:
    """The |externally studentized residual| beyond which the influence rule counts a standard of
    each leverage as beyond chance: t(1 − α₂·h/(2p); n − p − 1), α₂ = :data:`INFLUENCE_ALPHA` (the
    Bonferroni share in proportion to leverage; see the module's notes). NaN when n − p < 2."""
    h = np.clip(np.asarray(leverage, dtype=np.float64), 0.0, 1.0)
    df = n_standards - n_parameters
    if df < 2:
        return np.full(h.shape, np.nan)
    share = INFLUENCE_ALPHA * h / (2 * n_parameters)
    with np.errstate(divide="ignore"):
        from scipy import special  # loaded on first use: importing the engine stays light

        return special.stdtrit(df - 1, 1.0 - np.maximum(share, 1e-300))


def influence_boundary(leverage: FloatArray, n_parameters: int, n_standards: int, cooks_threshold: float) -> FloatArray:
    """|externally studentized residual| above which a standard of each leverage is flagged
    ``INFLUENTIAL``: both its Cook's distance above ``cooks_threshold`` and its residual beyond
    :func:`influence_limit`, so the larger of the two boundaries. Infinite where no residual can
    bring Cook's distance above the threshold (the internally studentized residual never exceeds
    √(n − p)), so that no standard of that leverage can be flagged for influence."""
    contour = cooks_contour_external(cooks_threshold, n_parameters, n_standards, leverage)
    limit = influence_limit(leverage, n_parameters, n_standards)
    return np.where(np.isnan(contour) | np.isnan(limit), np.inf, np.maximum(contour, limit))


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
