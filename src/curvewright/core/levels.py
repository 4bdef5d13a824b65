"""Grouping calibration standards into concentration levels.

Replicates are simply repeated concentrations. Standards made up by mass rarely repeat a nominal
value to the last digit, so values within a small relative tolerance of each other form one level
(``|x_j − x_first| ≤ tol · max(|x_j|, |x_first|)``, scanning the sorted values). A level of zero
concentration only ever holds exact zeros.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._arrays import FloatArray, frozen
from .errors import CalibrationInputError

DEFAULT_LEVEL_TOLERANCE = 0.005
"""Relative tolerance that puts two nominal concentrations on one level (0.5 %)."""


@dataclass(frozen=True, eq=False)
class Levels:
    """Which level each standard belongs to.

    Attributes
    ----------
    index : int array of shape (n_standards,)
        Level number of each standard, 0 for the lowest concentration.
    concentration : float array of shape (n_levels,)
        Mean nominal concentration of each level, ascending.
    count : int array of shape (n_levels,)
        Number of standards (replicates) at each level.
    """

    index: np.ndarray
    concentration: FloatArray
    count: np.ndarray

    @property
    def n_levels(self) -> int:
        return int(self.concentration.size)

    @property
    def replicated(self) -> np.ndarray:
        """Boolean array of shape (n_levels,): the level has two or more standards."""
        return self.count >= 2

    def level_means(self, values: FloatArray, weights: FloatArray | None = None) -> FloatArray:
        """Mean (weighted when ``weights`` is given) of ``values`` within each level."""
        w = np.ones_like(values) if weights is None else weights
        sums = np.bincount(self.index, weights=w * values, minlength=self.n_levels)
        return sums / np.bincount(self.index, weights=w, minlength=self.n_levels)

    def level_sd(self, values: FloatArray) -> FloatArray:
        """Sample standard deviation (n − 1) of ``values`` within each level; NaN where single."""
        means = self.level_means(values)
        squares = np.bincount(
            self.index, weights=(values - means[self.index]) ** 2, minlength=self.n_levels
        )
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(self.count >= 2, np.sqrt(squares / (self.count - 1)), np.nan)


def group_levels(concentration: FloatArray, tolerance: float = DEFAULT_LEVEL_TOLERANCE) -> Levels:
    """Group ``concentration`` (shape (n,)) into levels within the relative ``tolerance``."""
    if not (0.0 <= tolerance < 0.5):
        raise CalibrationInputError(
            f"level tolerance: {tolerance!r} is outside 0 to 0.5 (a relative fraction, 0.005 = 0.5 %)."
        )
    order = np.argsort(concentration, kind="stable")
    sorted_x = concentration[order]
    gaps = np.diff(sorted_x)
    scale = np.maximum(np.abs(sorted_x[1:]), np.abs(sorted_x[:-1]))
    zero_pair = (sorted_x[1:] == 0) | (sorted_x[:-1] == 0)
    near = (gaps > 0) & ~zero_pair & (gaps <= tolerance * scale)
    if sorted_x.size == 0:
        level_of_sorted = np.zeros(0, dtype=np.intp)
    elif not near.any():
        # every neighbour is either identical or clearly apart: levels follow the gaps directly
        level_of_sorted = np.concatenate([[0], np.cumsum(gaps > 0)]).astype(np.intp)
    else:
        level_of_sorted = np.empty(sorted_x.size, dtype=np.intp)
        level = 0
        first = sorted_x[0]
        for i, x in enumerate(sorted_x):
            if i and not _same_level(first, x, tolerance):
                level += 1
                first = x
            level_of_sorted[i] = level
    index = np.empty_like(level_of_sorted)
    index[order] = level_of_sorted
    count = np.bincount(index)
    means = np.bincount(index, weights=concentration) / count
    return Levels(index=frozen(index), concentration=frozen(means), count=frozen(count))


def _same_level(first: float, x: float, tolerance: float) -> bool:
    if first == x:
        return True
    if first == 0.0 or x == 0.0:
        return False
    return abs(x - first) <= tolerance * max(abs(x), abs(first))
