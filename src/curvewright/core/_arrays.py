"""Small helpers for turning user input into checked, read-only numpy arrays."""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import NDArray

from .errors import CurvewrightError

FloatArray = NDArray[np.float64]


def frozen(array: NDArray[Any]) -> NDArray[Any]:
    """Return ``array`` made read-only (a copy is not taken)."""
    array.setflags(write=False)
    return array


def as_finite_vector(
    values: Any, field: str, error: type[CurvewrightError], *, item: str = "standard"
) -> FloatArray:
    """Convert ``values`` to a 1-D float array, refusing text, NaN and infinity.

    The message names the field and the 1-based position of the first bad value, because that is
    how an analyst finds the row in their table.
    """
    try:
        array = np.array(values, dtype=np.float64, ndmin=1)
    except (TypeError, ValueError) as exc:
        raise error(f"{field}: every value must be a number ({exc}).") from None
    if array.ndim != 1:
        raise error(f"{field}: expected a single column of numbers, got shape {array.shape}.")
    finite = np.isfinite(array)
    if not finite.all():
        bad = np.flatnonzero(~finite)
        first = int(bad[0])
        raise error(
            f"{field}: {item} {first + 1} is {float(array[first])!r}; every value must be a finite number"
            + (f" ({bad.size} such values in all)." if bad.size > 1 else ".")
        )
    return array


def as_confidence_level(level: object, error: type[CurvewrightError]) -> float:
    """Check a confidence level (0.95 = 95 %): a number strictly between 0 and 1, never text or a bool."""
    if isinstance(level, (bool, np.bool_)) or not isinstance(level, (int, float, np.integer, np.floating)):
        raise error(
            f"confidence level: {level!r} is not a number; give a fraction between 0 and 1 such as 0.95."
        )
    value = float(level)
    if not (0.0 < value < 1.0):
        raise error(f"confidence level: {level!r} must lie between 0 and 1 (e.g. 0.95).")
    return value


def as_whole_count(value: object, field: str, error: type[CurvewrightError], what: str) -> int:
    """Check a count such as a number of replicates: a whole number of at least 1."""
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise error(f"{field}: {value!r} is not a number; {what} is a whole number of at least 1.")
    number = float(value)
    if not (np.isfinite(number) and number >= 1 and number == round(number)):
        raise error(f"{field}: {value!r}; {what} is a whole number of at least 1.")
    return int(number)
