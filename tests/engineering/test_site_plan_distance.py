"""How far a point lies off a roof outline (compliance.engineering.site_plan.distance_outside).

Each expected distance is plane geometry worked by hand (Pythagoras; common practice, no
source)."""

import math

import pytest

from compliance.engineering.site_plan import distance_outside

RECTANGLE = [[0, 0], [32, 0], [32, 24], [0, 24]]
L_SHAPE = [[0, 0], [40, 0], [40, 10], [10, 10], [10, 40], [0, 40]]


@pytest.mark.parametrize(
    ("outline", "point", "expected"),
    [
        (RECTANGLE, (16, 12), 0.0),  # inside
        (RECTANGLE, (32, 10), 0.0),  # on an edge
        (RECTANGLE, (36.9, 12), 4.9),  # beyond the east edge
        (RECTANGLE, (36.9, 28.9), math.hypot(4.9, 4.9)),  # beyond a corner: 6.93 m
        (L_SHAPE, (30, 30), 20.0),  # in the notch: 20 m above the inner edge y = 10
        (L_SHAPE, (5, 35), 0.0),
    ],
)
def test_distance_outside_a_roof_outline(outline, point, expected):
    assert distance_outside(outline, point) == pytest.approx(expected)


def test_no_outline_has_no_distance():
    assert distance_outside([[0, 0], [1, 0]], (5, 5)) is None
