"""Flags an instructor sees the moment an attempt is saved through the API: the rotor-RPM cap and the
height-velocity caution. The test type (invented) has power-off limits 90 to 108 % NR and an avoid
region at low speed and low height: (0, 10), (0, 400), (30, 300), (40, 100), (15, 10)."""
import pytest

from tests.logbook.test_sortie_api import GOOD_ATTEMPT, new_sortie


@pytest.fixture
def sortie_id(instructor_client, world) -> int:
    answer = new_sortie(instructor_client, world)
    assert answer.status_code == 201, answer.text
    return answer.json()["id"]


def log(client, sortie_id: int, **changes) -> dict:
    answer = client.api("POST", f"/api/v1/sorties/{sortie_id}/attempts", json=GOOD_ATTEMPT | changes)
    assert answer.status_code == 201, answer.text
    return answer.json()


def test_low_rotor_rpm_caps_the_score_and_says_why(instructor_client, sortie_id):
    # Rule of the design (section 4.4): rotor RPM outside the power-off limits caps the score at 50.
    clean = log(instructor_client, sortie_id)
    drooped = log(instructor_client, sortie_id, nr_low_pct=84)
    assert clean["score"] > 50 and not clean["flags"]
    assert drooped["score"] <= 50
    flag = next(f for f in drooped["flags"] if f["code"] == "nr_limits")
    assert "84%" in flag["message"] and "below the power-off limit of 90%" in flag["message"]
    assert "capped at 50" in flag["message"]
    part = drooped["parts"]["rotor_rpm"]
    assert part["value"] == 84 and part["deviation"] == pytest.approx(6)  # 6 % below the 90 % limit


def test_high_rotor_rpm_is_flagged_too(instructor_client, sortie_id):
    over = log(instructor_client, sortie_id, nr_high_pct=111)
    assert over["score"] <= 50
    assert any(f["code"] == "nr_limits" and "above the power-off limit of 108%" in f["message"] for f in over["flags"])


@pytest.mark.parametrize(("entry_kias", "entry_height_ft", "inside"), [
    (10, 200, True),  # hovering-speed entry at 200 ft: the classic "dead man's curve" corner
    (20, 150, True),
    (65, 600, False),  # autorotation airspeed from a normal entry height
    (60, 50, False),  # fast and low: outside this (low-speed) region
], ids=["slow-200ft", "20kt-150ft", "normal-entry", "fast-low"])
def test_an_entry_in_the_avoid_region_raises_a_caution(instructor_client, sortie_id, entry_kias, entry_height_ft,
                                                        inside):
    # Source: the shape of a light helicopter's height-velocity diagram (low speed between a few feet and a
    # few hundred feet AGL), common practice; the corners are the invented test type's.
    attempt = log(instructor_client, sortie_id, entry_kias=entry_kias, entry_height_ft=entry_height_ft)
    flags = [f for f in attempt["flags"] if f["code"] == "hv_avoid"]
    assert bool(flags) is inside
    if inside:
        assert f"{entry_kias} KIAS and {entry_height_ft} ft AGL" in flags[0]["message"]
        assert "avoid region" in flags[0]["message"]


def test_the_sortie_sheet_shows_the_flag_in_words(instructor_client, sortie_id):
    log(instructor_client, sortie_id, nr_low_pct=84, entry_kias=10, entry_height_ft=200)
    page = instructor_client.get(f"/sorties/{sortie_id}")
    assert "below the power-off limit of 90%" in page.text
    assert "inside the height-velocity avoid region" in page.text
