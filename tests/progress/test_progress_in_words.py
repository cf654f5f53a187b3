"""The progress file as a student reads it: charts said in sentences, the program position at the first
lesson not yet met, and the records waiting for their acknowledgement, acknowledged from there.

Expected figures come from outside the code under test: averages from Python's `statistics.mean`, and
"inside the band" by plain comparisons of each stored flare height with its stored band; a lesson is met
when its signed attempts inside every tolerance reach the number asked (the syllabus's own rule).
"""
from datetime import date, timedelta
from statistics import mean

from server.logbook.models import Sortie
from server.progress.charts import ChartData
from server.progress.file import flare_words, touchdown_words
from server.training.models import Enrolment, Lesson, LessonRequirement, Program, Stage
from tests.progress.helpers import GOOD, fly, recently
from tests.support import parsed, read_text


def _touchdowns(values: list[float], maximum: float = 8.0) -> ChartData:
    n = len(values)
    return ChartData(chart_id="t", title="t", quantity="Touchdown speed", unit="kt", values=values,
                     dates=[date(2026, 9, 1) + timedelta(days=i) for i in range(n)], band_low=[0.0] * n,
                     band_high=[maximum] * n, ewma=values, ucl=values, lcl=values)


def _flares(values: list[float], low: float = 70, high: float = 110) -> ChartData:
    n = len(values)
    return ChartData(chart_id="f", title="f", quantity="Flare height", unit="ft AGL", values=values,
                     dates=[date(2026, 9, 1) + timedelta(days=i) for i in range(n)], band_low=[low] * n,
                     band_high=[high] * n, ewma=values, ucl=values, lcl=values)


def test_touchdowns_getting_slower_are_said_with_both_averages():
    before = [7.0, 6.5, 7.5, 6.0, 8.5, 7.0, 9.0, 6.5, 7.0, 6.0]
    last = [3.0, 2.5, 2.0, 1.5, 2.0, 2.5, 1.0, 2.0, 3.0, 1.5]
    text = touchdown_words(_touchdowns(before + last))
    assert text.startswith("Your touchdowns are getting slower, which is what you want: ")
    assert f"{mean(last):.1f} kt on average over your last 10" in text
    assert f"down from {mean(before):.1f} kt over the 10 before" in text
    assert "10 of these 10 stayed at or under the 8 kt maximum." in text
    assert "EWMA" not in text and "λ" not in text


def test_touchdowns_getting_faster_and_holding_steady():
    last = [6.0, 9.0, 7.0, 10.0, 6.0, 8.0, 9.0, 7.0, 6.0, 9.0]
    faster = touchdown_words(_touchdowns([2.0] * 10 + last))
    assert faster.startswith("Your touchdowns are getting faster") and "Ask your instructor" in faster
    assert f"{sum(v <= 8 for v in last)} of these 10 stayed at or under the 8 kt maximum." in faster
    steady = touchdown_words(_touchdowns([3.0] * 10 + [3.2] * 10))  # 0.2 kt: within a twentieth of 8 kt
    assert steady.startswith("Your touchdowns are holding steady: 3.2 kt on average")
    few = touchdown_words(_touchdowns([4.0, 6.0, 5.0]))
    assert few == f"Your touchdowns average {mean([4.0, 6.0, 5.0]):.0f} kt over your last 3. 3 of these 3 stayed at or under the 8 kt maximum."


def test_flares_are_counted_inside_the_band_and_the_misses_named():
    before = [90, 100, 60, 95, 120, 85, 90, 100, 105, 65]
    last = [90, 50, 60, 100, 95, 105, 85, 65, 80, 125]
    inside = sum(70 <= v <= 110 for v in last)
    text = flare_words(_flares(before + last))
    assert text.startswith(f"Of your last 10 flares, {inside} began inside the expected band "
                           f"({sum(70 <= v <= 110 for v in before)} of the 10 before).")
    assert "Outside the band: 3 too low and 1 too high. Low means the flare began late." in text
    assert flare_words(_flares([90])) == ("Your one flare so far began inside the expected band. "
                                         "The band moves with each day's density altitude and weight.")


def _two_lessons(db, world) -> Enrolment:
    program = Program(name="Words syllabus (test)", level="private")
    stage = Stage(position=1, name="Stage 1")
    first = Lesson(position=1, name="Straight-in to touchdown")
    first.requirements = [LessonRequirement(maneuver="straight_in", termination="touchdown", attempts_needed=2)]
    second = Lesson(position=2, name="180° turns to power recovery")
    second.requirements = [LessonRequirement(maneuver="turn_180", termination="power_recovery", attempts_needed=2)]
    stage.lessons = [first, second]
    program.stages = [stage]
    db.add(program)
    db.flush()
    enrolment = Enrolment(program_id=program.id, student_id=world.student.id, instructor_id=world.instructor.id,
                          started_on=recently().date() - timedelta(days=30))
    db.add(enrolment)
    db.commit()
    return enrolment


def test_the_program_position_follows_the_first_lesson_not_yet_met(db, world, student_client):
    _two_lessons(db, world)
    fly(db, world, [GOOD, GOOD], day=0, start=recently())  # the first lesson is met, not yet confirmed
    page = parsed(student_client.get(f"/people/{world.student.id}/progress"))
    program = read_text(page.find("section", attrs={"aria-labelledby": "program-h"}))
    assert " ".join(page.find("p", class_="position").get_text().split()) == (
        "Now in Stage 1, lesson 180° turns to power recovery.")
    assert "2 of 2 inside every tolerance, counted since enrolment (not necessarily in a row)" in program
    needed = [read_text(li) for li in page.find("section", attrs={"aria-labelledby": "next-h"}).find_all("li")]
    assert needed == [
        "180° turns to power recovery: 2 more 180° turn autorotations (power recovery) inside every tolerance.",
        "Straight-in to touchdown: the signed records meet it; an instructor confirms it next.",
    ]
    kinds = page.find("table", class_="kinds")
    assert "2 in a row inside every tolerance now; the standard asks 3" in read_text(kinds)


def test_a_student_acknowledges_a_waiting_record_from_their_file(db, world, student_client, instructor_client):
    read = fly(db, world, [GOOD], day=0, start=recently())
    unread = fly(db, world, [GOOD, GOOD], day=1, start=recently())
    fly(db, world, [GOOD], day=2, start=recently(), sign=False)  # a draft waits for no one
    page = parsed(student_client.get(f"/people/{world.student.id}/progress"))
    waiting = page.find("section", attrs={"aria-labelledby": "waiting-h"})
    assert read_text(waiting.find("h2")) == "Waiting for your acknowledgement"
    items = waiting.find_all("li")
    assert [li.find("a")["href"].rsplit("/", 1)[1] for li in items] == [str(unread.id), str(read.id)]
    form = items[1].find("form")
    fields = {i["name"]: i.get("value") for i in form.find_all("input")}
    answer = student_client.form_post(form["action"], {"back": fields["back"]})
    assert answer.status_code == 303 and answer.headers["location"].endswith(
        f"/people/{world.student.id}/progress#waiting-h")
    db.expire_all()
    after = parsed(student_client.get(f"/people/{world.student.id}/progress"))
    left = after.find("section", attrs={"aria-labelledby": "waiting-h"}).find_all("li")
    assert [li.find("a")["href"].rsplit("/", 1)[1] for li in left] == [str(unread.id)]
    assert student_client.get(f"/sorties/{read.id}").status_code == 200
    assert db.get(Sortie, read.id).state == "signed"
    # The instructor sees what waits for the student, without a button to acknowledge for them.
    theirs = parsed(instructor_client.get(f"/people/{world.student.id}/progress"))
    section = theirs.find("section", attrs={"aria-labelledby": "waiting-h"})
    assert read_text(section.find("h2")) == "Waiting for Sam Student's acknowledgement"
    assert section.find("form") is None
