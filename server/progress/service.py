"""A pilot's trends and proficiency per kind of autorotation, read from the counted records.

Which attempts count: those of the latest signed version of each sortie. A draft never counts; a
signed sortie whose amendment is still a draft keeps counting until the amendment is signed, and
then only the amendment counts (an amendment can only be made of a signed version, so "signed and
not superseded by a signed version" is exactly "the latest signed version").
"""
import statistics
from dataclasses import dataclass, field
from datetime import date, datetime
from zoneinfo import ZoneInfo

from sqlalchemy import and_, exists, select
from sqlalchemy.orm import Session, aliased

from server.compute.trends import (
    AttemptSummary,
    direction,
    ewma_chart,
    forecast_attempts,
    proficiency_state,
    theil_sen_slope,
    trend_score,
)
from server.errors import NotFound
from server.fleet import service as fleet
from server.logbook.models import Attempt, Sortie
from server.people import service as people
from server.people.models import Person
from server.training.models import MANEUVERS, TERMINATIONS, Standard
from server.training.service import standard_for

METRICS = ("touchdown_speed_kt", "flare_height_dev_ft", "point_error_ft", "nr_dev_pct", "score")
# Signed metrics have their target at 0: the size of the value is what improves or degrades.
SIGNED_METRICS = frozenset({"flare_height_dev_ft", "point_error_ft", "nr_dev_pct"})
HIGHER_IS_BETTER = frozenset({"score"})
# The attempt field behind each metric that a recorded track can measure (rotor RPM and the score cannot be).
MEASURED_FIELD = {"touchdown_speed_kt": "touchdown_speed_kt", "flare_height_dev_ft": "flare_height_ft",
                  "point_error_ft": "point_error_ft"}
SOURCES = ("all", "measured")
# The part of the stored score whose tolerance scales each metric's "steady" band.
TOLERANCE_PART = {
    "touchdown_speed_kt": "touchdown_speed",
    "flare_height_dev_ft": "flare_height",
    "point_error_ft": "touchdown_point",
    "nr_dev_pct": "rotor_rpm",
}
# A slope whose drift over the 20-attempt slope window is under a tenth of the tolerance reads as
# steady: tolerance / 200 per attempt. The score's "tolerance" is its whole 0-100 range.
STEADY_FRACTION_PER_ATTEMPT = 1 / 200
SCORE_RANGE = 100.0
NORMAL_NR_PCT = 100.0  # %NR is relative to normal rotor speed; power-off limits bracket 100 % (common practice)


def _column_default(column) -> object:
    return column.default.arg


STANDARD_DEFAULTS = {
    "consecutive_needed": _column_default(Standard.__table__.c.consecutive_needed),
    "threshold": _column_default(Standard.__table__.c.threshold),
    "decay_days": _column_default(Standard.__table__.c.decay_days),
}


@dataclass(frozen=True)
class AttemptPoint:
    """One counted attempt, reduced to what trends need."""

    attempt_id: int
    sortie_id: int
    flown_on: date
    maneuver: str
    termination: str
    values: dict[str, float | None]
    tolerances: dict[str, float | None]
    flare_height_ft: float | None
    flare_band_ft: tuple[float, float] | None
    touchdown_subscore: float | None
    flare_subscore: float | None
    satisfactory: bool
    within_tolerances: bool
    standard_id: int | None
    # Attempt fields whose value was measured from a recorded track (not typed from memory).
    measured: frozenset[str] = frozenset()


@dataclass(frozen=True)
class MetricTrend:
    """One metric's series (recorded attempts only), its EWMA chart, slope and direction."""

    values: list[float]
    attempt_ids: list[int]
    flown_on: list[date]
    ewma: list[float]
    ucl: list[float]
    lcl: list[float]
    center: float | None
    sigma: float | None
    slope_per_attempt: float | None
    direction: str
    tolerance: float | None
    # Beside each value: was it measured from a recorded track?
    measured: list[bool] = field(default_factory=list)


@dataclass(frozen=True)
class StandardUsed:
    """The standard a kind of autorotation is judged against, or the defaults."""

    standard_id: int | None
    name: str
    consecutive_needed: int
    threshold: float
    decay_days: int


@dataclass
class KindTrend:
    """Everything the trends route and the progress file say about one maneuver and termination."""

    maneuver: str
    termination: str
    as_of: date
    standard: StandardUsed
    attempts: int = 0
    metrics: dict[str, MetricTrend] = field(default_factory=dict)
    trend_score: float | None = None
    state: str = "not_started"
    forecast_attempts: int | None = None
    inside_run: int = 0
    last_flown_on: date | None = None
    last_satisfactory_on: date | None = None
    points: list[AttemptPoint] = field(default_factory=list)


# ---- reading ---------------------------------------------------------------------------------

def counted_sorties_clause():
    """Sorties whose attempts count: signed, and not superseded by a signed newer version."""
    newer = aliased(Sortie)
    superseded_by_signed = exists().where(and_(newer.supersedes_id == Sortie.id, newer.state == "signed"))
    return and_(Sortie.state == "signed", ~superseded_by_signed)


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
        measured=_still_measured(measured, {"touchdown_speed_kt": touchdown, "flare_height_ft": flare,
                                            "point_error_ft": point}),
    )


def _still_measured(measured: dict | None, current: dict[str, float | None]) -> frozenset[str]:
    """Fields whose stored value is still the measured one (a typed change wins)."""
    return frozenset(name for name, entry in (measured or {}).items()
                     if current.get(name) is not None and entry.get("value") is not None
                     and abs(current[name] - entry["value"]) <= 1e-9)


def is_measured(name: str, point: AttemptPoint) -> bool:
    return MEASURED_FIELD.get(name) in point.measured


def flare_deviation_ft(flare_height_ft: float | None, band: tuple[float, float] | None) -> float | None:
    """Signed distance outside the expected band: negative below it (late), positive above (early), 0 inside."""
    if flare_height_ft is None or band is None:
        return None
    low, high = band
    if flare_height_ft < low:
        return flare_height_ft - low
    if flare_height_ft > high:
        return flare_height_ft - high
    return 0.0


def nr_deviation_pct(worst_reading_pct: float | None, deviation_pct: float | None) -> float | None:
    """Signed rotor-RPM excursion beyond the power-off limits: negative a droop, positive an overspeed."""
    if worst_reading_pct is None or deviation_pct is None:
        return None
    if deviation_pct == 0:
        return 0.0
    return -deviation_pct if worst_reading_pct < NORMAL_NR_PCT else deviation_pct


# ---- computing -------------------------------------------------------------------------------

def metric_trend(name: str, points: list[AttemptPoint], source: str = "all") -> MetricTrend:
    """EWMA chart (NIST 6.3.2.4), Theil-Sen slope and direction of one metric over the attempts; with
    `source` "measured", over the values measured from recorded tracks only."""
    recorded = [(p, p.values[name]) for p in points
                if p.values[name] is not None and (source == "all" or is_measured(name, p))]
    values = [float(v) for _, v in recorded]
    tolerance = next((p.tolerances[name] for p, _ in reversed(recorded) if p.tolerances[name] is not None),
                     None)
    chart = ewma_chart(values) if values else None
    slope = theil_sen_slope(values)
    judged = [abs(v) for v in values] if name in SIGNED_METRICS else values
    judged_slope = theil_sen_slope(judged) if name in SIGNED_METRICS else slope
    steady_band = (tolerance or 0.0) * STEADY_FRACTION_PER_ATTEMPT
    return MetricTrend(
        values=values, attempt_ids=[p.attempt_id for p, _ in recorded],
        flown_on=[p.flown_on for p, _ in recorded],
        ewma=chart.ewma if chart else [], ucl=chart.ucl if chart else [], lcl=chart.lcl if chart else [],
        center=chart.center if chart else None, sigma=chart.sigma if chart else None,
        slope_per_attempt=slope,
        direction=direction(judged_slope, len(values), lower_is_better=name not in HIGHER_IS_BETTER,
                            steady_band=steady_band),
        tolerance=tolerance, measured=[is_measured(name, p) for p, _ in recorded],
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


def kind_trend(*, maneuver: str, termination: str, points: list[AttemptPoint], standard: StandardUsed,
               as_of: date, metrics: tuple[str, ...] = METRICS, source: str = "all") -> KindTrend:
    """Trends, trend score, state and forecast of one kind from its attempts in flight order."""
    flown = [p for p in points if p.flown_on <= as_of]
    result = KindTrend(maneuver=maneuver, termination=termination, as_of=as_of, standard=standard,
                       attempts=len(flown), points=flown)
    result.metrics = {name: metric_trend(name, flown, source) for name in metrics}
    if not flown:
        return result
    summaries = [
        AttemptSummary(flown_on=p.flown_on, within_all_tolerances=p.within_tolerances,
                       satisfactory=p.satisfactory, touchdown_subscore=p.touchdown_subscore,
                       flare_subscore=p.flare_subscore)
        for p in flown
    ]
    touchdown = [p.touchdown_subscore for p in flown]
    flare = [p.flare_subscore for p in flown]
    result.trend_score = trend_score(touchdown, flare)
    result.state = proficiency_state(summaries, as_of=as_of, consecutive_needed=standard.consecutive_needed,
                                     threshold=standard.threshold, decay_days=standard.decay_days)
    result.inside_run = _inside_run(flown)
    result.last_flown_on = flown[-1].flown_on
    result.last_satisfactory_on = max((p.flown_on for p in flown if p.satisfactory), default=None)
    result.forecast_attempts = _forecast(result, touchdown, flare)
    return result


def _inside_run(points: list[AttemptPoint]) -> int:
    """How many of the latest attempts in a row were inside every tolerance."""
    run = 0
    for point in reversed(points):
        if not point.within_tolerances:
            break
        run += 1
    return run


def _forecast(result: KindTrend, touchdown: list, flare: list) -> int | None:
    """Attempts still needed: 0 at standard; the missing run when the score is there; else by the slope."""
    if result.state == "at_standard":
        return 0
    needed_run = max(0, result.standard.consecutive_needed - result.inside_run)
    if result.trend_score is not None and result.trend_score >= result.standard.threshold:
        return needed_run or 1  # rusty with a good run: one satisfactory attempt renews it
    # The slope of what the trend score smooths: each attempt's mean touchdown/flare sub-score.
    inputs = [100 * statistics.fmean(recorded) for pair in zip(touchdown, flare)
              if (recorded := [s for s in pair if s is not None])]
    slope = theil_sen_slope(inputs)
    by_slope = forecast_attempts(result.trend_score, slope, result.standard.threshold)
    return None if by_slope is None else max(by_slope, needed_run)


# ---- entry points ----------------------------------------------------------------------------

def local_today(session: Session) -> date:
    """Today in the school's time zone: the date decay windows count from."""
    return datetime.now(ZoneInfo(fleet.school(session).timezone)).date()


def viewable_pilot(session: Session, *, viewer: Person, pilot_id: int) -> Person:
    """The pilot whose records the viewer may read; 404 otherwise, so others' files stay hidden."""
    pilot = session.get(Person, pilot_id)
    if pilot is None or not people.can_view_pilot(session, viewer=viewer, pilot_id=pilot_id):
        raise NotFound("No such person.")
    return pilot


def trends_for(session: Session, *, pilot_id: int, maneuver: str, termination: str,
               as_of: date | None = None, source: str = "all") -> KindTrend:
    """The trends of one maneuver and termination for a pilot."""
    as_of = as_of or local_today(session)
    points = read_points(session, pilot_id=pilot_id, maneuver=maneuver, termination=termination)
    standard = standard_used(session, pilot_id=pilot_id, maneuver=maneuver, points=points)
    return kind_trend(maneuver=maneuver, termination=termination, points=points, standard=standard, as_of=as_of,
                      source=source)


def all_trends(session: Session, *, pilot_id: int, as_of: date | None = None,
               points: list[AttemptPoint] | None = None, metrics: tuple[str, ...] = METRICS,
               source: str = "all") -> list[KindTrend]:
    """Trends of every kind the pilot has flown, in one read of the records, in syllabus order."""
    as_of = as_of or local_today(session)
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
