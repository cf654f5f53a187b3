"""Avoid regions typed as text: one "KIAS, ft" point a line, a blank line between regions."""
import math
import re

Polygon = list[tuple[float, float]]

KIAS_RANGE = (0.0, 200.0)
HEIGHT_RANGE_FT = (0.0, 10_000.0)
EXAMPLE = "40, 100"
_SEPARATOR = re.compile(r"\s*[,;]\s*|\s+")


class RegionTextError(ValueError):
    """Text that does not describe avoid regions; the message names the line and the fix."""


def _number(text: str, line_no: int, what: str, bounds: tuple[float, float], unit: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise RegionTextError(f"Line {line_no}: '{text}' is not a number of {unit}.") from None
    if not math.isfinite(value) or not bounds[0] <= value <= bounds[1]:
        raise RegionTextError(
            f"Line {line_no}: the {what} {text} is outside {bounds[0]:g} to {bounds[1]:g} {unit}.")
    return value


def _point(line: str, line_no: int) -> tuple[float, float]:
    parts = [p for p in _SEPARATOR.split(line.strip()) if p]
    if len(parts) != 2:
        raise RegionTextError(
            f"Line {line_no}: write one point as 'KIAS, ft AGL', for example '{EXAMPLE}' (got '{line.strip()}').")
    return (_number(parts[0], line_no, "airspeed", KIAS_RANGE, "KIAS"),
            _number(parts[1], line_no, "height", HEIGHT_RANGE_FT, "ft AGL"))


def parse_regions(text: str | None) -> list[Polygon]:
    """Polygons from the text; empty text means the type has no avoid region."""
    regions: list[Polygon] = [[]]
    for line_no, line in enumerate((text or "").splitlines(), start=1):
        if not line.strip():
            if regions[-1]:
                regions.append([])
            continue
        regions[-1].append(_point(line, line_no))
    regions = [r for r in regions if r]
    for number, region in enumerate(regions, start=1):
        if len(region) < 3:
            raise RegionTextError(
                f"Avoid region {number} has {len(region)} point{'s' if len(region) != 1 else ''}; "
                "a region needs at least 3 corners. Separate regions with one empty line.")
    return regions


def format_regions(polygons: list) -> str:
    """The text a person would type for these polygons, so an edit form starts from it."""
    def num(value: float) -> str:
        return f"{value:g}"
    return "\n\n".join("\n".join(f"{num(k)}, {num(h)}" for k, h in polygon) for polygon in polygons or [])
