"""Bad input found by schemathesis, kept as plain tests: each gets a 422 a person can read, never a 500.

Anchor: issue 6 ("no 5xx, no schema violations"); OWASP ASVS 5.0 V16.5 (errors handled without
leaking internals). 850 to 1100 hPa is the range the conditions accept (server/compute/atmosphere.py);
1 inHg = 33.8639 hPa (common practice).
"""
import pytest

HUGE = 2**63  # one past the largest 64-bit signed integer a database column holds


@pytest.mark.parametrize("url", [f"/api/v1/sorties/{HUGE}", f"/api/v1/attempts/{HUGE}",
                                 f"/api/v1/sorties?offset={HUGE}", f"/api/v1/standards/{HUGE}"])
def test_ids_beyond_the_database_range_are_refused_as_bad_input(instructor_client, url):
    answer = instructor_client.get(url)
    assert answer.status_code == 422
    assert "too large" in answer.json()["detail"]


def test_a_page_with_such_an_id_shows_the_error_page(instructor_client):
    answer = instructor_client.get(f"/sorties/{HUGE}")
    assert answer.status_code == 422 and "too large" in answer.text


@pytest.mark.parametrize("inhg, status", [(25.1, 422), (25.11, 200), (32.48, 200), (32.5, 422)])
def test_an_altimeter_setting_in_inhg_must_convert_inside_the_accepted_range(instructor_client, inhg, status):
    # 25.1 inHg = 849.98 hPa and 32.5 inHg = 1100.6 hPa fall just outside 850 to 1100 hPa.
    answer = instructor_client.api("POST", "/api/v1/conditions",
                                   json={"elevation_ft": 500, "altimeter_inhg": inhg, "oat_c": 15})
    assert answer.status_code == status, answer.text


def test_a_metar_altimeter_outside_the_range_is_explained(instructor_client):
    answer = instructor_client.api("POST", "/api/v1/conditions", json={
        "elevation_ft": 500, "metar": "METAR XXXX 201000Z 27010KT 9999 FEW030 15/08 Q0800"})
    assert answer.status_code == 422
    assert "hPa" in answer.json()["detail"]


def test_the_openapi_document_describes_the_error_body_really_sent(anonymous, instructor_client):
    described = anonymous.get("/openapi.json").json()["components"]["schemas"]["HTTPValidationError"]
    assert described["properties"]["detail"]["type"] == "string"
    sent = instructor_client.api("POST", "/api/v1/conditions", json={"elevation_ft": "high"}).json()
    assert isinstance(sent["detail"], str)
    assert {"field", "message"} <= set(sent["errors"][0])
