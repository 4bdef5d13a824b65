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
    bad = np.flatnonzero(~np.isfinite(array))
    if bad.size:
        first = int(bad[0])
        raise error(
            f"{field}: {item} {first + 1} is {float(array[first])!r}; every value must be a finite number"
            + (f" ({bad.size} such values in all)." if bad.size > 1 else ".")
        )
    return array
