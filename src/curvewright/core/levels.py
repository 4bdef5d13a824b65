"""Grouping calibration standards into concentration levels.

Replicates are standards of one level. By default a level is one nominal concentration: standards
with equal nominal values are replicates, and distinct values are distinct levels, however close.
Two ways to group otherwise, both chosen by the analyst, never by default:

* level labels ("L1", "Cal 3"…): standards carrying the same label form one level, whatever their
  nominal concentrations (standards made up by mass rarely repeat a value to the last digit);
  standards without a label are grouped by equal nominal concentration;
* a relative tolerance: values within it of the first value of a level join it
  (``|x_j − x_first| ≤ tol · max(|x_j|, |x_first|)``, scanning the sorted values). A level of zero
  concentration only ever holds exact zeros.

A level whose standards differ in concentration is not a set of exact replicates: the scatter of its
responses about their mean includes the slope times the spread of concentrations. The lack-of-fit
test therefore takes the pure error about the curve within each level (see :mod:`.lack_of_fit`).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, frozen
from .errors import CalibrationInputError

@frozen_value(eq=False)
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
    exact: bool = True
    """Every level holds a single nominal concentration (its standards are exact replicates)."""

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


def group_levels(
    concentration: FloatArray, tolerance: float | None = None, labels: Sequence[str] | None = None
) -> Levels:
    """Group ``concentration`` (shape (n,)) into levels.

    ``labels`` (one per standard; empty text for none) put standards with the same label on one
    level; ``tolerance`` (a relative fraction, 0.005 = 0.5 %) joins nearby values; with neither,
    each distinct nominal concentration is a level.
    """
    if tolerance is not None and (
        isinstance(tolerance, bool) or not isinstance(tolerance, (int, float)) or not (0.0 <= tolerance < 0.5)
    ):
        raise CalibrationInputError(
            f"level tolerance: {tolerance!r} is outside 0 to 0.5 (a relative fraction, 0.005 = 0.5 %)."
        )
    n = concentration.size
    if labels is None and n:
        # Without labels the levels are runs of the sorted values, numbered as they ascend already:
        # the renumbering below would leave them as they are.
        index, exact = _group_sorted(concentration, tolerance) if tolerance else _group_equal(concentration)
        count = np.bincount(index)
        means = np.bincount(index, weights=concentration) / count
        return Levels(index=frozen(index), concentration=frozen(means), count=frozen(count), exact=exact)
    if labels is not None:
        names = [str(label).strip() if label is not None else "" for label in labels]
        if len(names) != n:
            raise CalibrationInputError(
                f"level labels: {len(names)} labels given for {n} standards; give one label per standard "
                "(empty text for none)."
            )
    else:
        names = [""] * n
    unlabelled = np.array([not name for name in names], dtype=bool)
    key = np.empty(n, dtype=np.intp)
    next_key = 0
    if unlabelled.any():
        positions = np.flatnonzero(unlabelled)
        sub = _group_values(concentration[positions], tolerance or 0.0)
        key[positions] = sub
        next_key = int(sub.max()) + 1
    label_key: dict[str, int] = {}
    for i, name in enumerate(names):
        if name:
            if name not in label_key:
                label_key[name] = next_key
                next_key += 1
            key[i] = label_key[name]
    # number the levels in ascending order of their mean concentration (ties: first appearance)
    count_by_key = np.bincount(key, minlength=next_key)
    mean_by_key = np.bincount(key, weights=concentration, minlength=next_key) / np.maximum(count_by_key, 1)
    first_seen = np.full(next_key, n)
    np.minimum.at(first_seen, key, np.arange(n))
    used = np.flatnonzero(count_by_key > 0)
    order = used[np.lexsort((first_seen[used], mean_by_key[used]))]
    renumber = np.empty(next_key, dtype=np.intp)
    renumber[order] = np.arange(order.size)
    index = renumber[key]
    count = np.bincount(index)
    means = np.bincount(index, weights=concentration) / count
    low = np.full(count.size, np.inf)
    high = np.full(count.size, -np.inf)
    np.minimum.at(low, index, concentration)
    np.maximum.at(high, index, concentration)
    return Levels(
        index=frozen(index), concentration=frozen(means), count=frozen(count), exact=bool(np.all(low == high))
    )


def _group_values(values: FloatArray, tolerance: float) -> np.ndarray:
    """Level key of each value: equal values share one, and with ``tolerance`` > 0 so do near ones."""
    if values.size == 0:
        return np.zeros(0, dtype=np.intp)
    return _group_sorted(values, tolerance)[0]


def _group_equal(values: FloatArray) -> tuple[np.ndarray, bool]:
    """:func:`_group_sorted` with no tolerance, of at least one value: each distinct value is a level.
    No two values can then be near without being equal, so the levels follow the gaps between the
    sorted values, and every level holds a single value."""
    order = np.argsort(values, kind="stable")
    sorted_x = values[order]
    level_of_sorted = np.empty(sorted_x.size, dtype=np.intp)
    level_of_sorted[0] = 0
    np.cumsum(sorted_x[1:] > sorted_x[:-1], out=level_of_sorted[1:])
    key = np.empty_like(level_of_sorted)
    key[order] = level_of_sorted
    return key, True


def _group_sorted(values: FloatArray, tolerance: float) -> tuple[np.ndarray, bool]:
    """:func:`_group_values` of at least one value (keys ascending with the values, from 0), and
    whether every level holds a single value."""
    order = np.argsort(values, kind="stable")
    sorted_x = values[order]
    gaps = np.diff(sorted_x)
    scale = np.maximum(np.abs(sorted_x[1:]), np.abs(sorted_x[:-1]))
    zero_pair = (sorted_x[1:] == 0) | (sorted_x[:-1] == 0)
    near = (gaps > 0) & ~zero_pair & (gaps <= tolerance * scale)
    if not near.any():
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
    key = np.empty_like(level_of_sorted)
    key[order] = level_of_sorted
    # a level holds one value unless two neighbours in it differ
    exact = not bool(np.any((gaps > 0) & (np.diff(level_of_sorted) == 0)))
    return key, exact


def _same_level(first: float, x: float, tolerance: float) -> bool:
    if first == x:
        return True
    if first == 0.0 or x == 0.0:
        return False
    return abs(x - first) <= tolerance * max(abs(x), abs(first))
