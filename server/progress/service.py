"""A pilot's trends and proficiency per kind of autorotation, read from the counted records.

Which attempts count is `server.logbook.counted`; the math is `server.compute.proficiency`.
"""
from datetime import date

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.compute.proficiency import (
    METRICS,
    SCORE_RANGE,
    TOLERANCE_PART,
    AttemptPoint,
    KindTrend,
    StandardUsed,
    flare_deviation_ft,
    kind_trend,
    nr_deviation_pct,
    still_measured,
)
from server.errors import NotFound
from server.logbook import access
from server.logbook.counted import counted_sorties_clause
from server.logbook.models import Attempt, Sortie
from server.people import service as people
from server.people.models import Person
from server.training.models import Standard
from server.training.service import standard_for
from server.vocabulary import MANEUVERS, TERMINATIONS

def _column_default(column) -> object:
    return column.default.arg


STANDARD_DEFAULTS = {
    "consecutive_needed": _column_default(Standard.__table__.c.consecutive_needed),
    "threshold": _column_default(Standard.__table__.c.threshold),
    "decay_days": _column_default(Standard.__table__.c.decay_days),
}


# ---- reading ---------------------------------------------------------------------------------

def _part(name: str, key: str):
    return Attempt.parts[(name, key)].as_float()


def read_points(session: Session, *, pilot_id: int, maneuver: str | None = None,
                termination: str | None = None) -> list[AttemptPoint]:
    """The pilot's counted attempts in flight order; only the columns trends use, JSON read in SQL."""
    query = (
        select(
            Attempt.id, Attempt.sortie_id, Attempt.flown_on, Attempt.maneuver, Attempt.termination,
            Attempt.touchdown_speed_kt, Attempt.flare_height_ft, Attempt.flare_band_low_ft,
            Attempt.flare_band_high_ft, Attempt.point_error_ft, Attempt.score, Attempt.satisfactory,
            Attempt.within_tolerances, Attempt.standard_id, Attempt.measured,
            _part("touchdown_speed", "subscore"), _part("flare_height", "subscore"),
            _part("rotor_rpm", "value"), _part("rotor_rpm", "deviation"),
            *(_part(part, "tolerance") for part in TOLERANCE_PART.values()),
        )
        .join(Sortie, Sortie.id == Attempt.sortie_id)
        .where(Attempt.pilot_id == pilot_id, counted_sorties_clause())
        .order_by(Attempt.flown_on, Sortie.flown_at, Attempt.sequence, Attempt.id)
    )
    if maneuver is not None:
        query = query.where(Attempt.maneuver == maneuver)
    if termination is not None:
        query = query.where(Attempt.termination == termination)
    return [_point(row) for row in session.execute(query)]


def _point(row) -> AttemptPoint:
    (attempt_id, sortie_id, flown_on, maneuver, termination, touchdown, flare, band_low, band_high, point,
     score, satisfactory, within, standard_id, measured, touchdown_sub, flare_sub, nr_value, nr_deviation,
     *tolerances) = row
    band = (band_low, band_high) if band_low is not None and band_high is not None else None
    return AttemptPoint(
        attempt_id=attempt_id, sortie_id=sortie_id, flown_on=flown_on, maneuver=maneuver,
        termination=termination,
        values={
            "touchdown_speed_kt": touchdown,
            "flare_height_dev_ft": flare_deviation_ft(flare, band),
            "point_error_ft": point,
            "nr_dev_pct": nr_deviation_pct(nr_value, nr_deviation),
            "score": score,
        },
        tolerances=dict(zip(TOLERANCE_PART, tolerances)) | {"score": SCORE_RANGE},
        flare_height_ft=flare, flare_band_ft=band, touchdown_subscore=touchdown_sub,
        flare_subscore=flare_sub, satisfactory=bool(satisfactory), within_tolerances=bool(within),
        standard_id=standard_id,
        measured=still_measured(measured, {"touchdown_speed_kt": touchdown, "flare_height_ft": flare,
                                           "point_error_ft": point}),
    )


def standard_used(session: Session, *, pilot_id: int, maneuver: str, points: list[AttemptPoint]) -> StandardUsed:
    """The standard the latest attempt was scored with; else the one that applies now; else the defaults."""
    standard = None
    if points and points[-1].standard_id is not None:
        standard = session.get(Standard, points[-1].standard_id)
    if standard is None:
        standard = standard_for(session, pilot_id=pilot_id, maneuver=maneuver)
    if standard is None:
        return StandardUsed(standard_id=None, name="School defaults", **STANDARD_DEFAULTS)
    return StandardUsed(standard_id=standard.id, name=standard.name,
                        consecutive_needed=max(1, standard.consecutive_needed), threshold=standard.threshold,
                        decay_days=standard.decay_days)


# ---- entry points ----------------------------------------------------------------------------

def viewable_pilot(session: Session, *, viewer: Person, pilot_id: int) -> Person:
    """The pilot whose records the viewer may read; 404 otherwise, so others' files stay hidden."""
    pilot = session.get(Person, pilot_id)
    if pilot is None or not access.can_view_pilot(session, viewer=viewer, pilot_id=pilot_id):
        raise NotFound("No such person.")
    return pilot


def trends_for(session: Session, *, pilot_id: int, maneuver: str, termination: str,
               as_of: date | None = None, source: str = "all") -> KindTrend:
    """The trends of one maneuver and termination for a pilot."""
    as_of = as_of or people.school_today(session)
    points = read_points(session, pilot_id=pilot_id, maneuver=maneuver, termination=termination)
    standard = standard_used(session, pilot_id=pilot_id, maneuver=maneuver, points=points)
    return kind_trend(maneuver=maneuver, termination=termination, points=points, standard=standard, as_of=as_of,
                      source=source)


def all_trends(session: Session, *, pilot_id: int, as_of: date | None = None,
               points: list[AttemptPoint] | None = None, metrics: tuple[str, ...] = METRICS,
               source: str = "all") -> list[KindTrend]:
    """Trends of every kind the pilot has flown, in one read of the records, in syllabus order."""
    as_of = as_of or people.school_today(session)
    if points is None:
        points = read_points(session, pilot_id=pilot_id)
    by_kind: dict[tuple[str, str], list[AttemptPoint]] = {}
    for point in points:
        by_kind.setdefault((point.maneuver, point.termination), []).append(point)
    order = {kind: i for i, kind in enumerate((m, t) for m in MANEUVERS for t in TERMINATIONS)}
    return [
        kind_trend(maneuver=maneuver, termination=termination, points=by_kind[(maneuver, termination)],
                   as_of=as_of, metrics=metrics, source=source,
                   standard=standard_used(session, pilot_id=pilot_id, maneuver=maneuver,
                                          points=by_kind[(maneuver, termination)]))
        for maneuver, termination in sorted(by_kind, key=lambda kind: order.get(kind, len(order)))
    ]
