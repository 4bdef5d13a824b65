"""Figures drawn for the record: lines that run off a plot are cut at its edge on the line itself."""

from __future__ import annotations

import numpy as np

from curvewright.app.figures import _clip_polyline


def test_a_segment_is_cut_where_it_crosses_the_box() -> None:
    # the diagonal y = x from (0, 0) to (2, 2) leaves the unit square at (1, 1) (elementary geometry)
    x, y = _clip_polyline(np.array([0.0, 2.0]), np.array([0.0, 2.0]), (0.0, 1.0, 0.0, 1.0))
    assert np.allclose(x, [0.0, 1.0]) and np.allclose(y, [0.0, 1.0])


def test_parts_outside_are_dropped_and_the_parts_inside_kept_apart() -> None:
    # a line along y = 0.5 that leaves the box [0, 1] × [0, 1] upwards between x = 1 and x = 2 and
    # comes back between x = 3 and x = 4: two parts, separated by NaN
    x = np.array([0.5, 1.0, 2.0, 3.0, 4.0, 4.5])
    y = np.array([0.5, 0.5, 3.0, 3.0, 0.5, 0.5])
    cx, cy = _clip_polyline(x, y, (0.0, 5.0, 0.0, 1.0))
    gap = np.flatnonzero(np.isnan(cx))
    assert gap.size == 1
    first, second = slice(0, gap[0]), slice(gap[0] + 1, None)
    # the rise from (1, 0.5) to (2, 3) crosses y = 1 at x = 1 + 0.5/2.5 = 1.2; the fall from (3, 3) to
    # (4, 0.5) at x = 3 + 2/2.5 = 3.8
    assert np.allclose(cx[first], [0.5, 1.0, 1.2]) and np.allclose(cy[first], [0.5, 0.5, 1.0])
    assert np.allclose(cx[second], [3.8, 4.0, 4.5]) and np.allclose(cy[second], [1.0, 0.5, 0.5])


def test_points_that_are_not_finite_break_the_line() -> None:
    x, y = _clip_polyline(np.array([0.0, 0.5, 1.0]), np.array([0.2, np.nan, 0.2]), (0.0, 1.0, 0.0, 1.0))
    assert x.size == 0 and y.size == 0
