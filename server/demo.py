"""The invented demo school: Larkspur Rotor School, its people, one invented helicopter type,
three aircraft, three sites, a syllabus, standards, currency rules and months of sorties.

Every name, registration and figure here is invented for the demo; none describes a real school,
person or aircraft.
"""
import random
from datetime import UTC, date, datetime, time, timedelta

from sqlalchemy.orm import Session

from server.compute.track_synthetic import DemoAutorotation, synthetic_track_csv
from server.currency import kept
from server.currency.models import CurrencyRule
from server.fleet.models import Aircraft, HelicopterType, Site
from server.logbook import service as logbook
from server.logbook import tracks
from server.logbook.schemas import AttemptFields, SortieCreate
from server.people import service as people
from server.people.routes import DEMO_PASSWORD
from server.training.models import Enrolment, Lesson, LessonRequirement, Program, Stage, Standard

SCHOOL_NAME = "Larkspur Rotor School (invented demo)"
DOMAIN = "larkspur-rotor.example"

PEOPLE = [
    # key, name, roles
    ("chief", "Mara Quillfeather", ["chief_pilot", "instructor"]),
    ("ines", "Ines Valdarro", ["instructor"]),
    ("tomas", "Tomas Brekke", ["instructor"]),
    ("ada", "Ada Finchley", ["student"]),
    ("bram", "Bram Osterhout", ["student"]),
    ("carys", "Carys Dunmore", ["student"]),
    ("dev", "Dev Pallister", ["student"]),
    ("elin", "Elin Marchetti", ["student"]),
]

# Each student: usual instructor, first week flown (weeks before today), last week flown, skill growth.
STUDENTS = {
    "ada": ("ines", 24, 0, 1.0),
    "bram": ("ines", 20, 1, 0.7),
    "carys": ("tomas", 30, 12, 1.6),  # reached standard, then stopped flying three months ago: lapsed and rusty
    "dev": ("tomas", 10, 0, 0.5),
    "elin": ("ines", 3, 0, 0.3),  # just started
}


def _kestrel() -> HelicopterType:
    # An invented two-seat piston trainer with plausible light-helicopter figures.
    return HelicopterType(
        designation="Kestrel K-2 (invented)", rotor_radius_ft=12.8, blade_count=2, rotor_inertia_slug_ft2=None,
        normal_rotor_rpm=530, nr_power_off_min_pct=90, nr_power_off_max_pct=108, autorotation_kias=65,
        reference_weight_lb=1450, flare_band_low_ft=70, flare_band_high_ft=110, touchdown_speed_max_kt=8,
        hv_avoid=[
            [[0, 12], [0, 450], [12, 440], [25, 330], [35, 180], [30, 60], [15, 20]],
            [[55, 0], [120, 0], [120, 25], [70, 15]],
        ],
    )


def load_demo(session: Session, *, today: date | None = None, seed: int = 7) -> str:
    """Fill an empty database with the demo school; flights end on `today`."""
    today = today or datetime.now(UTC).date()
    rng = random.Random(seed)
    school = people.school(session)
    school.name, school.timezone, school.demo = SCHOOL_NAME, "UTC", True

    who = {}
    for key, name, roles in PEOPLE:
        who[key] = people.create_person(session, name=name, email=f"{key}@{DOMAIN}", roles=roles,
                                        password=DEMO_PASSWORD)

    kestrel = _kestrel()
    session.add(kestrel)
    session.flush()
    aircraft = [Aircraft(registration=r, type_id=kestrel.id) for r in ("FB-KTA", "FB-KTB", "FB-KTC")]
    # Aim points are invented coordinates, for distances measured from the demo's invented tracks.
    sites = [
        Site(name="Larkspur Field", elevation_ft=420, landing_dirs_deg=[90, 270], aim_lat_deg=51.0312,
             aim_lon_deg=-2.4127),
        Site(name="Highmoor practice area", elevation_ft=2150, landing_dirs_deg=[180, 360], aim_lat_deg=51.1874,
             aim_lon_deg=-2.6351),
        Site(name="Saltmarsh strip", elevation_ft=30, landing_dirs_deg=[140, 320]),
    ]
    session.add_all(aircraft + sites)
    session.flush()

    _standards(session)
    program = _program(session)
    for key, (instructor, first_week, _last, _growth) in STUDENTS.items():
        # Each student's stage checks are signed by the other line instructor (the chief pilot may too).
        checker = "tomas" if instructor == "ines" else "ines"
        session.add(Enrolment(program_id=program.id, student_id=who[key].id, instructor_id=who[instructor].id,
                              check_instructor_id=who[checker].id, started_on=today - timedelta(weeks=first_week)))
    _rules(session, kestrel.id)
    session.flush()

    count = 0
    for key, (instructor, first_week, last_week, growth) in STUDENTS.items():
        for week in range(first_week, last_week - 1, -1):
            flown = today - timedelta(weeks=week, days=rng.randint(0, 3))
            progress = (first_week - week) / max(first_week, 1) * growth
            draft = week == 0 and key == "ada"
            # Ada's latest sorties carry invented recorded tracks, so measured figures show on first start.
            with_track = key == "ada" and week <= 2
            count += _sortie(session, rng, who[instructor], who[key], rng.choice(aircraft),
                             sites[0] if with_track else rng.choice(sites), flown, progress, sign=not draft,
                             with_track=with_track)
    # Recurrent training: the instructors fly with the chief pilot, and the chief pilot with Ines.
    for key, instructor, weeks in (("ines", "chief", (22, 9, 2)), ("tomas", "chief", (25, 15)),
                                   ("chief", "ines", (20, 7))):
        for week in weeks:
            flown = today - timedelta(weeks=week, days=1)
            # The chief pilot assigns recurrent training: Ines has no enrolment with the chief pilot.
            count += _sortie(session, rng, who[instructor], who[key], aircraft[0], sites[0], flown, 1.0, sign=True,
                             assigned_by=who["chief"])
    # The example rules went in as rows, not through the rules service: the board's kept state from scratch.
    kept.rebuild(session)
    return f"Loaded {SCHOOL_NAME}: {len(PEOPLE)} people, {count} practice autorotations. Password: {DEMO_PASSWORD}"


def _sortie(session, rng, instructor, pilot, aircraft, site, flown_on: date, progress: float, *, sign: bool,
            with_track: bool = False, assigned_by=None) -> int:
    """One sortie of 3 to 6 attempts whose quality follows the pilot's progress (0 new, 1 at standard)."""
    when = datetime.combine(flown_on, time(hour=rng.choice((8, 10, 13, 15)), minute=rng.choice((0, 30))), UTC)
    summer = 1 - abs(flown_on.month - 7) / 6
    sortie = logbook.create_sortie(session, actor=assigned_by or instructor, data=SortieCreate(
        flown_at=when, aircraft_id=aircraft.id, pilot_id=pilot.id, site_id=site.id, instructor_id=instructor.id,
        oat_c=round(4 + 24 * summer + rng.uniform(-4, 4)), altimeter_hpa=round(rng.uniform(1002, 1028)),
        wind_dir_deg=rng.choice((70, 90, 110, 250, 270, 290, 180, 350)), wind_kt=rng.randint(3, 16),
        takeoff_weight_lb=rng.randint(1280, 1460), remarks="",
    ))
    direction = min(site.landing_dirs_deg, key=lambda d: abs(((sortie.wind_dir_deg - d + 180) % 360) - 180))
    n = rng.randint(3, 6)
    for i in range(n):
        skill = min(1.0, progress + rng.uniform(-0.15, 0.1))
        maneuver = rng.choices(("straight_in", "turn_180", "turn_360", "hovering"),
                               weights=(5, 3 * progress + 0.5, progress, 1.5 * progress))[0]
        termination = "to_hover" if maneuver == "hovering" else rng.choices(
            ("power_recovery", "touchdown"), weights=(3, 1 + 3 * progress))[0]
        hovering = maneuver == "hovering"
        low_rpm = rng.random() < 0.12 * (1 - skill)
        takeover = rng.random() < 0.06 * (1 - skill)
        data = AttemptFields(
            maneuver=maneuver, termination=termination, landing_dir_deg=direction,
            entry_height_ft=rng.choice((3, 4, 5)) if hovering else rng.choice((500, 600, 700, 100 if skill < 0.2 and rng.random() < 0.3 else 600)),
            entry_kias=0 if hovering else rng.choice((60, 65, 70, 20 if skill < 0.2 and rng.random() < 0.3 else 65)),
            descent_kias=None if hovering else round(65 + rng.gauss(0, 8 * (1.2 - skill))),
            nr_low_pct=None if hovering else round(rng.uniform(84, 89) if low_rpm else rng.uniform(92, 98), 1),
            nr_high_pct=None if hovering else round(rng.uniform(100, 106), 1),
            flare_height_ft=None if hovering else max(20, round(rng.gauss(92, 6 + 35 * (1 - skill)))),
            touchdown_speed_kt=round(max(0.0, rng.gauss(0.5 + 4 * (1 - skill), 0.7) if hovering
                                     else rng.gauss(2 + 10 * (1 - skill), 2)), 1),
            point_error_ft=round(rng.gauss(0, 40 + 220 * (1 - skill))) if termination == "touchdown" else None,
            heading_error_deg=round(rng.gauss(0, 3 + 10 * (1 - skill))),
            takeover=takeover,
            grade="unsatisfactory" if takeover or low_rpm else ("satisfactory" if skill > 0.55 else None),
            remarks="Instructor recovered: rotor RPM decaying." if takeover else "",
        )
        logbook.add_attempt(session, actor=instructor, sortie=sortie, data=data)
    session.flush()
    session.refresh(sortie)
    if with_track:
        _demo_track(session, rng, instructor, sortie, accept=sign)
    if sign:
        signature = logbook.record_instructor_signature(session, actor=instructor, sortie=sortie)
        # Signed at the debrief, not when the demo was loaded (the audit entry keeps the load time).
        signature.signed_at = when + timedelta(hours=2)
    return n


def _demo_track(session, rng, instructor, sortie, *, accept: bool) -> None:
    """An invented track of the sortie's forward-flight autorotations; on a signed sortie they are accepted."""
    flown = [a for a in sortie.attempts if a.maneuver != "hovering" and (a.entry_height_ft or 0) >= 400]
    ends = {"power_recovery": "recovery", "touchdown": "touchdown", "to_hover": "hover"}
    plan = [DemoAutorotation(end=ends[a.termination], entry_ft=a.entry_height_ft, rate_fpm=rng.randint(1400, 1800),
                             flare_ft=max(40.0, a.flare_height_ft or 90.0), end_kt=min(12.0, a.touchdown_speed_kt or 4.0))
            for a in flown]
    if not plan:
        return
    site = sortie.site
    data = synthetic_track_csv(started_at=sortie.flown_at, aim_lat_deg=site.aim_lat_deg, aim_lon_deg=site.aim_lon_deg,
                               elevation_ft=site.elevation_ft, autorotations=plan, seed=sortie.id)
    track = tracks.import_track(session, actor=instructor, sortie=sortie, data=data,
                                filename=f"invented-track-{sortie.flown_at:%Y%m%d}.csv", max_bytes=len(data))
    if accept and len(track.detections) == len(flown):
        for detection, attempt in zip(track.detections, flown):
            if (detection["termination"] == "power_recovery") == (attempt.termination == "power_recovery"):
                tracks.accept_detection(session, actor=instructor, track=track, index=detection["index"],
                                        attempt_id=attempt.id)
    session.refresh(sortie)


def _standards(session: Session) -> None:
    """School standards, the school's own choice (defaults follow the design's starting values)."""
    for level, speed, point, needed, threshold in (("private", 8, 200, 3, 75), ("recurrent", 6, 150, 2, 80)):
        session.add(Standard(name=f"{level.title()} autorotation standard", level=level, maneuver=None,
                             airspeed_tol_kt=5, touchdown_speed_max_kt=speed, touchdown_point_ft=point,
                             heading_tol_deg=10, consecutive_needed=needed, threshold=threshold, decay_days=60))
    session.add(Standard(name="Private hovering autorotation", level="private", maneuver="hovering",
                         airspeed_tol_kt=5, touchdown_speed_max_kt=3, touchdown_point_ft=30, heading_tol_deg=10,
                         consecutive_needed=3, threshold=75, decay_days=60))


def _program(session: Session) -> Program:
    program = Program(name="Private helicopter: autorotation syllabus", level="private",
                      description="From the first straight-in entry to touchdowns and hovering autorotations.")
    plan = [
        ("Stage 1: entries and power recoveries", [
            ("Straight-in entries to power recovery", [("straight_in", "power_recovery", 6)]),
            ("180° turns to power recovery", [("turn_180", "power_recovery", 4)]),
        ]),
        ("Stage 2: to the ground", [
            ("Straight-in to full touchdown", [("straight_in", "touchdown", 4)]),
            ("180° turns to full touchdown", [("turn_180", "touchdown", 3)]),
        ]),
        ("Stage 3: hovering and 360° autorotations", [
            ("Hovering autorotations", [("hovering", "to_hover", 5)]),
            ("360° turns to power recovery", [("turn_360", "power_recovery", 3)]),
        ]),
    ]
    for s_pos, (stage_name, lessons) in enumerate(plan, start=1):
        stage = Stage(position=s_pos, name=stage_name)
        for l_pos, (lesson_name, requirements) in enumerate(lessons, start=1):
            lesson = Lesson(position=l_pos, name=lesson_name)
            lesson.requirements = [LessonRequirement(maneuver=m, termination=t, attempts_needed=k)
                                   for m, t, k in requirements]
            stage.lessons.append(lesson)
        program.stages.append(stage)
    session.add(program)
    session.flush()
    return program


def _rules(session: Session, type_id: int) -> None:
    """Example currency rules, in the school's own words."""
    session.add_all([
        CurrencyRule(name="Students: touchdown practice with an instructor every 30 days",
                     applies_to_roles=["student"], terminations=["touchdown", "to_hover"], with_instructor=True,
                     window_days=30, min_count=2, warn_days=7),
        CurrencyRule(name="Instructors: three practice autorotations in 90 days",
                     applies_to_roles=["instructor"], window_days=90, min_count=3, warn_days=14),
        CurrencyRule(name="Instructors: Kestrel full touchdown within 6 calendar months",
                     applies_to_roles=["instructor"], terminations=["touchdown"], type_ids=[type_id],
                     window_months=6, min_count=1, warn_days=21, min_score=60),
        CurrencyRule(name="Instructors: a checked autorotation with another instructor aboard every 120 days",
                     applies_to_roles=["instructor"], with_instructor=True, window_days=120, min_count=1,
                     warn_days=21),
    ])
