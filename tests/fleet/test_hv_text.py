"""Avoid regions typed as text: lines of "KIAS, ft AGL", regions separated by an empty line."""
import pytest

from server.fleet.hv_text import RegionTextError, format_regions, parse_regions


def test_two_regions_separated_by_an_empty_line():
    text = "0, 10\n0, 400\n30, 300\n\n\n70,0\n120 0\n120; 15\n"
    assert parse_regions(text) == [[(0, 10), (0, 400), (30, 300)], [(70, 0), (120, 0), (120, 15)]]


def test_empty_text_means_no_region():
    assert parse_regions("") == [] and parse_regions("  \n\n") == [] and parse_regions(None) == []


@pytest.mark.parametrize("polygons", [
    [[[0, 10], [0, 400], [30, 300], [40, 100], [15, 10]]],
    [[[0, 10], [0, 400], [30.5, 300]], [[70, 0], [120, 0], [120, 15], [70, 15]]],
])
def test_format_then_parse_gives_the_same_regions(polygons):
    assert parse_regions(format_regions(polygons)) == [[tuple(p) for p in poly] for poly in polygons]


@pytest.mark.parametrize(("text", "words"), [
    ("0, 10\n0, 400\n30", "Line 3: write one point as 'KIAS, ft AGL'"),
    ("0, 10\n0, 400\n30, 300, 5", "Line 3: write one point"),
    ("0, 10\nnan, 400\n30, 300", "Line 2: the airspeed nan is outside"),
    ("0, 10\n0, 4e9\n30, 300", "Line 2: the height 4e9 is outside"),
    ("0, 10", "Avoid region 1 has 1 point;"),
])
def test_mistakes_name_the_line_and_the_fix(text, words):
    with pytest.raises(RegionTextError) as raised:
        parse_regions(text)
    assert words in str(raised.value)
