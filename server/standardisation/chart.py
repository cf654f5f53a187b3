"""The standardisation chart as SVG, drawn on the server.

One row per instructor and one for the school: on the left a bar of the graded attempts split into
agree, lenient and strict (each part a link to its attempts, labelled with its count, and told apart
by a pattern as well as a colour); on the right the mean score as a dot with its 95 % interval as a
line, beside a dashed line at the school's mean. Presentation attributes only (no style attributes),
so the strict content security policy holds.
"""
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from html import escape

from server.compute.standardisation import Tally

INK, MUTED, GRID = "#15191d", "#4a535c", "#d9dee2"
COLOURS = {"agree": "#1d6b35", "lenient": "#a3231b", "strict": "#0a5f8a"}
LABELS = {"agree": "agree", "lenient": "lenient", "strict": "strict"}
WIDTH = 960
NAME_W, BAR_X, BAR_W, GAP, SCORE_W = 170, 180, 420, 40, 300
ROW_H, TOP, FOOT = 44, 44, 40


@dataclass(frozen=True)
class ChartRow:
    label: str
    figures: Tally
    link: Callable[[str], str]  # show ("agree", "lenient", "strict") -> URL of its attempts


def _patterns() -> str:
    """Hatching for lenient and strict, so the parts differ without colour too."""
    return (
        '<defs>'
        f'<pattern id="hatch-lenient" width="8" height="8" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">'
        f'<rect width="8" height="8" fill="{COLOURS["lenient"]}"/><line x1="0" y1="0" x2="0" y2="8" stroke="#ffffff" '
        f'stroke-width="3"/></pattern>'
        f'<pattern id="hatch-strict" width="8" height="8" patternUnits="userSpaceOnUse">'
        f'<rect width="8" height="8" fill="{COLOURS["strict"]}"/><circle cx="4" cy="4" r="1.6" fill="#ffffff"/>'
        '</pattern></defs>'
    )


def _fill(kind: str) -> str:
    return COLOURS[kind] if kind == "agree" else f"url(#hatch-{kind})"


def _score_x(score: float) -> float:
    return BAR_X + BAR_W + GAP + SCORE_W * max(0.0, min(100.0, score)) / 100.0


def standardisation_svg(rows: Sequence[ChartRow], *, school_mean: float | None) -> str:
    """The chart; `rows` in the order shown (the school last)."""
    height = TOP + ROW_H * len(rows) + FOOT
    parts = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="standardisation-chart" viewBox="0 0 {WIDTH} {height}" '
        'role="group" aria-labelledby="std-chart-title" aria-describedby="std-chart-desc" font-family="Liberation Sans, DejaVu Sans, '
        'Arial, sans-serif" font-size="14">',
        '<title id="std-chart-title">Grades against the figures, and mean score, per instructor</title>',
        f'<desc id="std-chart-desc">{escape(describe(rows))}</desc>',
        _patterns(),
        f'<text x="{BAR_X}" y="18" fill="{MUTED}">Graded attempts: agree, lenient, strict (share of graded)</text>',
        f'<text x="{BAR_X + BAR_W + GAP}" y="18" fill="{MUTED}">Mean score with 95 % interval</text>',
    ]
    for tick in (0, 25, 50, 75, 100):
        x = _score_x(tick)
        parts.append(f'<line x1="{x:.1f}" y1="{TOP - 8}" x2="{x:.1f}" y2="{TOP + ROW_H * len(rows)}" '
                     f'stroke="{GRID}" stroke-width="1"/>')
        parts.append(f'<text x="{x:.1f}" y="{TOP + ROW_H * len(rows) + 18}" text-anchor="middle" '
                     f'fill="{MUTED}">{tick}</text>')
    if school_mean is not None:
        x = _score_x(school_mean)
        parts.append(f'<line x1="{x:.1f}" y1="{TOP - 8}" x2="{x:.1f}" y2="{TOP + ROW_H * len(rows)}" '
                     f'stroke="{INK}" stroke-width="1.5" stroke-dasharray="5 4"/>')
        parts.append(f'<text x="{x:.1f}" y="{TOP - 12}" text-anchor="middle" fill="{INK}">school {school_mean:.0f}</text>')
    for index, row in enumerate(rows):
        parts.append(_row(row, TOP + ROW_H * index))
    parts.append('</svg>')
    return "".join(parts)


def _row(row: ChartRow, y: float) -> str:
    t = row.figures
    mid = y + ROW_H / 2
    out = [f'<text x="{NAME_W}" y="{mid + 5:.1f}" text-anchor="end" fill="{INK}">{escape(_short(row.label))}</text>']
    bar_y, bar_h = y + 8, ROW_H - 16
    if not t.graded:
        out.append(f'<text x="{BAR_X}" y="{mid + 5:.1f}" fill="{MUTED}">no graded attempts with figures</text>')
    else:
        x = float(BAR_X)
        for kind in ("agree", "lenient", "strict"):
            count = getattr(t, kind)
            if not count:
                continue
            width = BAR_W * count / t.graded
            label = f"{count} {LABELS[kind]} ({100 * count / t.graded:.0f} %)"
            out.append(f'<a href="{escape(row.link(kind))}" aria-label="{escape(row.label)}: {label}">'
                       f'<rect x="{x:.1f}" y="{bar_y}" width="{max(width, 1):.1f}" height="{bar_h}" '
                       f'fill="{_fill(kind)}" stroke="#ffffff" stroke-width="1"><title>{label}</title></rect>')
            if width >= 34:
                out.append(f'<text x="{x + width / 2:.1f}" y="{mid + 5:.1f}" text-anchor="middle" fill="#ffffff" '
                           f'stroke="{INK}" stroke-width="0.6" paint-order="stroke" font-weight="700">{count}</text>')
            out.append('</a>')
            x += width
        if not t.enough:
            out.append(f'<text x="{BAR_X + BAR_W}" y="{y + 6}" text-anchor="end" font-size="12" '
                       f'fill="{MUTED}">too few to judge</text>')
    if t.mean_score is not None:
        if t.mean_score_ci95 is not None:
            low, high = t.mean_score_ci95
            out.append(f'<line x1="{_score_x(low):.1f}" y1="{mid}" x2="{_score_x(high):.1f}" y2="{mid}" '
                       f'stroke="{INK}" stroke-width="3"/>')
            for end in (low, high):
                out.append(f'<line x1="{_score_x(end):.1f}" y1="{mid - 7}" x2="{_score_x(end):.1f}" y2="{mid + 7}" '
                           f'stroke="{INK}" stroke-width="2"/>')
        out.append(f'<circle cx="{_score_x(t.mean_score):.1f}" cy="{mid}" r="6" fill="{INK}"/>')
    return "".join(out)


def _short(label: str, limit: int = 22) -> str:
    return label if len(label) <= limit else label[: limit - 1] + "…"


def describe(rows: Sequence[ChartRow]) -> str:
    """The chart in words, for assistive technology."""
    lines = []
    for row in rows:
        t = row.figures
        if not t.graded:
            lines.append(f"{row.label}: no graded attempts with figures.")
            continue
        mean = "" if t.mean_score is None else f", mean score {t.mean_score:.0f}"
        lines.append(f"{row.label}: {t.agree} agree, {t.lenient} lenient, {t.strict} strict of {t.graded} "
                     f"graded{mean}{'' if t.enough else ' (too few to judge)'}.")
    return " ".join(lines)
