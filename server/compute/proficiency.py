"""Proficiency per kind of autorotation from a pilot's counted attempts: each metric's trend, the
trend score, the proficiency state and the forecast of attempts still needed.

Pure: the attempts come in as `AttemptPoint`s read by `server.progress.service`.
"""
import statistics
from dataclasses import dataclass, field
from datetime import date

from server.compute.trends import (
    AttemptSummary,
    direction,
    ewma_chart,
    forecast_attempts,
    proficiency_state,
    theil_sen_slope,
    trend_score,
)

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


def still_measured(measured: dict | None, current: dict[str, float | None]) -> frozenset[str]:
    """Fields whose stored value is still the measured one (a typed change wins)."""
    return frozenset(name for name, entry in (measured or {}).items()
                     if current.get(name) is not None and entry.get("value") is not None
                     and abs(current[name] - entry["value"]) <= 1e-9)


def is_measured(name: str, point: AttemptPoint) -> bool:
    return MEASURED_FIELD.get(name) in point.measured


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
