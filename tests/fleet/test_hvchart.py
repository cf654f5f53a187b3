"""The height-velocity chart drawn from plain data: scales, markers and the text summary."""
import math
import xml.etree.ElementTree as ET

from hypothesis import given
from hypothesis import strategies as st

from server.fleet.hvchart import Entry, axes_for, hv_chart_svg, nice_step, summary

SVG = "{http://www.w3.org/2000/svg}"
REGION = [(0, 10), (0, 400), (30, 300), (40, 100), (15, 10)]


@given(st.floats(min_value=1, max_value=100_000), st.integers(min_value=4, max_value=10))
def test_tick_steps_are_round_numbers_giving_a_readable_count(span, ticks):
    # Ticks of 1, 2 or 5 times a power of ten, about as many as asked: common charting practice.
    step = nice_step(span, ticks)
    mantissa = step / 10 ** math.floor(math.log10(step) + 1e-9)
    assert round(mantissa, 6) in (1, 2, 5)
    assert ticks / 2.5 - 1e-9 <= span / step <= ticks + 1e-9


def test_axes_start_at_zero_and_hold_every_corner_and_entry():
    axes = axes_for([REGION], [Entry(1, 95, 1200, False)])
    assert axes.kias_max >= 95 and axes.height_max >= 1200
    assert axes.x(0) < axes.x(axes.kias_max) and axes.y(0) > axes.y(axes.height_max)  # height grows upwards
    assert axes.kias_max % axes.kias_step == 0 and axes.height_max % axes.height_step == 0


def test_inside_entries_are_triangles_and_outside_entries_circles():
    svg = ET.fromstring(hv_chart_svg(designation="Wren", polygons=[REGION],
                                     entries=[Entry(1, 10, 200, True), Entry(2, 65, 600, False)]))
    groups = [g for g in svg.iter(f"{SVG}g") if "hv-entry" in (g.get("class") or "")]
    shapes = {g.get("data-sequence"): (g.find(f"{SVG}polygon"), g.find(f"{SVG}circle")) for g in groups}
    assert shapes["1"][0] is not None and shapes["1"][1] is None
    assert shapes["2"][0] is None and shapes["2"][1] is not None
    titles = [g.find(f"{SVG}title").text for g in groups]
    assert titles[0] == "Attempt #1: 10 KIAS at 200 ft AGL, inside the avoid region"


def test_user_text_is_escaped_in_the_svg():
    text = hv_chart_svg(designation='<script>alert("x")</script>', polygons=[], entries=[])
    assert "<script>" not in text
    ET.fromstring(text)  # still well-formed


def test_summary_in_words():
    words = summary("Wren", [REGION], [Entry(1, 10, 200, True), Entry(2, 65, 600, False)])
    assert "avoid region 1 has corners at 0 KIAS and 10 ft AGL" in words
    assert "2 attempt entries plotted, 1 inside the avoid region (attempt #1)." in words
    assert summary("Wren", [], []) == "Height-velocity chart of the Wren: no avoid region entered."


def test_entries_at_the_same_point_share_one_label():
    svg = ET.fromstring(hv_chart_svg(designation="Wren", polygons=[REGION], entries=[
        Entry(1, 65, 500, False), Entry(2, 70, 600, False), Entry(3, 70, 600, False)]))
    labels = [t.text for t in svg.find(f"{SVG}g[@class='hv-entries']").iter(f"{SVG}text")]
    assert labels == ["#1", "#2, #3"]
