"""The profile of one detected autorotation as SVG, drawn on the server.

Height above the ground (solid line, left scale) and groundspeed (dashed line, right scale) against time
from the entry; the expected flare band as a shaded strip on the height scale; the flare and the end as
labelled vertical markers. Presentation attributes only (no style attributes): a strict content security
policy holds and the chart prints as drawn.
"""
from html import escape

from server.compute.chart_ticks import nice_ticks

WIDTH, HEIGHT = 640, 240
LEFT, RIGHT, TOP, BOTTOM = 56, 56, 30, 44
INK, MUTED, GRID = "#15191d", "#4a535c", "#d9dee2"
HEIGHT_COLOUR, SPEED_COLOUR, BAND_FILL, MARK_COLOUR = "#0a5f8a", "#7a4b00", "#d7ecdc", "#a3231b"


def _fmt(value: float) -> str:
    text = f"{value:.1f}"
    return text[:-2] if text.endswith(".0") else text


def profile_svg(*, chart_id: str, profile: dict, flare_band_ft: tuple[float, float] | None, title: str) -> str:
    t, heights, speeds = profile["t_s"], profile["height_ft"], profile["groundspeed_kt"]
    title_id, desc_id = f"{chart_id}-title", f"{chart_id}-desc"
    description = (f"From {_fmt(max(heights))} ft to {_fmt(min(heights))} ft above the ground in "
                   f"{_fmt(t[-1] - t[0])} s; groundspeed from {_fmt(max(speeds))} to {_fmt(min(speeds))} kt.")
    if profile.get("flare_t_s") is not None:
        description += f" Flare at {_fmt(profile['flare_t_s'])} s."
    description += f" End at {_fmt(profile['end_t_s'])} s."
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" class="profile-chart" viewBox="0 0 {WIDTH} {HEIGHT}" '
           f'role="img" aria-labelledby="{title_id} {desc_id}" font-family="Liberation Sans, DejaVu Sans, '
           f'Arial, sans-serif" font-size="13">',
           f'<title id="{title_id}">{escape(title)}</title><desc id="{desc_id}">{escape(description)}</desc>']
    x0, x1 = t[0], t[-1] if t[-1] > t[0] else t[0] + 1
    # Heights a few feet below the reference are receiver noise at the ground: the scale starts at 0.
    h_ticks = nice_ticks(0.0, max(heights + [flare_band_ft[1] if flare_band_ft else 0]), 5)
    s_ticks = nice_ticks(0.0, max(max(speeds), 10.0), 5)
    plot_w, plot_h = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM

    def x(value):
        return LEFT + (value - x0) / (x1 - x0) * plot_w

    def y_height(value):
        return TOP + plot_h - (value - h_ticks[0]) / (h_ticks[-1] - h_ticks[0]) * plot_h

    def y_speed(value):
        return TOP + plot_h - (value - s_ticks[0]) / (s_ticks[-1] - s_ticks[0]) * plot_h

    if flare_band_ft:
        top, bottom = y_height(flare_band_ft[1]), y_height(flare_band_ft[0])
        out.append(f'<rect x="{LEFT}" y="{top:.1f}" width="{plot_w}" height="{bottom - top:.1f}" fill="{BAND_FILL}"/>')
        out.append(f'<text x="{LEFT + 6}" y="{top + 14:.1f}" fill="{MUTED}">expected flare band</text>')
    for tick in h_ticks:
        out.append(f'<line x1="{LEFT}" x2="{WIDTH - RIGHT}" y1="{y_height(tick):.1f}" y2="{y_height(tick):.1f}" '
                   f'stroke="{GRID}" stroke-width="1"/>')
        out.append(f'<text x="{LEFT - 6}" y="{y_height(tick) + 4:.1f}" text-anchor="end" fill="{HEIGHT_COLOUR}">{_fmt(tick)}</text>')
    for tick in s_ticks:
        out.append(f'<text x="{WIDTH - RIGHT + 6}" y="{y_speed(tick) + 4:.1f}" fill="{SPEED_COLOUR}">{_fmt(tick)}</text>')
    for tick in nice_ticks(x0, x1, 6):
        if x0 <= tick <= x1:
            out.append(f'<text x="{x(tick):.1f}" y="{HEIGHT - BOTTOM + 18}" text-anchor="middle" fill="{MUTED}">{_fmt(tick)}</text>')
    out.append(f'<text x="{LEFT + plot_w / 2}" y="{HEIGHT - 6}" text-anchor="middle" fill="{MUTED}">seconds from the entry</text>')
    out.append(f'<text x="{LEFT - 44}" y="{TOP - 12}" fill="{HEIGHT_COLOUR}">ft AGL</text>')
    out.append(f'<text x="{WIDTH - RIGHT + 4}" y="{TOP - 12}" fill="{SPEED_COLOUR}">kt</text>')
    for name, at in (("flare", profile.get("flare_t_s")), ("end", profile["end_t_s"])):
        if at is not None:
            out.append(f'<line x1="{x(at):.1f}" x2="{x(at):.1f}" y1="{TOP}" y2="{TOP + plot_h}" stroke="{MARK_COLOUR}" '
                       f'stroke-width="1.5" stroke-dasharray="2 3"/>')
            anchor = "end" if name == "flare" else "start"
            offset = -4 if name == "flare" else 4
            out.append(f'<text x="{x(at) + offset:.1f}" y="{TOP + 12}" text-anchor="{anchor}" fill="{MARK_COLOUR}">{name}</text>')
    heights_path = " ".join(f"{x(a):.1f},{y_height(max(b, 0.0)):.1f}" for a, b in zip(t, heights))
    speeds_path = " ".join(f"{x(a):.1f},{y_speed(b):.1f}" for a, b in zip(t, speeds))
    out.append(f'<polyline points="{heights_path}" fill="none" stroke="{HEIGHT_COLOUR}" stroke-width="2.5"/>')
    out.append(f'<polyline points="{speeds_path}" fill="none" stroke="{SPEED_COLOUR}" stroke-width="2" '
               f'stroke-dasharray="7 4"/>')
    out.append(f'<rect x="{LEFT}" y="{TOP}" width="{plot_w}" height="{plot_h}" fill="none" stroke="{MUTED}"/>')
    out.append("</svg>")
    return "".join(out)
