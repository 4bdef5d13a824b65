"""Decimals for a value judged against acceptance limits (a recovery, a %RE).

A recovery or a relative error is shown with its usual decimals (one, for a percentage). The verdict
is decided by the unrounded value (a value within ``BOUNDARY`` of a limit counts as on it, and on it
passes). Rounded to the usual decimals, a value just past a limit can read as the limit itself
(115.01 % shown "115.0" beside FAIL) and one just inside can read as the limit (114.99 % shown
"115.0" beside pass). Where that happens the value is shown with as many more decimals as needed,
up to ``MOST_MORE`` more, to show which side of the limit it lies on: 115.01 FAIL, 114.99 pass,
while exactly 115.000 stays "115.0".

The side is read from the text the value is printed as (``f"{value:.{d}f}"``), so the decision
holds for what the reader sees.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

BOUNDARY = 1e-9
"""The tolerance, in the units of the limit (percentage points), within which every verdict of the
program takes a value as on a limit: the standards' and the QC samples' (core.acceptance, core.checks,
core.run_analysis) and the decimals shown beside them here. Defined once, so that they cannot disagree."""
MOST_MORE = 4


def _side(value: float, limit: float) -> int:
    """-1 below ``limit``, 0 on it (within ``BOUNDARY``), +1 above."""
    if abs(value - limit) <= BOUNDARY:
        return 0
    return 1 if value > limit else -1


def decimals_beside_limits(value: float, usual: int, limits: Iterable[float], most_more: int = MOST_MORE) -> int:
    """The decimals to show ``value`` with: ``usual``, or more (at most ``usual + most_more``) where
    the value printed with ``usual`` decimals would land on or across one of ``limits`` while the
    unrounded value lies on the other side of it (or on it while the printed one does not)."""
    limits = tuple(float(x) for x in limits)
    if not math.isfinite(value) or not limits:
        return usual
    for decimals in range(usual, usual + most_more + 1):
        shown = float(f"{value:.{decimals}f}")
        if all(_side(shown, limit) == _side(value, limit) for limit in limits):
            return decimals
    return usual + most_more


def recovery_decimals(recovery_percent: float, window_percent: float | None, usual: int = 1) -> int:
    """Decimals for a recovery (%) judged within 100 ± ``window_percent`` (None: not judged)."""
    if window_percent is None:
        return usual
    return decimals_beside_limits(recovery_percent, usual, (100.0 - window_percent, 100.0 + window_percent))


def relative_error_decimals(relative_error_percent: float, tolerance_percent: float | None, usual: int = 1) -> int:
    """Decimals for a relative error (%RE, %) judged within ± ``tolerance_percent`` (None: not judged)."""
    if tolerance_percent is None:
        return usual
    return decimals_beside_limits(relative_error_percent, usual, (-tolerance_percent, tolerance_percent))
