"""Where a drop stands on its facade, from the roof plan: the edge of the roof outline nearest
its anchor, the distance along that edge to the nearer corner, and the building's depth at
right angles to it (EN 1991-1-4 7.2.2 takes its zones from these for wind along the facade)."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass


@dataclass(frozen=True)
class FacadePosition:
    corner_distance_m: float
    facade_length_m: float
    building_depth_m: float


def facade_position(
    outline: Sequence[Sequence[float]], point: Sequence[float]
) -> FacadePosition | None:
    """The drop's place on the outline's nearest edge; None for an outline of under three
    corners or with edges of no length (no plan to measure from)."""
    corners = [(float(p[0]), float(p[1])) for p in outline]
    if len(corners) < 3:
        return None
    px, py = float(point[0]), float(point[1])
    best: tuple[float, float, float, int] | None = None
    for i, (ax, ay) in enumerate(corners):
        bx, by = corners[(i + 1) % len(corners)]
        length = math.hypot(bx - ax, by - ay)
        if length == 0.0:
            return None
        t = ((px - ax) * (bx - ax) + (py - ay) * (by - ay)) / (length * length)
        t = min(max(t, 0.0), 1.0)
        gap = math.hypot(px - (ax + t * (bx - ax)), py - (ay + t * (by - ay)))
        if best is None or gap < best[0]:
            best = (gap, t * length, length, i)
    if best is None:
        return None
    _, along, length, i = best
    (ax, ay), (bx, by) = corners[i], corners[(i + 1) % len(corners)]
    nx, ny = -(by - ay) / length, (bx - ax) / length
    depth = max(abs((cx - ax) * nx + (cy - ay) * ny) for cx, cy in corners)
    return FacadePosition(
        corner_distance_m=min(along, length - along),
        facade_length_m=length,
        building_depth_m=depth,
    )


def distance_outside(outline: Sequence[Sequence[float]], point: Sequence[float]) -> float | None:
    """How far `point` lies outside the outline, in metres (0 on or inside it); None for an
    outline of under three corners. Inside by the even-odd rule, so a point in the notch of an
    L-shaped roof is outside it."""
    corners = [(float(p[0]), float(p[1])) for p in outline]
    if len(corners) < 3:
        return None
    px, py = float(point[0]), float(point[1])
    inside = False
    nearest = math.inf
    for i, (ax, ay) in enumerate(corners):
        bx, by = corners[(i + 1) % len(corners)]
        if (ay > py) != (by > py) and px < ax + (py - ay) * (bx - ax) / (by - ay):
            inside = not inside
        dx, dy = bx - ax, by - ay
        span = dx * dx + dy * dy
        t = 0.0 if span == 0.0 else min(max(((px - ax) * dx + (py - ay) * dy) / span, 0.0), 1.0)
        nearest = min(nearest, math.hypot(px - (ax + t * dx), py - (ay + t * dy)))
    return 0.0 if inside or nearest == 0.0 else nearest
