"""The progress file page: who may open it, the state words, the charts and the program position."""
from datetime import date, timedelta

from server.progress.charts import ChartData, trend_chart_svg
from server.training.models import Enrolment, Lesson, LessonRequirement, Program, Stage
from tests.progress.helpers import GOOD, POOR, fly, parse, recently


def _enrol(db, world, *, needed: int = 3) -> Enrolment:
    program = Program(name="Test syllabus", level="private")
    stage = Stage(position=1, name="Stage 1: to the ground")
    lesson = Lesson(position=1, name="Straight-in to touchdown")
    lesson.requirements = [LessonRequirement(maneuver="straight_in", termination="touchdown", attempts_needed=needed)]
    stage.lessons = [lesson]
    program.stages = [stage]
    db.add(program)
    db.flush()
    enrolment = Enrolment(program_id=program.id, student_id=world.student.id, instructor_id=world.instructor.id,
                          started_on=recently().date() - timedelta(days=30))
    db.add(enrolment)
    db.commit()
    return enrolment


def test_student_sees_program_position_states_in_words_charts_and_recent_attempts(db, world, student_client):
    _enrol(db, world, needed=5)  # enrolled 30 days before the flights
    fly(db, world, [POOR, GOOD, GOOD, GOOD], day=0, start=recently())
    fly(db, world, [GOOD | {"maneuver": "turn_180", "termination": "power_recovery"}], day=1, start=recently())
    page = student_client.get(f"/people/{world.student.id}/progress")
    assert page.status_code == 200
    doc = parse(page.text)
    assert "Progress file: Sam Student" in doc.find("h1").text()
    assert doc.find("aside", "caution")  # computed flying figures carry the caution
    program = doc.find("section", **{"aria-labelledby": "program-h"}).text()
    assert "Now in Stage 1: to the ground, lesson Straight-in to touchdown" in program
    assert "3 of 5 inside every tolerance" in program
    needed = doc.find("section", **{"aria-labelledby": "next-h"}).text()
    assert "2 more straight-in autorotations (full touchdown) inside every tolerance" in needed
    rows = {row.find("th").text().split(" 1 attempt")[0].split(" 4 attempts")[0]: row
            for row in doc.find("table", "kinds").find_all("tr")[1:]}
    assert set(rows) == {"Straight-in, full touchdown", "180° turn, power recovery"}
    # The state in words with a shape beside it, never colour alone.
    state = rows["Straight-in, full touchdown"].find("span", "prof")
    assert state.text() == "★ At standard"
    assert state.find("span", "shape").attrs["aria-hidden"] == "true"
    assert rows["180° turn, power recovery"].find("span", "prof").text() == "◐ Practising"
    assert "too few attempts to say" in rows["180° turn, power recovery"].text()
    # Two charts for the most recent kind, each with its summary in words beside it.
    figures = doc.find_all("figure", "chart")
    assert len(figures) == 2
    assert figures[0].find("svg").find("title").text().startswith("Touchdown speed")
    # The caption speaks the pilot's language; the statistics are named in the footnote for instructors.
    assert figures[0].find("figcaption").text() == "Your one touchdown so far was at 3 kt, at or under the 8 kt maximum."
    assert "EWMA" not in figures[0].find("figcaption").text()
    note = doc.find("div", id="stats-note").text()
    assert "NIST/SEMATECH" in note and "Touchdown speed over the last 1 attempt" in note
    assert len(doc.find("table", "recent").find_all("tr")) == 1 + 5


def test_a_chosen_kind_comes_back_as_the_charts_fragment_for_htmx(db, world, student_client):
    fly(db, world, [GOOD, GOOD | {"maneuver": "turn_180", "termination": "power_recovery"}], day=0)
    answer = student_client.get(f"/people/{world.student.id}/progress?kind=straight_in.touchdown",
                                headers={"HX-Request": "true"})
    assert answer.status_code == 200 and "HX-Request" in answer.headers["Vary"]
    doc = parse(answer.text)
    assert not doc.find_all("h1")  # only the fragment
    assert doc.find("section", id="charts").find("h2").text() == "Trends: Straight-in, full touchdown"


def test_a_student_cannot_open_another_students_file(world, other_student_client):
    assert other_student_client.get(f"/people/{world.student.id}/progress").status_code == 404


def test_an_instructor_opens_their_students_files_and_not_others(db, world, instructor_client, other_instructor_client):
    fly(db, world, [GOOD], day=0)
    listing = parse(instructor_client.get("/progress").text)
    names = [a.text() for a in listing.find("ul", "pilot-list").find_all("a")]
    assert "Sam Student" in names and "Tess Otherstudent" not in names
    page = instructor_client.get(f"/people/{world.student.id}/progress")
    assert page.status_code == 200
    # The currency section is the student's, not the viewer's.
    currency = parse(page.text).find("div", id="own-currency")
    assert currency.find("h2").text() == "Currency"
    loader = next(d for d in currency.find_all("div") if "hx-get" in d.attrs)
    assert loader.attrs["hx-get"].endswith(f"/currency/people/{world.student.id}")
    assert other_instructor_client.get(f"/people/{world.student.id}/progress").status_code == 404


def test_a_student_going_to_progress_lands_on_their_own_file(world, student_client):
    answer = student_client.get("/progress")
    assert answer.status_code == 303
    assert answer.headers["location"].endswith(f"/people/{world.student.id}/progress")


def test_instructor_confirms_a_met_lesson_from_the_file(db, world, instructor_client, student_client):
    enrolment = _enrol(db, world, needed=2)
    fly(db, world, [GOOD, GOOD], day=0, start=recently())
    page = parse(instructor_client.get(f"/people/{world.student.id}/progress").text)
    action = f"/enrolments/{enrolment.id}/lessons/{enrolment_lesson(db, enrolment)}/confirm"
    form = next(f for f in page.find_all("form") if f.attrs.get("action", "").endswith(action))
    assert form.find("button").text().startswith("Confirm this lesson")
    answer = instructor_client.form_post(form.attrs["action"])
    assert answer.status_code == 303
    program = parse(student_client.get(f"/people/{world.student.id}/progress").text).find(
        "section", **{"aria-labelledby": "program-h"}).text()
    assert "confirmed by Ivo Instructor" in program
    # The student sees no confirm button on their own file.
    assert "Confirm this lesson" not in student_client.get(f"/people/{world.student.id}/progress").text


def enrolment_lesson(db, enrolment) -> int:
    program = db.get(Program, enrolment.program_id)
    return program.stages[0].lessons[0].id


def _chart(values, band_high, **extra) -> str:
    n = len(values)
    return trend_chart_svg(ChartData(
        chart_id="t", title="Touchdown speed, test", quantity="Touchdown speed", unit="kt", values=values,
        dates=[date(2026, 9, 1 + i) for i in range(n)], band_low=[0.0] * n, band_high=[band_high] * n,
        ewma=extra.get("ewma", values), ucl=extra.get("ucl", [v + 2 for v in values]),
        lcl=extra.get("lcl", [v - 2 for v in values])))


def test_chart_has_band_ewma_limits_units_and_a_shape_for_each_attempt():
    svg = parse(_chart([3.0, 9.5, 5.0], 8.0))
    root = svg.find("svg")
    assert root.attrs["role"] == "img" and root.find("desc").text().startswith("Touchdown speed over the last 3")
    assert len(root.find_all("polygon", "band")) == 1
    assert len(root.find_all("polyline", "ewma")) == 1
    assert {tuple(sorted(p.classes)) for p in root.find_all("polyline", "limit")} == {("lcl", "limit"), ("limit", "ucl")}
    # 9.5 kt is over the 8 kt maximum: a hollow diamond; the others are filled circles.
    assert len(root.find_all("circle", "inside")) == 2
    outside = root.find_all("polygon", "outside")
    assert len(outside) == 1 and "9.5 kt, outside the band" in outside[0].text()
    labels = [t.text() for t in root.find_all("text")]
    assert "Touchdown speed (kt)" in labels
    # The x axis counts attempts, so its ticks are attempt numbers; the dates they span are said once.
    assert [label for label in labels if label.startswith("#")] == ["#1", "#2", "#3"]
    assert "Attempt number, in flight order (01 Sep 2026 to 03 Sep 2026)" in labels


def test_a_chart_of_the_last_attempts_numbers_them_from_the_pilots_first():
    svg = trend_chart_svg(ChartData(
        chart_id="t", title="Flare height, test", quantity="Flare height", unit="ft AGL", values=[90.0, 95.0],
        dates=[date(2026, 9, 1), date(2026, 9, 2)], band_low=[70.0] * 2, band_high=[110.0] * 2, ewma=[90.0, 92.0],
        ucl=[100.0] * 2, lcl=[80.0] * 2, first_number=61, count_noun="flare"))
    labels = [t.text() for t in parse(svg).find_all("text")]
    assert [label for label in labels if label.startswith("#")] == ["#61", "#62"]
    assert "Flare number, in flight order (01 Sep 2026 to 02 Sep 2026)" in labels


def test_chart_axis_covers_the_limits_and_the_band():
    svg = _chart([3.0, 4.0], 8.0, ucl=[13.0, 13.0], lcl=[-1.0, -1.0])
    ticks = [float(t.text()) for t in parse(svg).find_all("text", **{"text-anchor": "end"}) if t.text().lstrip("-").replace(".", "").isdigit()]
    assert min(ticks) <= -1.0 and max(ticks) >= 13.0


def test_an_empty_chart_says_so_in_words():
    svg = parse(_chart([], 8.0))
    assert "No attempts recorded yet." in svg.find("svg").text()
