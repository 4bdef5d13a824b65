"""Shared test helpers: reference data and the accuracy score used against certified values."""

from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np
import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

REFERENCE_DATA = Path(__file__).parent / "reference_data"


def load_strd(name: str) -> tuple[np.ndarray, np.ndarray]:
    """x and y of a NIST StRD file kept in tests/reference_data (certified values in its header)."""
    rows = [line for line in (REFERENCE_DATA / name).read_text().splitlines() if line and not line.startswith("#")]
    data = np.array([[float(v) for v in row.split(",")] for row in rows[1:]])
    return data[:, 0], data[:, 1]


def lre(estimate: float, certified: float) -> float:
    """Log relative error, −log10(|est − cert|/|cert|) (McCullough 1998, Am. Stat. 52:358); 15.9 when equal."""
    if estimate == certified:
        return 15.9
    return -math.log10(abs(estimate - certified) / abs(certified))


@pytest.fixture
def fluorescence() -> tuple[np.ndarray, np.ndarray]:
    """Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, ch. 5 fluorescence
    example (values from memory; recomputation agrees with every printed digit)."""
    return np.array([0, 2, 4, 6, 8, 10, 12.0]), np.array([2.1, 5.0, 9.0, 12.6, 17.3, 21.0, 24.7])
