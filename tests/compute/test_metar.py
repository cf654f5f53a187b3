"""METAR decoding checked against published example reports and their decoded values."""

import pytest

from server.compute.metar import MetarError, MetarFields, parse_metar

KT_PER_MPS = 3600.0 / 1852.0  # 1 kt = 1852 m per hour (international nautical mile)
HPA_PER_INHG = 33.86389  # NIST SP 811


def test_metar_package_readme_example():
    # Source: the `metar` package's own README example (KEWR), decoded as it documents:
    # "variable at 3 knots, gusting to 19 knots", "temperature: 22.7 C", "pressure: 1011.5 hPa".
    # The temperature comes from the T02270215 remark, which FMH-1 says gives tenths of a degree.
    fields = parse_metar(
        "METAR KEWR 111851Z VRB03G19KT 2SM R04R/3000VP6000FT TSRA BR FEW015 BKN040CB BKN065 "
        "OVC200 22/22 A2987 RMK AO2 PK WND 29028/1817 WSHFT 1812 TSB05RAB22 SLP114 FRQ "
        "LTGICCCCG TS OHD AND NW -N-E MOV NE P0013 T02270215"
    )
    assert isinstance(fields, MetarFields)
    assert fields.station == "KEWR"
    assert fields.wind_dir_deg is None  # VRB: variable
    assert fields.wind_kt == pytest.approx(3.0)
    assert fields.gust_kt == pytest.approx(19.0)
    assert fields.oat_c == pytest.approx(22.7)
    assert fields.altimeter_hpa == pytest.approx(1011.5, abs=0.05)


def test_us_report_with_gusts_and_inches():
    # Source: FAA Aviation Weather Services (AC 00-45) METAR example for KOKC, from memory:
    # wind 220 at 15 gusting 25 kt, varying 180 to 250, temperature 18 C, altimeter 29.92 inHg.
    fields = parse_metar(
        "METAR KOKC 011955Z AUTO 22015G25KT 180V250 3/4SM R17L/2600FT +TSRA BR OVC010CB 18/16 "
        "A2992 RMK AO2 TSB25 TS OHD MOV E SLP132"
    )
    assert fields.station == "KOKC"
    assert fields.wind_dir_deg == pytest.approx(220.0)
    assert (fields.wind_kt, fields.gust_kt) == pytest.approx((15.0, 25.0))
    assert fields.oat_c == pytest.approx(18.0)
    assert fields.altimeter_hpa == pytest.approx(29.92 * HPA_PER_INHG, abs=0.01)


ANNEX3_ROUTINE = (
    "METAR YUDO 221630Z {wind} 0600 R12/1000U DZ FG SCT010 OVC020 17/16 Q1018 "
    "BECMG TL1700 0800 FG BECMG AT1800 9999 NSW"
)


def test_international_report_in_hectopascals_and_metres_per_second():
    # Source: ICAO Annex 3 / WMO FM 15 routine-report example for the fictitious station YUDO
    # (from memory), given there with wind 24004MPS and the knot equivalent 24008KT.
    in_mps = parse_metar(ANNEX3_ROUTINE.format(wind="24004MPS"))
    in_kt = parse_metar(ANNEX3_ROUTINE.format(wind="24008KT"))
    assert in_mps.wind_dir_deg == in_kt.wind_dir_deg == pytest.approx(240.0)
    assert in_mps.wind_kt == pytest.approx(4.0 * KT_PER_MPS, abs=0.01)
    assert round(in_mps.wind_kt) == in_kt.wind_kt == 8.0  # the example's own equivalence
    assert in_mps.oat_c == pytest.approx(17.0)
    assert in_mps.altimeter_hpa == pytest.approx(1018.0)
    assert in_mps.gust_kt is None


def test_special_report_with_gusts():
    # Source: ICAO Annex 3 / WMO FM 15 special-report example for YUDO (from memory):
    # wind 050 at 25 gusting 37 kt, 25 C, QNH 1008 hPa; the leading SPECI is accepted.
    fields = parse_metar(
        "SPECI YUDO 151115Z 05025G37KT 3000 1200NE +TSRA BKN005CB 25/22 Q1008 "
        "TEMPO TL1200 0600 BECMG AT1200 8000 NSW NSC"
    )
    assert fields.station == "YUDO"
    assert fields.wind_dir_deg == pytest.approx(50.0)
    assert (fields.wind_kt, fields.gust_kt) == pytest.approx((25.0, 37.0))
    assert fields.oat_c == pytest.approx(25.0)
    assert fields.altimeter_hpa == pytest.approx(1008.0)


def test_gusts_in_metres_per_second_are_converted_too():
    # WMO FM 15: gusts use the same unit as the mean wind; 1 kt = 1852/3600 m/s.
    fields = parse_metar("YUDO 151115Z 05013G19MPS 3000 25/22 Q1008")
    assert fields.wind_kt == pytest.approx(13.0 * KT_PER_MPS, abs=0.01)
    assert fields.gust_kt == pytest.approx(19.0 * KT_PER_MPS, abs=0.01)


def test_calm_wind_has_no_direction_and_zero_speed():
    # WMO FM 15 (from memory): calm is reported as 00000KT.
    fields = parse_metar("METAR YUDO 221630Z 00000KT CAVOK 15/08 Q1013")
    assert fields.wind_dir_deg is None
    assert fields.wind_kt == 0.0
    assert fields.gust_kt is None


def test_variable_light_wind_and_below_zero_temperature():
    # WMO FM 15 (from memory): VRB for a variable direction, M for minus; no leading METAR.
    fields = parse_metar("YUDO 221630Z VRB02KT 9999 M05/M08 Q1031 NOSIG")
    assert fields.wind_dir_deg is None
    assert fields.wind_kt == pytest.approx(2.0)
    assert fields.oat_c == pytest.approx(-5.0)
    assert fields.altimeter_hpa == pytest.approx(1031.0)


def test_pasted_text_in_lower_case_over_several_lines_is_read():
    # People paste reports from e-mail and web pages; the trailing '=' ends a report in WMO FM 15.
    fields = parse_metar("  metar yudo 221630z 24008kt\n 9999 17/16   q1018=  ")
    assert fields.station == "YUDO"
    assert fields.wind_kt == pytest.approx(8.0)
    assert fields.altimeter_hpa == pytest.approx(1018.0)
    assert fields.raw == "METAR YUDO 221630Z 24008KT 9999 17/16 Q1018="


def test_missing_groups_are_left_empty():
    # A report without temperature or altimeter fills only the wind.
    fields = parse_metar("YUDO 221630Z 24008KT 9999")
    assert fields.wind_kt == pytest.approx(8.0)
    assert fields.oat_c is None and fields.altimeter_hpa is None


@pytest.mark.parametrize(
    "text",
    ["", "   ", "hello world", "12 34 56", "the quick brown fox", "KJFK 121251Z NIL", "YUDO"],
)
def test_text_that_is_not_a_usable_report_is_refused(text):
    with pytest.raises(MetarError) as raised:
        parse_metar(text)
    assert "METAR" in str(raised.value)


def test_metar_error_is_a_value_error_so_bad_input_is_reported_not_crashed():
    with pytest.raises(ValueError):
        parse_metar("not a weather report")
