"""Trends and the progress file tell measured figures from observed ones, and can use measured ones only."""
from html.parser import HTMLParser

from tests.support import PASSWORD
from tests.logbook.test_tracks_api import sortie, upload  # noqa: F401 (fixture)


def signed_sortie_with_one_measured_and_one_typed(client, sortie_id) -> dict:
    track = upload(client, sortie_id).json()
    measured = client.api("POST", f"/api/v1/tracks/{track['id']}/detections/1/accept",
                          json={"maneuver": "straight_in", "termination": "touchdown"}).json()
    typed = client.api("POST", f"/api/v1/sorties/{sortie_id}/attempts",
                       json={"maneuver": "straight_in", "termination": "touchdown", "flare_height_ft": 90,
                             "touchdown_speed_kt": 3}).json()
    assert client.api("POST", f"/api/v1/sorties/{sortie_id}/sign", json={"password": PASSWORD}).status_code == 200
    return {"measured": measured, "typed": typed}


def test_the_trends_api_marks_measured_values_and_filters_to_them(instructor_client, sortie, world):
    attempts = signed_sortie_with_one_measured_and_one_typed(instructor_client, sortie.id)
    url = f"/api/v1/people/{world.student.id}/trends?maneuver=straight_in&termination=touchdown"
    every = instructor_client.api("GET", url).json()
    touchdown = every["metrics"]["touchdown_speed_kt"]
    assert touchdown["attempt_ids"] == [attempts["measured"]["id"], attempts["typed"]["id"]]
    assert touchdown["measured"] == [True, False]
    assert every["metrics"]["nr_dev_pct"]["measured"] == []  # nothing recorded, nothing measured
    only = instructor_client.api("GET", url + "&source=measured").json()
    assert only["source"] == "measured"
    assert only["metrics"]["touchdown_speed_kt"]["attempt_ids"] == [attempts["measured"]["id"]]
    assert only["metrics"]["touchdown_speed_kt"]["values"] == [attempts["measured"]["touchdown_speed_kt"]]
    assert only["metrics"]["score"]["values"] == []  # a score is never measured
    assert instructor_client.api("GET", url + "&source=guessed").status_code == 422


class Shapes(HTMLParser):
    def __init__(self):
        super().__init__()
        self.points: list[str] = []

    def handle_starttag(self, tag, attrs):
        classes = dict(attrs).get("class") or ""
        if "attempt" in classes.split() and tag in ("circle", "polygon", "rect"):
            self.points.append(f"{tag}:{classes}")


def chart_points(html: str) -> list[str]:
    shapes = Shapes()
    shapes.feed(html)
    return shapes.points


def test_the_progress_file_draws_measured_points_as_squares_and_can_chart_them_alone(instructor_client, sortie,
                                                                                      world):
    signed_sortie_with_one_measured_and_one_typed(instructor_client, sortie.id)
    page = instructor_client.get(f"/people/{world.student.id}/progress?kind=straight_in.touchdown")
    assert page.status_code == 200
    points = chart_points(page.text)
    squares = [p for p in points if p.startswith("rect:") and "measured" in p]
    assert len(squares) == 2 and len(points) == 4  # touchdown speed and flare height, one measured each
    assert "Show measured figures only" in page.text
    only = chart_points(instructor_client.get(
        f"/people/{world.student.id}/progress?kind=straight_in.touchdown&source=measured").text)
    assert len(only) == 2 and all(p.startswith("rect:") for p in only)
