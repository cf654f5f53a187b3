"""Height-velocity check: is an entry point inside a type's avoid region."""

import math

Polygon = list[tuple[float, float]]

# Relative slack for "on the boundary", so that typed figures on an edge count as inside.
_EDGE_TOLERANCE = 1e-9


def _check_polygon(polygon: Polygon) -> None:
    if len(polygon) < 3:
        raise ValueError("An avoid region needs at least three corners of (KIAS, height ft).")
    for x, y in polygon:
        if not (math.isfinite(x) and math.isfinite(y)):
            raise ValueError("Every corner of an avoid region must be a pair of numbers.")


def _on_segment(x: float, y: float, a: tuple[float, float], b: tuple[float, float]) -> bool:
    (ax, ay), (bx, by) = a, b
    cross = (bx - ax) * (y - ay) - (by - ay) * (x - ax)
    scale = max(abs(bx - ax), abs(by - ay), 1.0)
    if abs(cross) > _EDGE_TOLERANCE * scale * scale:
        return False
    slack = _EDGE_TOLERANCE * scale
    return (
        min(ax, bx) - slack <= x <= max(ax, bx) + slack
        and min(ay, by) - slack <= y <= max(ay, by) + slack
    )


def point_in_polygon(x: float, y: float, polygon: Polygon) -> bool:
    """Ray casting (even-odd rule); a point on an edge or corner counts as inside."""
    _check_polygon(polygon)
    corners = list(polygon)
    inside = False
    for i, a in enumerate(corners):
        b = corners[i - 1]
        if _on_segment(x, y, a, b):
            return True
        (ax, ay), (bx, by) = a, b
        # Count edges crossed by a ray going right; half-open in y so a corner counts once.
        if (ay > y) != (by > y):
            x_cross = ax + (y - ay) * (bx - ax) / (by - ay)
            if x < x_cross:
                inside = not inside
    return inside


def in_avoid_region(kias: float, height_ft: float, polygons: list[Polygon]) -> bool:
    """True when (KIAS, height AGL) lies inside any of the type's height-velocity avoid regions."""
    if not (math.isfinite(kias) and math.isfinite(height_ft)):
        raise ValueError("The entry airspeed and height must be numbers.")
    return any(point_in_polygon(kias, height_ft, polygon) for polygon in polygons)
