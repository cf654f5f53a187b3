"""Trend charts as SVG, drawn on the server: tolerance band, each attempt, the EWMA line and its limits.

Pure drawing: plain numbers and words in, an SVG string out. Colours are presentation attributes (no
style attributes), so the chart obeys a strict content security policy and prints as drawn. Every
attempt is a shape as well as a colour: a filled circle inside the band, a hollow diamond outside it.
"""
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date
from html import escape

from server.compute.chart_ticks import nice_ticks

WIDTH, HEIGHT = 640, 280
LEFT, RIGHT, TOP, BOTTOM = 64, 16, 16, 52
INK, MUTED, GRID = "#15191d", "#4a535c", "#d9dee2"
BAND_FILL, EWMA_COLOUR, LIMIT_COLOUR, OUTSIDE_COLOUR = "#d7ecdc", "#0a5f8a", "#7a4b00", "#a3231b"


@dataclass(frozen=True)
class ChartData:
    """What one chart shows: values with their dates and bands, and the EWMA chart over them."""

    chart_id: str
    title: str
    quantity: str  # e.g. "Touchdown speed"
    unit: str  # e.g. "kt"
    values: Sequence[float]
    dates: Sequence[date]
    band_low: Sequence[float | None]
    band_high: Sequence[float | None]
    ewma: Sequence[float]
    ucl: Sequence[float]
    lcl: Sequence[float]
    # Beside each value: measured from a recorded track (drawn as a square) rather than observed.
    measured: Sequence[bool] = ()
    first_number: int = 1  # the number of the first value shown among the pilot's (the chart shows the last ones)
    count_noun: str = "attempt"  # what the x axis counts: attempts with this figure recorded


def _fmt(value: float) -> str:
    text = f"{value:.1f}"
    return text[:-2] if text.endswith(".0") else text


def _inside(value: float, low: float | None, high: float | None) -> bool:
    return (low is None or value >= low) and (high is None or value <= high)


def _path(points: list[tuple[float, float]]) -> str:
    return " ".join(f"{x:.1f},{y:.1f}" for x, y in points)


def trend_chart_svg(data: ChartData) -> str:
    """The chart as an SVG element with a title and description for assistive technology."""
    n = len(data.values)
    title_id, desc_id = f"{data.chart_id}-title", f"{data.chart_id}-desc"
    head = (f'<svg xmlns="http://www.w3.org/2000/svg" class="trend-chart" viewBox="0 0 {WIDTH} {HEIGHT}" '
            f'role="img" aria-labelledby="{title_id} {desc_id}" font-family="Liberation Sans, DejaVu Sans, '
            f'Arial, sans-serif" font-size="14">'
            f'<title id="{title_id}">{escape(data.title)}</title>'
            f'<desc id="{desc_id}">{escape(describe(data))}</desc>')
    if n == 0:
        return (head + f'<text x="{WIDTH / 2}" y="{HEIGHT / 2}" text-anchor="middle" fill="{MUTED}">'
                'No attempts recorded yet.</text></svg>')

    bands = [b for b in (*data.band_low, *data.band_high) if b is not None]
    everything = [*data.values, *data.ewma, *data.ucl, *data.lcl, *bands]
    ticks = nice_ticks(min(everything), max(everything))
    y_low, y_high = ticks[0], ticks[-1]
    plot_w, plot_h = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM

    def x_at(i: int) -> float:
        return LEFT + (plot_w / 2 if n == 1 else plot_w * i / (n - 1))

    def y_at(value: float) -> float:
        return TOP + plot_h * (1 - (value - y_low) / (y_high - y_low))

    half_step = plot_w / (2 * max(n - 1, 1))
    parts = [head]
    # Axes and grid, with the unit on the value axis.
    for tick in ticks:
        y = y_at(tick)
        parts.append(f'<line x1="{LEFT}" x2="{WIDTH - RIGHT}" y1="{y:.1f}" y2="{y:.1f}" stroke="{GRID}"/>')
        parts.append(f'<text x="{LEFT - 8}" y="{y + 4:.1f}" text-anchor="end" fill="{INK}">{_fmt(tick)}</text>')
    parts.append(f'<text transform="translate(16 {TOP + plot_h / 2:.1f}) rotate(-90)" text-anchor="middle" '
                 f'fill="{INK}">{escape(data.quantity)} ({escape(data.unit)})</text>')
    # The tolerance band, step by step: it moves with density altitude and weight.
    band_top, band_bottom = [], []
    for i in range(n):
        low = data.band_low[i] if data.band_low[i] is not None else y_low
        high = data.band_high[i] if data.band_high[i] is not None else y_high
        x0, x1 = max(LEFT, x_at(i) - half_step), min(WIDTH - RIGHT, x_at(i) + half_step)
        band_top += [(x0, y_at(high)), (x1, y_at(high))]
        band_bottom += [(x0, y_at(low)), (x1, y_at(low))]
    parts.append(f'<polygon class="band" points="{_path(band_top + band_bottom[::-1])}" fill="{BAND_FILL}" '
                 f'stroke="none"><title>Tolerance band</title></polygon>')
    # The axes themselves, over the band.
    parts.append(f'<line x1="{LEFT}" x2="{LEFT}" y1="{TOP}" y2="{TOP + plot_h}" stroke="{INK}"/>')
    parts.append(f'<line x1="{LEFT}" x2="{WIDTH - RIGHT}" y1="{TOP + plot_h}" y2="{TOP + plot_h}" stroke="{INK}"/>')
    # Control limits (dashed) and the EWMA line.
    for name, series in (("ucl", data.ucl), ("lcl", data.lcl)):
        points = [(x_at(i), y_at(v)) for i, v in enumerate(series)]
        parts.append(f'<polyline class="limit {name}" points="{_path(points)}" fill="none" '
                     f'stroke="{LIMIT_COLOUR}" stroke-width="1.5" stroke-dasharray="6 4"/>')
    ewma_points = [(x_at(i), y_at(v)) for i, v in enumerate(data.ewma)]
    parts.append(f'<polyline class="ewma" points="{_path(ewma_points)}" fill="none" stroke="{EWMA_COLOUR}" '
                 f'stroke-width="3"/>')
    # Each attempt: a circle inside the band, a hollow diamond outside it; a figure measured from a
    # recorded track is a square (filled inside, hollow outside).
    for i, value in enumerate(data.values):
        x, y = x_at(i), y_at(value)
        label = (f"{data.count_noun.capitalize()} #{data.first_number + i}, {data.dates[i].isoformat()}: "
                 f"{_fmt(value)} {data.unit}")
        inside = _inside(value, data.band_low[i], data.band_high[i])
        if i < len(data.measured) and data.measured[i]:
            where = "inside" if inside else "outside"
            fill, stroke = (INK, INK) if inside else ("#ffffff", OUTSIDE_COLOUR)
            parts.append(f'<rect class="attempt measured {where}" x="{x - 5:.1f}" y="{y - 5:.1f}" width="10" '
                         f'height="10" fill="{fill}" stroke="{stroke}" stroke-width="2"><title>{escape(label)}, '
                         f'measured from a recorded track, {where} the band</title></rect>')
        elif inside:
            parts.append(f'<circle class="attempt inside" cx="{x:.1f}" cy="{y:.1f}" r="4" fill="{INK}">'
                         f'<title>{escape(label)}, inside the band</title></circle>')
        else:
            diamond = _path([(x, y - 6), (x + 6, y), (x, y + 6), (x - 6, y)])
            parts.append(f'<polygon class="attempt outside" points="{diamond}" fill="#ffffff" '
                         f'stroke="{OUTSIDE_COLOUR}" stroke-width="2"><title>{escape(label)}, outside the band'
                         f'</title></polygon>')
    # The x axis counts attempts, so it is labelled with attempt numbers; dates are in each point's title.
    for i in sorted({0, (n - 1) // 2, n - 1}):
        x = x_at(i)
        anchor = "start" if i == 0 and n > 1 else "end" if i == n - 1 and n > 1 else "middle"
        parts.append(f'<line x1="{x:.1f}" x2="{x:.1f}" y1="{TOP + plot_h}" y2="{TOP + plot_h + 5}" stroke="{INK}"/>')
        parts.append(f'<text x="{x:.1f}" y="{TOP + plot_h + 20}" text-anchor="{anchor}" fill="{INK}">'
                     f'#{data.first_number + i}</text>')
    parts.append(f'<text x="{LEFT + plot_w / 2:.1f}" y="{HEIGHT - 8}" text-anchor="middle" fill="{MUTED}">'
                 f'{data.count_noun.capitalize()} number, in flight order ({data.dates[0].strftime("%d %b %Y")} to '
                 f'{data.dates[-1].strftime("%d %b %Y")})</text>')
    parts.append("</svg>")
    return "".join(parts)


def describe(data: ChartData) -> str:
    """The chart in words: what a sighted reader takes from it."""
    n = len(data.values)
    if n == 0:
        return f"{data.quantity}: no attempts recorded yet."
    inside = sum(_inside(v, lo, hi) for v, lo, hi in zip(data.values, data.band_low, data.band_high))
    latest = data.values[-1]
    text = (f"{data.quantity} over the last {n} attempt{'s' if n != 1 else ''} "
            f"({data.dates[0].strftime('%d %b %Y')} to {data.dates[-1].strftime('%d %b %Y')}): "
            f"latest {_fmt(latest)} {data.unit}, {inside} of {n} inside the tolerance band")
    low, high = data.band_low[-1], data.band_high[-1]
    if low is not None and high is not None:
        text += f" (latest band {_fmt(low)} to {_fmt(high)} {data.unit})"
    elif high is not None:
        text += f" (latest maximum {_fmt(high)} {data.unit})"
    text += (f". Smoothed average (EWMA) {_fmt(data.ewma[-1])} {data.unit}, control limits "
             f"{_fmt(data.lcl[-1])} to {_fmt(data.ucl[-1])} {data.unit}.")
    return text
