"""estimated_length at its edges: degenerate, flat and non-finite bounding boxes (common practice: the
characteristic length of n equal cells filling a box of measure V in d dimensions is (V / n)^(1/d))."""
import math

import pytest

from linter.physics import dynamics as D


def test_box_measured_between_its_corners():
    assert D.estimated_length((1.0, 1.0, 1.0), (3.0, 3.0, 3.0), 8) == pytest.approx(1.0)
    assert D.estimated_length((3.0, 3.0, 3.0), (1.0, 1.0, 1.0), 1) == pytest.approx(2.0)


def test_unknown_or_empty_gives_none():
    assert D.estimated_length(None, (1.0, 1.0, 1.0), 1) is None
    assert D.estimated_length((0.0, 0.0, 0.0), None, 1) is None
    assert D.estimated_length((0.0, 0.0, 0.0), (1.0, 1.0, 1.0), 0) is None
    assert D.estimated_length((0.0, 0.0, 0.0), (1.0, 1.0, 1.0), -3) is None
    assert D.estimated_length((0.0, 0.0, 0.0), (0.0, 0.0, 0.0), 5) is None           # a point
    assert D.estimated_length((0.0, 0.0, 0.0), (math.inf, 1.0, 1.0), 5) is None
    assert D.estimated_length((0.0, 0.0, math.nan), (1.0, 1.0, 1.0), 5) is None


def test_small_box_is_still_a_box():
    assert D.estimated_length((0.0, 0.0, 0.0), (0.5, 0.5, 0.5), 1) == pytest.approx(0.5)


def test_flat_dimension_is_dropped_below_one_billionth():
    # an extent of at most 1e-9 of the largest is a flat dimension: a plate of 2 x 2 in 4 cells has length 1
    assert D.estimated_length((0.0, 0.0, 0.0), (2.0, 2e-9, 2.0), 4) == pytest.approx(1.0)
    # just above it the box counts as 3D: (2 * 3e-9 * 2 / 4)^(1/3)
    assert D.estimated_length((0.0, 0.0, 0.0), (2.0, 3e-9, 2.0), 4) == pytest.approx((3e-9) ** (1 / 3))
