"""The decimals a recovery or %RE takes beside its verdict (:mod:`curvewright.core.limit_digits`):
the project's display rule, checked on values placed at and around the limits."""

from __future__ import annotations

import pytest

from curvewright.core.limit_digits import decimals_beside_limits, recovery_decimals, relative_error_decimals


@pytest.mark.parametrize("value, shown", [
    (115.0, "115.0"), (115.00000000000013, "115.0"),  # on the limit (within the verdicts' 1e-9): passes, stays
    (115.0100000000001, "115.01"), (114.99, "114.99"), (115.04, "115.04"), (114.96, "114.96"),
    (115.06, "115.1"), (114.94, "114.9"),  # one decimal already shows the side
    (84.99, "84.99"), (85.0, "85.0"), (100.0, "100.0"),
    (115.00002, "115.00002"), (115.000001, "115.00000"),  # at most four more decimals
])
def test_recovery_against_100_plus_or_minus_15(value: float, shown: str) -> None:
    assert f"{value:.{recovery_decimals(value, 15.0)}f}" == shown


def test_relative_error_and_no_window() -> None:
    assert relative_error_decimals(14.999, 15.0) == 3 and relative_error_decimals(-15.01, 15.0) == 2
    assert relative_error_decimals(-15.01, 15.0, usual=2) == 2
    assert recovery_decimals(115.01, None) == 1 and relative_error_decimals(15.01, None) == 1
    assert decimals_beside_limits(float("nan"), 1, (85.0, 115.0)) == 1
