"""The sortie sheet's recorded-track section through real HTTP, the HTML parsed (not matched by luck)."""
from html.parser import HTMLParser

from sqlalchemy import func, select

from server.logbook.models import Track
from tests.logbook.test_tracks_api import sortie, track_file, upload  # noqa: F401 (fixture)


class Collect(HTMLParser):
    """Tags with their attributes, and the text under each id'd element's subtree, roughly."""

    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_data(self, data):
        self.text.append(data)


def parse(html: str) -> Collect:
    collected = Collect()
    collected.feed(html)
    return collected


def import_by_form(client, sortie_id, data=None, name="flight.csv"):
    return client.post(f"/sorties/{sortie_id}/tracks", data={"csrf_token": client.csrf, "format": ""},
                       files={"file": (name, track_file() if data is None else data, "text/csv")})


def test_import_from_the_sheet_shows_each_detection_with_its_profile_and_accept_buttons(instructor_client, sortie):
    answer = import_by_form(instructor_client, sortie.id)
    assert answer.status_code == 303 and "#track-" in answer.headers["location"]
    page = parse(instructor_client.get(f"/sorties/{sortie.id}").text)
    detections = [a for t, a in page.tags if t == "article" and a.get("class") == "detection"]
    assert len(detections) == 2
    charts = [a for t, a in page.tags if t == "svg" and a.get("class") == "profile-chart"]
    assert len(charts) == 2 and all(a.get("role") == "img" for a in charts)
    assert not any("style" in a for _, a in page.tags)  # strict CSP: presentation attributes only
    buttons = [a for t, a in page.tags if t == "button" and a.get("name") == "target"]
    assert [b["value"] for b in buttons] == ["new", "new"]  # no attempts logged yet
    radios = [a["value"] for t, a in page.tags if t == "input" and a.get("class") == "end-choice"]
    assert radios == ["touchdown", "to_hover"]  # only the end at the ground asks
    text = " ".join(" ".join(page.text).split())
    assert "Measured from the recorded track, with its 95 % uncertainty" in text
    assert "flight manual" in text
    assert "not measured: a power recovery has no touchdown" in text


def test_accepting_from_the_sheet_fills_an_attempt_marked_measured(instructor_client, sortie):
    track = upload(instructor_client, sortie.id).json()
    answer = instructor_client.post(f"/tracks/{track['id']}/detections/1/accept",
                                    data={"csrf_token": instructor_client.csrf, "maneuver": "turn_180",
                                          "termination": "to_hover", "target": "new"})
    assert answer.status_code == 303 and "#attempt-" in answer.headers["location"]
    html = instructor_client.get(f"/sorties/{sortie.id}").text
    page = parse(html)
    marks = [a for t, a in page.tags if t == "span" and a.get("class") == "measured-mark"]
    assert len(marks) >= 2  # flare height and touchdown speed in the score parts
    text = " ".join(" ".join(page.text).split())
    assert "Measured from the recorded track: entry height" in text
    assert "used for attempt #1" in text


def test_a_ground_end_needs_the_instructors_choice_and_a_bad_file_says_why(instructor_client, sortie, db):
    track = upload(instructor_client, sortie.id).json()
    refused = instructor_client.post(f"/tracks/{track['id']}/detections/1/accept",
                                     data={"csrf_token": instructor_client.csrf, "maneuver": "straight_in",
                                           "target": "new"})
    assert refused.status_code == 422 and "choose termination touchdown or to_hover" in refused.text
    before = db.scalar(select(func.count()).select_from(Track))
    bad = import_by_form(instructor_client, sortie.id, data=b"\x00\x01 not a track")
    assert bad.status_code == 422
    message = [a for t, a in parse(bad.text).tags if t == "p" and a.get("id") == "track-message"]
    assert message and "not a track Flarebook can read" in bad.text
    db.expire_all()
    assert db.scalar(select(func.count()).select_from(Track)) == before


def test_the_pilot_sees_the_track_but_cannot_import_or_accept(student_client, instructor_client, sortie):
    upload(instructor_client, sortie.id)
    page = parse(student_client.get(f"/sorties/{sortie.id}").text)
    assert [a for t, a in page.tags if t == "article" and a.get("class") == "detection"]
    assert not [a for t, a in page.tags if t == "form" and a.get("class") in ("accept-form", "track-import")]
    assert import_by_form(student_client, sortie.id).status_code == 403
