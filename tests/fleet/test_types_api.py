"""GET and PATCH /api/v1/types/{id}: a chief pilot changes some figures; bad figures change nothing."""
from sqlalchemy import select

from server.fleet.models import HelicopterType
from server.records.models import AuditEvent
from tests.support import make_sortie


def test_get_a_type_with_the_design_fields(instructor_client, world):
    body = instructor_client.api("GET", f"/api/v1/types/{world.helicopter.id}").json()
    assert body["designation"] == world.helicopter.designation
    assert body["flare_band_ft"] == [70, 110]
    assert body["hv_avoid"] == [[[0, 10], [0, 400], [30, 300], [40, 100], [15, 10]]]
    assert {"rotor_radius_ft", "blade_count", "reference_weight_lb", "nr_power_off_min_pct", "nr_power_off_max_pct",
            "autorotation_kias", "touchdown_speed_max_kt"} <= set(body)


def test_patch_changes_only_the_fields_sent_and_is_audited(chief_client, world, db):
    answer = chief_client.api("PATCH", f"/api/v1/types/{world.helicopter.id}",
                              json={"autorotation_kias": 62, "hv_avoid": [[[0, 20], [0, 420], [35, 120]]]})
    assert answer.status_code == 200, answer.text
    body = answer.json()
    assert body["autorotation_kias"] == 62 and body["hv_avoid"] == [[[0, 20], [0, 420], [35, 120]]]
    assert body["flare_band_ft"] == [70, 110] and body["nr_power_off_min_pct"] == 90
    event = db.scalar(select(AuditEvent).where(AuditEvent.entity == "helicopter_type").order_by(AuditEvent.seq.desc()))
    assert event.action == "edit" and event.before["autorotation_kias"] == 65 and event.after["autorotation_kias"] == 62


def test_patch_with_bad_figures_is_refused_in_words_and_changes_nothing(chief_client, world, db):
    for change, words in (
        ({"nr_power_off_min_pct": 109}, "low limit must be below the high limit"),
        ({"hv_avoid": [[[0, 10], [0, 400]]]}, "at least 3 points"),
        ({"flare_band_ft": [120, 80]}, "flare_band_ft must be [low, high]"),
        ({"rotor_radius_ft": 0}, "greater than 0"),
    ):
        answer = chief_client.api("PATCH", f"/api/v1/types/{world.helicopter.id}", json=change)
        assert answer.status_code == 422, change
        assert words in answer.json()["detail"], answer.json()
    db.expire_all()
    row = db.get(HelicopterType, world.helicopter.id)
    assert (row.nr_power_off_min_pct, row.flare_band_low_ft, row.rotor_radius_ft) == (90, 70, 12.5)
    assert len(row.hv_avoid[0]) == 5


def test_patch_to_a_taken_designation_conflicts(chief_client, world):
    other = chief_client.api("POST", "/api/v1/types", json={
        "designation": "Finch F-1 (test)", "rotor_radius_ft": 11, "blade_count": 2, "normal_rotor_rpm": 550,
        "nr_power_off_min_pct": 90, "nr_power_off_max_pct": 110, "autorotation_kias": 55,
        "reference_weight_lb": 1200, "flare_band_ft": [50, 90], "touchdown_speed_max_kt": 5})
    assert other.status_code == 201, other.text
    answer = chief_client.api("PATCH", f"/api/v1/types/{other.json()['id']}",
                              json={"designation": world.helicopter.designation})
    assert answer.status_code == 409


def test_patch_of_a_missing_type_is_404(chief_client):
    assert chief_client.api("PATCH", "/api/v1/types/9999", json={"autorotation_kias": 60}).status_code == 404


def test_a_changed_type_does_not_rescore_signed_attempts(chief_client, world, db):
    sortie = make_sortie(db, world, attempts=1, sign=True)
    before = chief_client.api("GET", f"/api/v1/sorties/{sortie.id}").json()["attempts"][0]
    # Narrow the power-off limits so the recorded 95 % would now be a droop.
    assert chief_client.api("PATCH", f"/api/v1/types/{world.helicopter.id}",
                            json={"nr_power_off_min_pct": 97}).status_code == 200
    after = chief_client.api("GET", f"/api/v1/sorties/{sortie.id}").json()["attempts"][0]
    assert (after["score"], after["flags"], after["parts"]) == (before["score"], before["flags"], before["parts"])
