"""The range, LOQ and LOD flags of each estimate, read from a table in one pass, are the flags the
definitions give one unknown at a time: below the lowest standard, else above the highest, else in
range; below the LOQ and below the LOD besides (strictly below, so a value at a limit is not below it)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pytest

from curvewright.core.inverse import QuantFlag, _range_bits


@dataclass(frozen=True)
class Limits:
    lod: float
    loq: float | None


def one_at_a_time(x: float, low: float, high: float, limits: Limits | None) -> int:
    flag = QuantFlag.BELOW_RANGE if x < low else QuantFlag.ABOVE_RANGE if x > high else QuantFlag.IN_RANGE
    if limits is not None:
        if limits.loq is not None and x < limits.loq:
            flag |= QuantFlag.BELOW_LOQ
        if x < limits.lod:
            flag |= QuantFlag.BELOW_LOD
    return int(flag)


@pytest.mark.parametrize("limits", [None, Limits(0.3, None), Limits(0.3, 1.0), Limits(2.0, 6.0), Limits(-1.0, 0.5)],
                         ids=["no limits", "no LOQ", "limits below the range", "limits inside the range",
                              "limits below zero"])
def test_flags_from_the_table_are_the_definitions(limits: Limits | None) -> None:
    low, high = 0.5, 50.0
    rng = np.random.default_rng(3)
    edges = [low, high, 0.3, 1.0, 2.0, 6.0, -1.0]
    x = np.concatenate([
        rng.uniform(-5.0, 80.0, 5000),
        edges, np.nextafter(edges, np.inf), np.nextafter(edges, -np.inf),
        [np.nan, np.inf, -np.inf, 0.0, -0.0],
    ])
    bits = _range_bits(x, low, high, limits)
    assert bits.dtype == np.int64 and bits.shape == x.shape
    assert bits.tolist() == [one_at_a_time(float(v), low, high, limits) for v in x]
