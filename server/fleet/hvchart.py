"""The height-velocity chart as SVG, drawn from plain data (no web or database imports)."""
import math
import xml.etree.ElementTree as ET
from dataclasses import dataclass

Point = tuple[float, float]

WIDTH, HEIGHT = 640, 430
LEFT, RIGHT, TOP, BOTTOM = 76, 24, 20, 96  # room for the axis titles and the legend
INK, MUTED, GRID, AVOID, ENTRY = "#15191d", "#4a535c", "#d9dee2", "#a3231b", "#0a5f8a"


@dataclass(frozen=True)
class Entry:
    """One attempt's entry point: its sequence in the sortie, airspeed, height and verdict."""

    sequence: int
    kias: float
    height_ft: float
    inside: bool


@dataclass(frozen=True)
class Axes:
    """The chart's ranges and tick steps, in KIAS and ft AGL."""

    kias_max: float
    kias_step: float
    height_max: float
    height_step: float

    def x(self, kias: float) -> float:
        return round(LEFT + (WIDTH - LEFT - RIGHT) * kias / self.kias_max, 1)

    def y(self, height_ft: float) -> float:
        return round(HEIGHT - BOTTOM - (HEIGHT - TOP - BOTTOM) * height_ft / self.height_max, 1)


def nice_step(span: float, ticks: int = 8) -> float:
    """A round tick step (1, 2 or 5 times a power of ten) giving about `ticks` intervals."""
    raw = max(span, 1e-9) / ticks
    power = 10 ** math.floor(math.log10(raw))
    return next(m * power for m in (1, 2, 5, 10) if m * power >= raw)


def axes_for(polygons: list[list[Point]], entries: list[Entry]) -> Axes:
    """Ranges that show every corner and entry, starting at zero, never smaller than a light type needs."""
    kias = [p[0] for poly in polygons for p in poly] + [e.kias for e in entries] + [80.0]
    heights = [p[1] for poly in polygons for p in poly] + [e.height_ft for e in entries] + [500.0]
    kias_step, height_step = nice_step(max(kias) * 1.1), nice_step(max(heights) * 1.1)
    return Axes(kias_max=math.ceil(max(kias) * 1.1 / kias_step) * kias_step, kias_step=kias_step,
                height_max=math.ceil(max(heights) * 1.1 / height_step) * height_step, height_step=height_step)


def _fmt(value: float) -> str:
    return f"{value:.1f}".rstrip("0").rstrip(".")


def _el(parent: ET.Element, tag: str, text: str | None = None, **attrs) -> ET.Element:
    element = ET.SubElement(parent, tag, {k.rstrip("_").replace("_", "-"): str(v) for k, v in attrs.items()})
    element.text = text
    return element


def summary(designation: str, polygons: list[list[Point]], entries: list[Entry]) -> str:
    """The chart in words, for screen readers and for anyone who prefers text."""
    regions = "; ".join(
        f"avoid region {i} has corners at " + ", ".join(f"{_fmt(k)} KIAS and {_fmt(h)} ft AGL" for k, h in poly)
        for i, poly in enumerate(polygons, start=1)
    ) or "no avoid region entered"
    text = f"Height-velocity chart of the {designation}: {regions}."
    if entries:
        inside = [e for e in entries if e.inside]
        text += f" {len(entries)} attempt entr{'y' if len(entries) == 1 else 'ies'} plotted"
        text += f", {len(inside)} inside the avoid region" + (
            " (attempt " + ", ".join(f"#{e.sequence}" for e in inside) + ")." if inside else ".")
    return text


def _grid_and_axes(svg: ET.Element, axes: Axes) -> None:
    group = _el(svg, "g", font_size=13, fill=MUTED, font_family="sans-serif")
    steps = int(round(axes.kias_max / axes.kias_step))
    for i in range(steps + 1):
        x = axes.x(i * axes.kias_step)
        _el(group, "line", x1=x, x2=x, y1=axes.y(0), y2=axes.y(axes.height_max), stroke=GRID)
        _el(group, "text", _fmt(i * axes.kias_step), x=x, y=axes.y(0) + 18, text_anchor="middle")
    steps = int(round(axes.height_max / axes.height_step))
    for i in range(steps + 1):
        y = axes.y(i * axes.height_step)
        _el(group, "line", x1=axes.x(0), x2=axes.x(axes.kias_max), y1=y, y2=y, stroke=GRID)
        _el(group, "text", _fmt(i * axes.height_step), x=LEFT - 8, y=y + 4, text_anchor="end")
    _el(group, "line", x1=LEFT, x2=axes.x(axes.kias_max), y1=axes.y(0), y2=axes.y(0), stroke=INK, stroke_width=2)
    _el(group, "line", x1=LEFT, x2=LEFT, y1=axes.y(0), y2=TOP, stroke=INK, stroke_width=2)
    _el(group, "text", "Indicated airspeed (KIAS)", x=(LEFT + WIDTH - RIGHT) / 2, y=axes.y(0) + 40,
        text_anchor="middle", fill=INK, font_size=14)
    mid = (TOP + axes.y(0)) / 2
    _el(group, "text", "Height above ground (ft AGL)", x=18, y=mid, text_anchor="middle", fill=INK,
        font_size=14, transform=f"rotate(-90 18 {mid})")


def _regions(svg: ET.Element, axes: Axes, polygons: list[list[Point]], prefix: str) -> None:
    defs = _el(svg, "defs")
    pattern = _el(defs, "pattern", id=f"{prefix}-hatch", width=8, height=8, patternUnits="userSpaceOnUse",
                  patternTransform="rotate(45)")
    _el(pattern, "rect", width=8, height=8, fill=AVOID, fill_opacity="0.15")
    _el(pattern, "line", x1=0, y1=0, x2=0, y2=8, stroke=AVOID, stroke_width=2, stroke_opacity="0.6")
    for i, polygon in enumerate(polygons, start=1):
        points = " ".join(f"{axes.x(k)},{axes.y(h)}" for k, h in polygon)
        shape = _el(svg, "polygon", points=points, fill=f"url(#{prefix}-hatch)", stroke=AVOID, stroke_width=2,
                    class_="hv-avoid", data_region=i)
        _el(shape, "title", f"Avoid region {i}")


def _marker(parent: ET.Element, axes: Axes, entry: Entry, label: str | None) -> None:
    x, y = axes.x(entry.kias), axes.y(entry.height_ft)
    where = "inside the avoid region" if entry.inside else "outside the avoid region"
    group = _el(parent, "g", class_="hv-entry " + ("inside" if entry.inside else "outside"),
                data_sequence=entry.sequence, data_kias=_fmt(entry.kias), data_height_ft=_fmt(entry.height_ft))
    words = f"Attempt #{entry.sequence}: {_fmt(entry.kias)} KIAS at {_fmt(entry.height_ft)} ft AGL, {where}"
    _el(group, "title", words)
    if entry.inside:  # a triangle as well as a colour, so the difference survives grey print and colour blindness
        _el(group, "polygon", points=f"{x},{y - 9} {x - 8},{y + 6} {x + 8},{y + 6}", fill=AVOID, stroke=INK)
    else:
        _el(group, "circle", cx=x, cy=y, r=6, fill=ENTRY, stroke=INK)
    if label:
        _el(group, "text", label, x=x + 10, y=y - 8, font_size=13, fill=INK, font_family="sans-serif")


def _labels(entries: list[Entry]) -> list[str | None]:
    """One label per position: attempts entered at the same point share "#3, #4", so none hides another."""
    by_point: dict[tuple[float, float], list[int]] = {}
    for entry in entries:
        by_point.setdefault((entry.kias, entry.height_ft), []).append(entry.sequence)
    labels, done = [], set()
    for entry in entries:
        point = (entry.kias, entry.height_ft)
        labels.append(None if point in done else ", ".join(f"#{n}" for n in by_point[point]))
        done.add(point)
    return labels


def _legend(svg: ET.Element, prefix: str) -> None:
    y = HEIGHT - 22
    group = _el(svg, "g", font_size=13, fill=INK, font_family="sans-serif")
    _el(group, "rect", x=LEFT, y=y - 11, width=18, height=14, fill=f"url(#{prefix}-hatch)", stroke=AVOID)
    _el(group, "text", "avoid region", x=LEFT + 24, y=y)
    _el(group, "circle", cx=LEFT + 150, cy=y - 4, r=6, fill=ENTRY, stroke=INK)
    _el(group, "text", "entry outside", x=LEFT + 162, y=y)
    _el(group, "polygon", points=f"{LEFT + 290},{y - 13} {LEFT + 282},{y + 2} {LEFT + 298},{y + 2}", fill=AVOID,
        stroke=INK)
    _el(group, "text", "entry inside the avoid region", x=LEFT + 306, y=y)


def hv_chart_svg(*, designation: str, polygons: list[list[Point]], entries: list[Entry],
                 prefix: str = "hv") -> str:
    """An SVG chart: avoid regions hatched, entries as circles (outside) or triangles (inside)."""
    axes = axes_for(polygons, entries)
    svg = ET.Element("svg", {
        "xmlns": "http://www.w3.org/2000/svg", "viewBox": f"0 0 {WIDTH} {HEIGHT}", "role": "img",
        "aria-labelledby": f"{prefix}-title {prefix}-desc", "class": "hv-chart",
    })
    _el(svg, "title", f"Height-velocity chart: {designation}", id=f"{prefix}-title")
    _el(svg, "desc", summary(designation, polygons, entries), id=f"{prefix}-desc")
    _grid_and_axes(svg, axes)
    _regions(svg, axes, polygons, prefix)
    markers = _el(svg, "g", class_="hv-entries")
    for entry, label in zip(entries, _labels(entries), strict=True):
        _marker(markers, axes, entry, label)
    _legend(svg, prefix)
    return ET.tostring(svg, encoding="unicode")
