"""Builders for the invented test school; every name and figure is invented for the tests."""
import asyncio
from concurrent.futures import ThreadPoolExecutor
from contextlib import contextmanager
from dataclasses import dataclass
from html.parser import HTMLParser
from datetime import UTC, date, datetime

import httpx
from sqlalchemy import text
from sqlalchemy.orm import Session

from server.fleet.models import Aircraft, HelicopterType, Site
from server.training.models import Enrolment, Program
from server.logbook import access
from server.logbook import service as logbook
from server.logbook.models import Sortie
from server.logbook.schemas import AttemptFields, SortieCreate
from server.people import service as people
from server.people.models import Person

PASSWORD = "test-password-1"
WORLD_PROGRAM = "Enrolment of the test school (no lessons)"


@dataclass
class World:
    chief: Person
    instructor: Person
    other_instructor: Person
    student: Person
    other_student: Person
    helicopter: HelicopterType
    aircraft: Aircraft
    site: Site


def build_world(session: Session) -> World:
    def person(key, name, roles):
        return people.create_person(session, name=name, email=f"{key}@school.example", roles=roles,
                                    password=PASSWORD)

    helicopter = HelicopterType(
        designation="Wren W-1 (test)", rotor_radius_ft=12.5, blade_count=2, normal_rotor_rpm=530,
        nr_power_off_min_pct=90, nr_power_off_max_pct=108, autorotation_kias=65, reference_weight_lb=1400,
        flare_band_low_ft=70, flare_band_high_ft=110, touchdown_speed_max_kt=8,
        hv_avoid=[[[0, 10], [0, 400], [30, 300], [40, 100], [15, 10]]],
    )
    session.add(helicopter)
    session.flush()
    aircraft = Aircraft(registration="TS-WRA", type_id=helicopter.id)
    site = Site(name="Test Field", elevation_ft=500, landing_dirs_deg=[90, 270])
    session.add_all([aircraft, site])
    session.flush()
    world = World(
        chief=person("chief", "Chief Tester", ["chief_pilot", "instructor"]),
        instructor=person("instructor", "Ivo Instructor", ["instructor"]),
        other_instructor=person("other", "Olga Otherinstructor", ["instructor"]),
        student=person("student", "Sam Student", ["student"]),
        other_student=person("student2", "Tess Otherstudent", ["student"]),
        helicopter=helicopter, aircraft=aircraft, site=site,
    )
    # Who may see whom follows enrolment: each student is enrolled with their own instructor. The
    # program's level is "recurrent", the level a pilot outside any program is judged at, so the
    # standards that apply are those of an unenrolled pilot.
    syllabus = Program(name=WORLD_PROGRAM, level="recurrent")
    session.add(syllabus)
    session.flush()
    session.add_all([Enrolment(program_id=syllabus.id, student_id=world.student.id, instructor_id=world.instructor.id,
                               started_on=date(2026, 1, 5), active=True),
                     Enrolment(program_id=syllabus.id, student_id=world.other_student.id,
                               instructor_id=world.other_instructor.id, started_on=date(2026, 1, 5), active=True)])
    session.flush()
    return world


def make_sortie(session: Session, world: World, *, instructor: Person | None = None, pilot: Person | None = None,
                attempts: int = 0, sign: bool = False, flown_at: datetime | None = None, **conditions) -> Sortie:
    """A sortie through the service layer, with `attempts` ordinary straight-in touchdowns."""
    instructor = instructor or world.instructor
    data = SortieCreate(flown_at=flown_at or datetime(2026, 11, 20, 10, 0, tzinfo=UTC),
                        aircraft_id=world.aircraft.id, pilot_id=(pilot or world.student).id, site_id=world.site.id,
                        **({"oat_c": 15, "altimeter_hpa": 1013.25} | conditions))
    actor = session.get(Person, instructor.id)
    # A pilot not enrolled with this instructor: the chief pilot assigns the sortie, as a school would.
    assigner = actor if access.can_view_pilot(session, viewer=actor, pilot_id=data.pilot_id) \
        else session.get(Person, world.chief.id)
    if assigner is not actor:
        data = data.model_copy(update={"instructor_id": actor.id})
    sortie = logbook.create_sortie(session, actor=assigner, data=data)
    for _ in range(attempts):
        logbook.add_attempt(session, actor=actor, sortie=sortie, data=AttemptFields(
            maneuver="straight_in", termination="touchdown", descent_kias=65, nr_low_pct=95, nr_high_pct=104,
            flare_height_ft=90, touchdown_speed_kt=3, point_error_ft=20, heading_error_deg=2))
    if sign:
        session.flush()
        session.refresh(sortie)
        logbook.record_instructor_signature(session, actor=actor, sortie=sortie)
    session.commit()
    return sortie


def add_second_type(session: Session) -> Aircraft:
    """A second invented helicopter type with one aircraft, for checks that tell types apart."""
    other_type = HelicopterType(designation="Finch F-3 (test)", rotor_radius_ft=13, blade_count=3,
                                normal_rotor_rpm=500, nr_power_off_min_pct=90, nr_power_off_max_pct=108,
                                autorotation_kias=60, reference_weight_lb=1600, flare_band_low_ft=70,
                                flare_band_high_ft=110, touchdown_speed_max_kt=8, hv_avoid=[])
    session.add(other_type)
    session.flush()
    aircraft = Aircraft(registration="TS-FIN", type_id=other_type.id)
    session.add(aircraft)
    session.commit()
    return aircraft


class _InputValues(HTMLParser):
    def __init__(self):
        super().__init__()
        self.values = {}

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "input" and "name" in attrs:
            self.values[attrs["name"]] = attrs.get("value")


def input_values(html: str) -> dict:
    """name -> value of every input in a page or fragment, as a browser would submit it."""
    parser = _InputValues()
    parser.feed(html)
    return parser.values


@contextmanager
def audit_table_writable(connection):
    """Lift the audit table's append-only triggers inside one transaction, as only a test (or someone
    with the database's own rights) can: on SQLite drop and re-create them, on PostgreSQL run as a
    replica, for which ordinary triggers do not fire."""
    if connection.dialect.name == "postgresql":
        connection.execute(text("SET LOCAL session_replication_role = replica"))
        yield
        connection.execute(text("SET LOCAL session_replication_role = origin"))
        return
    triggers = connection.execute(text(
        "SELECT name, sql FROM sqlite_master WHERE type = 'trigger' AND tbl_name = 'audit_events'")).all()
    for name, _ in triggers:
        connection.execute(text(f'DROP TRIGGER "{name}"'))
    yield
    for _, sql in triggers:
        connection.execute(text(sql))


def parsed(answer) -> "BeautifulSoup":
    """A page or fragment parsed as a browser would read it, for checks by element rather than by substring."""
    from bs4 import BeautifulSoup

    return BeautifulSoup(answer.text, "html.parser")


def read_text(element) -> str:
    """An element's text as assistive technology reads it: shapes marked aria-hidden left out."""
    import copy

    element = copy.copy(element)
    for hidden in element.find_all(attrs={"aria-hidden": "true"}):
        hidden.decompose()
    return " ".join(element.get_text(" ").split())


def cell_texts(table) -> list[list[str]]:
    """The text of each body cell of a parsed table, row by row, as read aloud."""
    return [[read_text(cell) for cell in row.find_all(["th", "td"], recursive=False)]
            for row in table.find("tbody").find_all("tr", recursive=False)]


def post_at_once(app, token: str, posts: list[tuple[str, dict]]) -> list[httpx.Response]:
    """Send (path, JSON body) posts at once through the app on one event loop, as one server gets them.

    The loop runs in a thread of its own: the browser tests' Playwright keeps one running in this one.
    """
    async def send_all():
        transport = httpx.ASGITransport(app=app)
        async with httpx.AsyncClient(transport=transport, base_url="http://testserver",
                                     headers={"Authorization": f"Bearer {token}"}) as client:
            return await asyncio.gather(*[client.post(path, json=body) for path, body in posts])

    with ThreadPoolExecutor(max_workers=1) as pool:
        return pool.submit(asyncio.run, send_all()).result()
