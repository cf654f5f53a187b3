"""The new-sortie page's live conditions: a pasted METAR fills the fields and density altitude appears;
an unreadable one says so and fills nothing."""
import html
import json
import re


def fill_of(page: str) -> dict:
    """What the answer asks the page to fill (the page leaves fields typed in since the METAR alone)."""
    match = re.search(r'data-fill="([^"]*)"', page)
    return json.loads(html.unescape(match.group(1))) if match else {}


def figure(page: str, element_id: str) -> str:
    return re.search(rf'id="{element_id}">([^<]*)<', page).group(1)


def paste(client, world, metar: str):
    return client.htmx_post("/sorties/conditions", {"site_id": str(world.site.id), "metar": metar,
                                                    "altimeter_unit": "hPa"},
                            headers={"HX-Trigger-Name": "metar"})


def test_a_pasted_metar_fills_the_fields_and_density_altitude_appears(instructor_client, world):
    # Source: ICAO Annex 3 / WMO FM 15 example for the fictitious station YUDO (from memory): 240 at 8 kt,
    # 17 °C, QNH 1018 hPa. The test site is at 500 ft.
    answer = paste(instructor_client, world, "METAR YUDO 221630Z 24008KT 9999 SCT010 17/16 Q1018")
    assert answer.status_code == 200
    filled = fill_of(answer.text)
    assert [filled[name] for name in ("wind_dir_deg", "wind_kt", "oat_c", "altimeter")] == [240, 8, 17, 1018]
    assert filled["altimeter_unit"] == "hPa"
    assert "takeoff_weight_lb" not in filled  # a METAR carries no weight: never sent back over what is typed
    assert "<input" not in answer.text  # no field is replaced by the answer
    # About 27 ft per hPa near sea level (common practice): 1018 hPa puts a 500 ft site about 130 ft lower.
    # 17 °C is warmer than ISA there (about 14 °C), so density altitude is above pressure altitude.
    pressure_ft = int(figure(answer.text, "pressure-altitude").split()[0].replace(",", ""))
    density_ft = int(figure(answer.text, "density-altitude").split()[0].replace(",", ""))
    assert 300 <= pressure_ft <= 400 and density_ft > pressure_ft


def test_an_unreadable_metar_says_so_and_fills_nothing(instructor_client, world):
    answer = paste(instructor_client, world, "the quick brown fox")
    text = html.unescape(answer.text)
    assert "This METAR could not be read" in text
    assert "Filled from the METAR" not in text
    assert fill_of(answer.text) == {}
    assert figure(answer.text, "density-altitude") == "—"
