"""A large invented school for the currency benchmark, inserted in bulk (core inserts, one transaction).

Every name and figure is invented. Sorties are mostly signed; some are drafts, some were amended and
re-signed (the old version stays as a row, its attempts copied), some attempts were taken over.
"""
import random
from datetime import UTC, date, datetime, time, timedelta

from sqlalchemy import insert
from sqlalchemy.engine import Engine

from server.models import (
    Aircraft,
    Attempt,
    CurrencyRule,
    HelicopterType,
    Person,
    PersonRole,
    School,
    Site,
    Sortie,
)

AS_OF = date(2026, 11, 30)
DAYS = 3 * 365
ATTEMPTS_PER_SORTIE = 4
MANEUVERS = ("straight_in", "turn_180", "turn_360", "hovering")
TERMINATIONS = ("power_recovery", "to_hover", "touchdown")
NOW = datetime(2026, 11, 30, 12, 0, tzinfo=UTC)


def rule_rows(type_ids: list[int]) -> list[dict]:
    """Twelve rules of the kinds a school writes: roles, maneuvers, terminations, types, windows."""
    first, second = type_ids[0], type_ids[1]
    base = {"applies_to_people": [], "maneuvers": [], "terminations": [], "type_ids": [], "with_instructor": None,
            "min_score": None, "require_satisfactory": True, "window_days": None, "window_months": None,
            "min_count": 1, "warn_days": 14, "active": True, "created_at": NOW}
    specs = [
        ("Students: touchdowns with an instructor, 30 days", ["student"],
         {"terminations": ["touchdown"], "with_instructor": True, "window_days": 30, "min_count": 2, "warn_days": 7}),
        ("Students: any autorotation, 14 days", ["student"], {"window_days": 14, "min_count": 1, "warn_days": 3}),
        ("Students: 180° turns, 60 days", ["student"], {"maneuvers": ["turn_180"], "window_days": 60, "min_count": 2}),
        ("Students: hovering autorotations, 90 days", ["student"],
         {"maneuvers": ["hovering"], "window_days": 90, "min_count": 1}),
        ("Instructors: three in 90 days", ["instructor"], {"window_days": 90, "min_count": 3}),
        ("Instructors: first type full touchdown, 6 calendar months", ["instructor"],
         {"terminations": ["touchdown"], "type_ids": [first], "window_months": 6, "min_score": 60, "warn_days": 21}),
        ("Instructors: second type, 3 calendar months", ["instructor"],
         {"type_ids": [second], "window_months": 3, "min_count": 2}),
        ("Instructors: 360° turns scoring 70, 12 calendar months", ["instructor"],
         {"maneuvers": ["turn_360"], "min_score": 70, "window_months": 12, "min_count": 2, "warn_days": 30}),
        ("Chief pilots: touchdowns, 60 days", ["chief_pilot"],
         {"terminations": ["touchdown"], "window_days": 60, "min_count": 2}),
        ("Everyone: power recovery, 45 days", ["student", "instructor"],
         {"terminations": ["power_recovery"], "window_days": 45, "min_count": 3}),
        ("Everyone: solo-free straight-ins, 120 days", [],
         {"maneuvers": ["straight_in"], "with_instructor": True, "window_days": 120, "min_count": 4}),
        ("Everyone: scoring 80, 24 calendar months", [],
         {"min_score": 80, "window_months": 24, "min_count": 5, "warn_days": 45}),
    ]
    return [base | {"name": name, "applies_to_roles": roles} | extra for name, roles, extra in specs]


def build_school(engine: Engine, *, attempts: int, pilots: int = 2000, seed: int = 20261130) -> dict:
    """Fill an empty, migrated database; returns counts of what was inserted."""
    rng = random.Random(seed)
    with engine.begin() as conn:
        conn.execute(insert(School.__table__), [{"id": 1, "name": "Bench Rotor School (invented)",
                                                 "timezone": "UTC", "demo": False}])
        type_rows = [dict(id=i + 1, designation=f"Bench B-{i + 1} (invented)", rotor_radius_ft=12.5 + i,
                          blade_count=2, rotor_inertia_slug_ft2=None, normal_rotor_rpm=530,
                          nr_power_off_min_pct=90, nr_power_off_max_pct=108, autorotation_kias=65,
                          reference_weight_lb=1400, flare_band_low_ft=70, flare_band_high_ft=110,
                          touchdown_speed_max_kt=8, hv_avoid=[]) for i in range(3)]
        conn.execute(insert(HelicopterType.__table__), type_rows)
        aircraft = [dict(id=i + 1, registration=f"BX-{i + 1:03d}", type_id=(i % 3) + 1, active=True) for i in range(12)]
        conn.execute(insert(Aircraft.__table__), aircraft)
        conn.execute(insert(Site.__table__), [{"id": 1, "name": "Bench Field", "elevation_ft": 400,
                                               "landing_dirs_deg": [90, 270]}])
        people, roles = [], []
        for pid in range(1, pilots + 1):
            people.append(dict(id=pid, name=f"Pilot {pid:04d}", email=f"p{pid}@bench.example",
                               password_hash="not-a-real-hash", active=rng.random() > 0.04, created_at=NOW))
            if pid <= 20:
                roles += [dict(person_id=pid, role="chief_pilot"), dict(person_id=pid, role="instructor")]
            elif pid <= 400:
                roles.append(dict(person_id=pid, role="instructor"))
            else:
                roles.append(dict(person_id=pid, role="student"))
        conn.execute(insert(Person.__table__), people)
        conn.execute(insert(PersonRole.__table__), roles)
        conn.execute(insert(CurrencyRule.__table__), rule_rows([1, 2]))

        instructors = list(range(1, 401))
        sortie_rows, attempt_rows = [], []
        sortie_id = attempt_id = 0
        start = AS_OF - timedelta(days=DAYS)

        def add_sortie(pilot, instructor, aircraft_id, flown_on, state, version=1, supersedes=None, copy_of=None):
            nonlocal sortie_id, attempt_id
            sortie_id += 1
            sortie_rows.append(dict(
                id=sortie_id, version=version, supersedes_id=supersedes, amendment_reason=None, state=state,
                flown_at=datetime.combine(flown_on, time(10), UTC), aircraft_id=aircraft_id,
                instructor_id=instructor, pilot_id=pilot, site_id=1, altimeter_unit="hPa", remarks="",
                created_by_id=instructor or pilot, created_at=NOW, updated_at=NOW))
            made = []
            for seq, values in enumerate(copy_of or _attempt_values(rng), start=1):
                attempt_id += 1
                made.append(values)
                attempt_rows.append(dict(id=attempt_id, sortie_id=sortie_id, sequence=seq, pilot_id=pilot,
                                         flown_on=flown_on, remarks="", parts={}, flags=[], within_tolerances=False,
                                         created_at=NOW, **values))
            return sortie_id, made

        while attempt_id < attempts:
            pilot = rng.randint(1, pilots)
            instructor = None if rng.random() < 0.1 else rng.choice([i for i in rng.sample(instructors, 2) if i != pilot])
            aircraft_id = rng.randint(1, 12)
            flown_on = start + timedelta(days=rng.randint(0, DAYS))
            draw = rng.random()
            state = "draft" if draw < 0.05 else "signed"
            sid, made = add_sortie(pilot, instructor, aircraft_id, flown_on, state)
            if state == "signed" and draw > 0.97:
                # Amended: a new version copies the attempts; half the amendments are signed again.
                add_sortie(pilot, instructor, aircraft_id, flown_on, "signed" if draw > 0.985 else "draft",
                           version=2, supersedes=sid, copy_of=made)
            if len(attempt_rows) >= 100_000:
                _flush(conn, sortie_rows, attempt_rows)
        _flush(conn, sortie_rows, attempt_rows)
    return {"pilots": pilots, "sorties": sortie_id, "attempts": attempt_id}


def _attempt_values(rng: random.Random) -> list[dict]:
    out = []
    for _ in range(ATTEMPTS_PER_SORTIE):
        maneuver = rng.choices(MANEUVERS, weights=(5, 3, 1, 2))[0]
        termination = "to_hover" if maneuver == "hovering" else rng.choice(("power_recovery", "touchdown"))
        takeover = rng.random() < 0.03
        satisfactory = not takeover and rng.random() < 0.85
        out.append(dict(maneuver=maneuver, termination=termination, takeover=takeover,
                        grade="satisfactory" if satisfactory else "unsatisfactory",
                        satisfactory=satisfactory, score=round(rng.uniform(30, 100), 1)))
    return out


def _flush(conn, sortie_rows: list, attempt_rows: list) -> None:
    if sortie_rows:
        conn.execute(insert(Sortie.__table__), sortie_rows)
    if attempt_rows:
        conn.execute(insert(Attempt.__table__), attempt_rows)
    sortie_rows.clear()
    attempt_rows.clear()
