"""Height-velocity avoid-region check against plain geometry."""

import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from server.compute.hv import in_avoid_region, point_in_polygon

SQUARE = [(0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0)]
# A "U": two arms joined at the bottom, the notch between x = 4..6 above y = 4 is outside.
U_SHAPE = [(0, 0), (10, 0), (10, 10), (6, 10), (6, 4), (4, 4), (4, 10), (0, 10)]


@pytest.mark.parametrize(
    ("point", "inside"),
    [
        ((5.0, 5.0), True),
        ((0.1, 9.9), True),
        ((15.0, 5.0), False),
        ((-0.1, 5.0), False),
        ((5.0, 10.1), False),
        ((0.0, 5.0), True),  # on an edge counts as inside
        ((10.0, 10.0), True),  # on a corner counts as inside
        ((5.0, 0.0), True),
    ],
)
def test_square(point, inside):
    # Plain geometry: a square is its bounds, edges included.
    assert point_in_polygon(*point, SQUARE) is inside


@pytest.mark.parametrize(
    ("point", "inside"),
    [
        ((2.0, 8.0), True),  # left arm
        ((8.0, 8.0), True),  # right arm
        ((5.0, 2.0), True),  # the bottom that joins them
        ((5.0, 8.0), False),  # the notch
        ((5.0, 4.0), True),  # the notch's floor is an edge
        ((4.0, 7.0), True),  # the notch's wall is an edge
        ((5.0, 10.0), False),  # level with the arms' tops but in the notch's mouth
    ],
)
def test_concave_polygon(point, inside):
    # Plain geometry: a U-shaped (concave) region; the ray crosses the notch walls.
    assert point_in_polygon(*point, U_SHAPE) is inside


def test_corner_order_does_not_matter():
    # Plain geometry: clockwise and counter-clockwise lists describe the same region.
    reversed_u = list(reversed(U_SHAPE))
    for point in [(2, 8), (5, 8), (5, 2), (11, 5)]:
        assert point_in_polygon(*point, reversed_u) == point_in_polygon(*point, U_SHAPE)


coords = st.floats(min_value=-50, max_value=50, allow_nan=False)


@given(x=coords, y=coords, x0=coords, y0=coords, width=st.floats(1, 40), height=st.floats(1, 40))
def test_rectangle_matches_its_bounds(x, y, x0, y0, width, height):
    # Plain geometry: inside a rectangle exactly when within its bounds (edges included).
    rectangle = [(x0, y0), (x0 + width, y0), (x0 + width, y0 + height), (x0, y0 + height)]
    # Points a hair off an edge are within the module's rounding slack; exactly on it counts as inside.
    gaps = (x - x0, x - x0 - width, y - y0, y - y0 - height)
    assume(not any(0 < abs(gap) < 1e-6 for gap in gaps))
    expected = x0 <= x <= x0 + width and y0 <= y <= y0 + height
    assert point_in_polygon(x, y, rectangle) is expected


def _side(p, a, b):
    return (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0])


points = st.tuples(coords, coords)


@given(x=coords, y=coords, a=points, b=points, c=points)
def test_triangle_matches_the_half_plane_test(x, y, a, b, c):
    # Plain geometry: a point is inside a triangle when it is on the same side of all three edges.
    area2 = _side(c, a, b)
    assume(abs(area2) > 1.0)  # a real triangle, not three points in a line
    sides = [_side((x, y), a, b), _side((x, y), b, c), _side((x, y), c, a)]
    assume(all(abs(s) > 1e-3 for s in sides))  # keep clear of the edges, where rounding decides
    expected = all(s > 0 for s in sides) or all(s < 0 for s in sides)
    assert point_in_polygon(x, y, [a, b, c]) is expected


# An avoid region shaped like the low-speed part of a light helicopter's HV diagram (invented figures).
LOW_SPEED_REGION = [(0, 30), (25, 30), (40, 150), (25, 450), (0, 450)]
LOW_HOVER_REGION = [(0, 0), (10, 0), (10, 15), (0, 15)]


def test_entry_in_any_region_is_inside():
    regions = [LOW_SPEED_REGION, LOW_HOVER_REGION]
    assert in_avoid_region(10.0, 300.0, regions)  # slow and at a few hundred feet
    assert in_avoid_region(5.0, 10.0, regions)
    assert not in_avoid_region(65.0, 500.0, regions)  # a normal autorotation entry speed and height
    assert not in_avoid_region(10.0, 20.0, regions)  # between the two regions


def test_no_region_means_never_inside():
    assert not in_avoid_region(0.0, 100.0, [])


def test_a_region_needs_three_corners():
    with pytest.raises(ValueError, match="three corners"):
        point_in_polygon(1.0, 1.0, [(0.0, 0.0), (2.0, 2.0)])
