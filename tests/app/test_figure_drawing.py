"""The record's figures drawn with QPainter: lines that run off a plot are cut at its edge on the line
itself, axes take "nice" ticks with labels that read as the numbers they stand at, and markers have
the shapes the legend shows."""

from __future__ import annotations

import math

import numpy as np
import pytest

from curvewright.app.record_figures import (clip_polyline, decade_ticks, linear_tick_levels, marker_path, tick_text,
                                            tick_values)


def test_a_segment_is_cut_where_it_crosses_the_box() -> None:
    # the diagonal y = x from (0, 0) to (2, 2) leaves the unit square at (1, 1) (elementary geometry)
    x, y = clip_polyline(np.array([0.0, 2.0]), np.array([0.0, 2.0]), (0.0, 1.0, 0.0, 1.0))
    assert np.allclose(x, [0.0, 1.0]) and np.allclose(y, [0.0, 1.0])


def test_parts_outside_are_dropped_and_the_parts_inside_kept_apart() -> None:
    # a line along y = 0.5 that leaves the box [0, 1] × [0, 1] upwards between x = 1 and x = 2 and
    # comes back between x = 3 and x = 4: two parts, separated by NaN
    x = np.array([0.5, 1.0, 2.0, 3.0, 4.0, 4.5])
    y = np.array([0.5, 0.5, 3.0, 3.0, 0.5, 0.5])
    cx, cy = clip_polyline(x, y, (0.0, 5.0, 0.0, 1.0))
    gap = np.flatnonzero(np.isnan(cx))
    assert gap.size == 1
    first, second = slice(0, gap[0]), slice(gap[0] + 1, None)
    # the rise from (1, 0.5) to (2, 3) crosses y = 1 at x = 1 + 0.5/2.5 = 1.2; the fall from (3, 3) to
    # (4, 0.5) at x = 3 + 2/2.5 = 3.8
    assert np.allclose(cx[first], [0.5, 1.0, 1.2]) and np.allclose(cy[first], [0.5, 0.5, 1.0])
    assert np.allclose(cx[second], [3.8, 4.0, 4.5]) and np.allclose(cy[second], [1.0, 0.5, 0.5])


def test_points_that_are_not_finite_break_the_line() -> None:
    x, y = clip_polyline(np.array([0.0, 0.5, 1.0]), np.array([0.2, np.nan, 0.2]), (0.0, 1.0, 0.0, 1.0))
    assert x.size == 0 and y.size == 0


def test_a_segment_along_an_edge_outside_the_box_is_dropped() -> None:
    # the horizontal segment y = 2 lies wholly above the unit square: nothing of it is inside
    x, y = clip_polyline(np.array([0.0, 1.0]), np.array([2.0, 2.0]), (0.0, 1.0, 0.0, 1.0))
    assert x.size == 0 and y.size == 0


@pytest.mark.parametrize(("low", "high", "pixels"), [(-0.7, 9.3, 1250.0), (-0.15, 1.85, 700.0), (0.0, 1.0, 300.0),
                                                     (-812.0, 12_950.0, 900.0), (3.2e-5, 4.1e-4, 1100.0),
                                                     (-31.0, 31.0, 600.0), (0.046, 0.61, 1250.0)])
def test_linear_ticks_are_nice_numbers_leaving_enough_intervals(low: float, high: float, pixels: float) -> None:
    major, minor = linear_tick_levels(low, high, pixels)
    # "nice" steps: 1, 2 or 5 times a power of ten (common practice for axis labels)
    for step in (major, minor):
        mantissa = step / 10.0 ** math.floor(math.log10(step) + 1e-9)
        assert any(math.isclose(mantissa, m, rel_tol=1e-9) for m in (1.0, 2.0, 5.0)), step
    # the major step leaves at least 2.25·√(pixels/300) intervals (at least 2.25) on the axis, and is the
    # largest nice step that does: the next one up would leave too few
    wanted = max(2.25, 2.25 * math.sqrt(pixels / 300))
    assert (high - low) / major >= wanted - 1e-9
    mantissa = major / 10.0 ** math.floor(math.log10(major) + 1e-9)
    bigger = major * {1: 2.0, 2: 2.5, 5: 2.0}[round(mantissa)]
    assert (high - low) / bigger < wanted
    # a minor step divides the major one, and its ticks are no closer than two pixels
    assert math.isclose(major / minor, round(major / minor), rel_tol=1e-9) and major / minor in (2, 5, 10)
    assert minor >= 2 * (high - low) / pixels
    values = tick_values(low, high, major)
    assert values[0] >= low - 1e-12 and values[-1] <= high + 1e-12 and values[0] - major < low


def test_the_steps_chosen_for_a_familiar_axis() -> None:
    # a concentration axis from -0.7 to 9.3 over 1,250 pixels: 4.6 intervals wanted, so a step of 2 (5
    # intervals), with minor ticks every 1; a response axis from -0.15 to 1.85 over 700 pixels: 3.4
    # intervals wanted, a step of 0.5 (4 intervals) and minor ticks every 0.1 (worked by hand from the
    # rule in the docstring)
    assert linear_tick_levels(-0.7, 9.3, 1250.0) == pytest.approx([2.0, 1.0])
    assert linear_tick_levels(-0.15, 1.85, 700.0) == pytest.approx([0.5, 0.1])
    assert list(tick_values(-0.7, 9.3, 2.0)) == pytest.approx([0.0, 2.0, 4.0, 6.0, 8.0])


@pytest.mark.parametrize(("value", "spacing", "text"), [(0.0, 0.5, "0"), (1.5, 0.5, "1.5"), (1.0, 0.5, "1.0"),
                                                        (-20.0, 10.0, "-20"), (12000.0, 2000.0, "12000"),
                                                        (0.25, 0.05, "0.25"), (0.0004, 0.0001, "0.0004"),
                                                        (0.2, 0.1, "0.2"), (25000.0, 5000.0, "25000")])
def test_tick_labels_read_as_the_values_they_stand_at(value: float, spacing: float, text: str) -> None:
    assert tick_text(value, spacing) == text
    assert float(text) == pytest.approx(value, abs=spacing * 1e-6)


def test_log_axes_are_labelled_at_powers_of_ten() -> None:
    # log10 from 0.9 mg/L to 6000 mg/L (log10: -0.046 to 3.78): labels 1, 10, 100, 1000; unlabelled ticks
    # at 2…9 times each power of ten inside the axis: 0.9, then 2…9, 20…90, 200…900, then 2000…6000
    major, minor = decade_ticks(math.log10(0.9), math.log10(6000))
    assert [t for _, t in major] == ["1", "10", "100", "1000"]
    assert [v for v, _ in major] == [0.0, 1.0, 2.0, 3.0]
    assert min(minor) == pytest.approx(math.log10(0.9)) and max(minor) == pytest.approx(math.log10(6000))
    assert math.log10(2) in minor and len(minor) == 1 + 8 * 3 + 5


@pytest.mark.parametrize("shape", ["circle", "square", "diamond", "triangle", "star", "hexagon"])
def test_markers_are_centred_and_as_wide_as_asked(shape: str) -> None:
    # every shape fits the size asked and fills at least 75 % of it each way (an equilateral triangle in
    # a circle of diameter 24 is 20.8 wide and 18 high)
    box = marker_path(shape, 24.0).boundingRect()
    assert 18.0 <= box.width() <= 24.0 + 1e-9 and 18.0 <= box.height() <= 24.0 + 1e-9
    assert abs(box.center().x()) < 1.5 and abs(box.center().y()) < 3.5
    with pytest.raises(ValueError, match="not one of the record's shapes"):
        marker_path("pentagram", 24.0)
