"""Read wind, temperature and altimeter setting from a METAR or SPECI report."""

from dataclasses import dataclass

from metar import Metar


@dataclass(frozen=True)
class MetarFields:
    """What a METAR gives the conditions form; None where the report does not say."""

    station: str | None
    wind_dir_deg: float | None  # None when the wind is variable or calm
    wind_kt: float | None  # 0 when calm
    gust_kt: float | None
    oat_c: float | None
    altimeter_hpa: float | None
    raw: str


class MetarError(ValueError):
    """A METAR that cannot be read; the message says why in plain words."""


def parse_metar(text: str) -> MetarFields:
    """Decode a METAR/SPECI (WMO FM 15, US or international) with the `metar` package."""
    if not isinstance(text, str) or not text.strip():
        raise MetarError(
            "The METAR is empty: paste the whole report, starting with the station code."
        )
    # Reports are upper case by convention; pasted text often is not. One line, single spaces.
    raw = " ".join(text.split()).upper()
    try:
        report = Metar.Metar(raw, strict=True)
    except Metar.ParserError as err:
        unread = str(err).split("'")[1] if "'" in str(err) else raw
        raise MetarError(
            f"This METAR could not be read (the part '{unread}' is not valid METAR code); "
            "check it was copied completely."
        ) from err

    wind_kt = report.wind_speed.value("KT") if report.wind_speed is not None else None
    gust_kt = report.wind_gust.value("KT") if report.wind_gust is not None else None
    wind_dir = report.wind_dir.value() if report.wind_dir is not None else None
    if wind_kt == 0:
        wind_dir = None  # calm: no direction to speak of
    oat_c = report.temp.value("C") if report.temp is not None else None
    # The package converts A (inHg) groups; Q (hPa) groups come back exactly as reported.
    altimeter_hpa = report.press.value("HPA") if report.press is not None else None

    if wind_kt is None and oat_c is None and altimeter_hpa is None:
        raise MetarError(
            "This METAR carries no wind, temperature or altimeter setting, "
            "so it cannot fill the conditions."
        )
    return MetarFields(
        station=report.station_id,
        wind_dir_deg=wind_dir,
        wind_kt=wind_kt,
        gust_kt=gust_kt,
        oat_c=oat_c,
        altimeter_hpa=altimeter_hpa,
        raw=raw,
    )
