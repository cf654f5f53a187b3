"""The safety digest's month-by-month chart as SVG, drawn on the server.

Pure drawing: plain numbers and words in, an SVG string out. Colours are presentation attributes (no
style attributes), so the chart obeys a strict content security policy. The bars are a rate (flagged
attempts per 100) on an axis that starts at zero; the counts it comes from are written under each month,
in words apart from the rate, so one cannot be read for the other. Each bar links to its attempts.
"""
from collections.abc import Sequence
from dataclasses import dataclass
from html import escape

from server.compute.chart_ticks import nice_ticks

WIDTH, HEIGHT = 960, 300
LEFT, RIGHT, TOP, BOTTOM = 64, 12, 24, 70
INK, MUTED, GRID, BAR, EMPTY = "#15191d", "#4a535c", "#d9dee2", "#0a5f8a", "#c9d0d6"


@dataclass(frozen=True)
class MonthBar:
    label: str  # "Dec 2026"
    attempts: int
    flagged: int
    href: str | None  # the attempts behind the bar; None when nothing was flagged

    @property
    def per_100(self) -> float | None:
        return 100 * self.flagged / self.attempts if self.attempts else None


def _fmt(value: float) -> str:
    text = f"{value:.1f}"
    return text[:-2] if text.endswith(".0") else text


def describe(bars: Sequence[MonthBar]) -> str:
    """What the chart shows, in a sentence, for assistive technology and for the caption."""
    flown = [b for b in bars if b.attempts]
    if not flown:
        return "No signed attempts in these months."
    worst = max(flown, key=lambda b: b.per_100)
    best = min(flown, key=lambda b: b.per_100)
    return (f"Flagged attempts per 100 signed attempts, month by month. Highest in {worst.label}: "
            f"{_fmt(worst.per_100)} per 100 ({worst.flagged} of {worst.attempts}); lowest in {best.label}: "
            f"{_fmt(best.per_100)} per 100 ({best.flagged} of {best.attempts}).")


def months_chart_svg(bars: Sequence[MonthBar], *, chart_id: str = "months") -> str:
    title_id, desc_id = f"{chart_id}-title", f"{chart_id}-desc"
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" class="months-chart" viewBox="0 0 {WIDTH} {HEIGHT}" '
             f'role="group" aria-labelledby="{title_id} {desc_id}" font-family="Liberation Sans, DejaVu Sans, '
             f'Arial, sans-serif" font-size="14">',
             f'<title id="{title_id}">Flagged attempts per 100, month by month</title>',
             f'<desc id="{desc_id}">{escape(describe(bars))}</desc>']
    rates = [b.per_100 for b in bars if b.per_100 is not None]
    ticks = nice_ticks(0.0, max([*rates, 1.0]), count=5)
    y_high = ticks[-1]
    plot_w, plot_h = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM
    slot = plot_w / max(len(bars), 1)

    def y_at(value: float) -> float:
        return TOP + plot_h * (1 - value / y_high)

    for tick in ticks:
        y = y_at(tick)
        parts.append(f'<line x1="{LEFT}" x2="{WIDTH - RIGHT}" y1="{y:.1f}" y2="{y:.1f}" stroke="{GRID}"/>')
        parts.append(f'<text x="{LEFT - 8}" y="{y + 5:.1f}" text-anchor="end" fill="{INK}">{_fmt(tick)}</text>')
    parts.append(f'<text transform="translate(18 {TOP + plot_h / 2:.1f}) rotate(-90)" text-anchor="middle" '
                 f'fill="{INK}">flagged per 100</text>')
    parts.append(f'<line x1="{LEFT}" x2="{LEFT}" y1="{TOP}" y2="{TOP + plot_h}" stroke="{INK}"/>')
    parts.append(f'<line x1="{LEFT}" x2="{WIDTH - RIGHT}" y1="{TOP + plot_h}" y2="{TOP + plot_h}" stroke="{INK}"/>')
    for i, bar in enumerate(bars):
        centre = LEFT + slot * (i + 0.5)
        width = min(44.0, slot * 0.6)
        base = TOP + plot_h
        month, _, year = bar.label.partition(" ")
        parts.append(f'<text x="{centre:.1f}" y="{base + 18:.1f}" text-anchor="middle" fill="{INK}">'
                     f'{escape(month)}</text>')
        if i == 0 or month == "Jan":
            parts.append(f'<text x="{centre:.1f}" y="{base + 34:.1f}" text-anchor="middle" fill="{MUTED}" '
                         f'font-size="12">{escape(year)}</text>')
        if not bar.attempts:
            parts.append(f'<text x="{centre:.1f}" y="{base - 6:.1f}" text-anchor="middle" fill="{MUTED}" '
                         f'font-size="12">none flown</text>')
            continue
        counts = f"{bar.flagged} of {bar.attempts}"
        parts.append(f'<text x="{centre:.1f}" y="{base + 52:.1f}" text-anchor="middle" fill="{MUTED}" '
                     f'font-size="12">{escape(counts)}</text>')
        top = y_at(bar.per_100)
        words = f"{bar.label}: {_fmt(bar.per_100)} flagged per 100 ({counts} attempts)"
        shape = (f'<rect class="bar" x="{centre - width / 2:.1f}" y="{top:.1f}" width="{width:.1f}" '
                 f'height="{max(base - top, 0):.1f}" fill="{BAR if bar.flagged else EMPTY}"/>'
                 f'<text x="{centre:.1f}" y="{top - 6:.1f}" text-anchor="middle" fill="{INK}" '
                 f'font-weight="700">{_fmt(bar.per_100)}</text>')
        if bar.href:
            parts.append(f'<a href="{escape(bar.href)}" aria-label="{escape(words)}"><title>{escape(words)}</title>'
                         f'<rect x="{centre - slot / 2 + 2:.1f}" y="{TOP}" width="{slot - 4:.1f}" '
                         f'height="{plot_h:.1f}" fill="#ffffff" fill-opacity="0"/>{shape}</a>')
        else:
            parts.append(f'<g><title>{escape(words)}</title>{shape}</g>')
    parts.append("</svg>")
    return "".join(parts)
