"""The progress file: program position, proficiency per kind, trend charts, recent attempts, what is next."""
from dataclasses import dataclass, field
from datetime import date

from sqlalchemy.orm import Session

from server.compute.proficiency import AttemptPoint, KindTrend, MetricTrend
from server.compute.trends import ewma_chart
from server.people import service as people
from server.people.models import Person
from server.progress import programs, service
from server.progress.charts import ChartData, describe, trend_chart_svg
from server.training import programs as syllabi
from server.vocabulary import MANEUVER_LABELS, TERMINATION_LABELS

CHART_WINDOW = 50  # attempts drawn per chart; the EWMA and limits still use every attempt before them
RECENT_ATTEMPTS = 12
PAGE_METRICS = ("touchdown_speed_kt", "flare_height_dev_ft")

STATE_WORDS = {
    "at_standard": "At standard",
    "practising": "Practising",
    "rusty": "Rusty",
    "not_started": "Not started",
}
# Our own shapes, so a state never rests on colour alone.
STATE_SHAPES = {"at_standard": "★", "practising": "◐", "rusty": "▽", "not_started": "○"}
METRIC_WORDS = {
    "touchdown_speed_kt": ("Touchdown speed", "kt"),
    "flare_height_dev_ft": ("Flare height outside the band", "ft"),
    "point_error_ft": ("Touchdown point", "ft"),
    "nr_dev_pct": ("Rotor RPM outside the limits", "%"),
    "score": ("Score", "points"),
}


def kind_label(maneuver: str, termination: str) -> str:
    return f"{MANEUVER_LABELS[maneuver]}, {TERMINATION_LABELS[termination].lower()}"


def kind_key(maneuver: str, termination: str) -> str:
    return f"{maneuver}.{termination}"


def direction_words(name: str, metric: MetricTrend) -> str:
    """One metric's direction in plain words, with its rate where it has one."""
    quantity, unit = METRIC_WORDS[name]
    if metric.direction == "too_few":
        return f"{quantity}: too few attempts to say (5 needed)"
    rate = ""
    if metric.slope_per_attempt is not None and metric.direction != "steady":
        rate = f" ({abs(metric.slope_per_attempt):.2f} {unit} per attempt)"
    words = {"improving": "improving", "steady": "steady", "degrading": "getting worse"}[metric.direction]
    return f"{quantity}: {words}{rate}"


@dataclass
class KindView:
    """One maneuver and termination as the page shows it."""

    trend: KindTrend
    label: str
    key: str
    state_words: str
    state_shape: str
    directions: list[str]
    forecast_words: str


@dataclass
class ChartView:
    svg: str
    summary: str  # the figures in full, for assistive technology and instructors
    words: str = ""  # what it shows and what the pilot takes from it, without statistics


@dataclass
class ProgressFile:
    pilot: Person
    as_of: date
    program: programs.ProgramProgress | None
    kinds: list[KindView]
    selected: KindView | None
    charts: list[ChartView]
    recent: list[AttemptPoint]
    needed_next: list[str] = field(default_factory=list)
    total_attempts: int = 0
    chart_window: int = CHART_WINDOW
    source: str = "all"


def _forecast_words(trend: KindTrend) -> str:
    if trend.state == "not_started":
        return "Not flown yet."
    if trend.forecast_attempts == 0:
        return "At standard now."
    if trend.forecast_attempts is None:
        return "Not yet rising towards the standard: talk it through with your instructor."
    n = trend.forecast_attempts
    plural = "s" if n != 1 else ""
    if trend.trend_score is not None and trend.trend_score >= trend.standard.threshold:
        return f"{n} more attempt{plural} in a row inside every tolerance."
    return f"About {n} more attempt{plural} at the current rate."


def kind_view(trend: KindTrend) -> KindView:
    return KindView(
        trend=trend, label=kind_label(trend.maneuver, trend.termination),
        key=kind_key(trend.maneuver, trend.termination), state_words=STATE_WORDS[trend.state],
        state_shape=STATE_SHAPES[trend.state],
        directions=[direction_words(name, trend.metrics[name]) for name in PAGE_METRICS if name in trend.metrics],
        forecast_words=_forecast_words(trend),
    )


def _window(items: list) -> list:
    return items[-CHART_WINDOW:]


# ---- the charts in a pilot's words ----------------------------------------------------------------

RECENT = 10  # "your last 10": compared with the 10 before


def _fmt(value: float) -> str:
    text = f"{value:.1f}"
    return text[:-2] if text.endswith(".0") else text


def _last_and_before(values: list) -> tuple[list, list]:
    return values[-RECENT:], values[-2 * RECENT:-RECENT]


def touchdown_words(data: ChartData) -> str:
    """Touchdown speed in a sentence: the recent average, which way it moves, how many were under the maximum."""
    values = list(data.values)
    if not values:
        return "No touchdown speeds recorded yet."
    last, before = _last_and_before(values)
    highs = list(data.band_high)[-len(last):]
    if len(last) == 1:
        text = f"Your one touchdown so far was at {_fmt(last[0])} kt"
        if highs[0] is not None:
            text += f", {'at or under' if last[0] <= highs[0] else 'over'} the {_fmt(highs[0])} kt maximum"
        return text + "."
    average = sum(last) / len(last)
    your = f"your last {len(last)}"
    if len(before) >= 5:
        earlier = sum(before) / len(before)
        maximum = next((h for h in reversed(highs) if h is not None), None)
        steady = 0.05 * maximum if maximum else 0.2  # a twentieth of the allowance: too small to call a change
        if abs(average - earlier) <= steady:
            text = (f"Your touchdowns are holding steady: {_fmt(average)} kt on average over {your}, "
                    f"{_fmt(earlier)} kt over the {len(before)} before.")
        elif average < earlier:
            text = (f"Your touchdowns are getting slower, which is what you want: {_fmt(average)} kt on average "
                    f"over {your}, down from {_fmt(earlier)} kt over the {len(before)} before.")
        else:
            text = (f"Your touchdowns are getting faster: {_fmt(average)} kt on average over {your}, up from "
                    f"{_fmt(earlier)} kt over the {len(before)} before. Ask your instructor what to change.")
    else:
        text = f"Your touchdowns average {_fmt(average)} kt over {your}."
    judged = [(v, h) for v, h in zip(last, highs, strict=True) if h is not None]
    if judged:
        under = sum(v <= h for v, h in judged)
        text += f" {under} of these {len(judged)} stayed at or under the {_fmt(judged[-1][1])} kt maximum."
    return text


def flare_words(data: ChartData) -> str:
    """Flare height in a sentence: how many recent flares began inside the expected band, and which way the misses went."""
    rows = [(v, lo, hi) for v, lo, hi in zip(data.values, data.band_low, data.band_high, strict=True)
            if lo is not None and hi is not None]
    if not rows:
        return "No flare heights recorded yet."
    last, before = _last_and_before(rows)
    inside = sum(lo <= v <= hi for v, lo, hi in last)
    low = sum(v < lo for v, lo, hi in last)
    high = sum(v > hi for v, lo, hi in last)
    if len(last) == 1:
        where = "inside" if inside else "below" if low else "above"
        text = f"Your one flare so far began {where} the expected band."
        return text + " The band moves with each day's density altitude and weight."
    text = f"Of your last {len(last)} flares, {inside} began inside the expected band"
    if len(before) >= 5:
        text += f" ({sum(lo <= v <= hi for v, lo, hi in before)} of the {len(before)} before)"
    text += "."
    if low or high:
        misses = " and ".join(part for part in (f"{low} too low" if low else "", f"{high} too high" if high else "")
                              if part)
        text += f" Outside the band: {misses}."
        if low > high:
            text += " Low means the flare began late."
        elif high > low:
            text += " High means the flare began early."
    text += " The band moves with each day's density altitude and weight."
    return text


def touchdown_chart(view: KindView) -> ChartData:
    """Touchdown speed with the maximum as the band's top, from the trends' own EWMA chart."""
    metric = view.trend.metrics["touchdown_speed_kt"]
    by_id = {p.attempt_id: p for p in view.trend.points}
    tolerances = [by_id[i].tolerances["touchdown_speed_kt"] for i in metric.attempt_ids]
    return ChartData(
        chart_id=f"chart-touchdown-{view.key.replace('.', '-')}",
        title=f"Touchdown speed, {view.label.lower()}", quantity="Touchdown speed", unit="kt",
        values=_window(metric.values), dates=_window(metric.flown_on),
        band_low=[0.0 if t is not None else None for t in _window(tolerances)], band_high=_window(tolerances),
        ewma=_window(metric.ewma), ucl=_window(metric.ucl), lcl=_window(metric.lcl),
        measured=_window(metric.measured),
        first_number=len(metric.values) - len(_window(metric.values)) + 1, count_noun="touchdown",
    )


def flare_chart(view: KindView, source: str = "all") -> ChartData:
    """Flare height AGL against each attempt's expected band (it moves with density altitude and weight)."""
    recorded = [p for p in view.trend.points if p.flare_height_ft is not None
                and (source == "all" or "flare_height_ft" in p.measured)]
    values = [p.flare_height_ft for p in recorded]
    chart = ewma_chart(values) if values else None
    shown = _window(recorded)
    return ChartData(
        chart_id=f"chart-flare-{view.key.replace('.', '-')}",
        title=f"Flare height, {view.label.lower()}", quantity="Flare height", unit="ft AGL",
        values=_window(values), dates=[p.flown_on for p in shown],
        band_low=[p.flare_band_ft[0] if p.flare_band_ft else None for p in shown],
        band_high=[p.flare_band_ft[1] if p.flare_band_ft else None for p in shown],
        ewma=_window(chart.ewma) if chart else [], ucl=_window(chart.ucl) if chart else [],
        lcl=_window(chart.lcl) if chart else [],
        measured=["flare_height_ft" in p.measured for p in shown],
        first_number=len(values) - len(_window(values)) + 1, count_noun="flare",
    )


def _needed_next(program: programs.ProgramProgress | None, kinds: list[KindView]) -> list[str]:
    """What the student does next, in the syllabus's words."""
    needed = []
    if program is not None:
        stage, lesson = program.current_stage, program.position_lesson
        if stage is None:
            needed.append(f"Every stage of {program.program.name} is passed.")
        elif lesson is not None:
            for requirement in lesson.requirements:
                if not requirement.met:
                    needed.append(f"{lesson.lesson.name}: {requirement.words}.")
        for waiting in program.awaiting_confirmation:
            needed.append(f"{waiting.lesson.name}: the signed records meet it; an instructor confirms it next.")
        if stage is not None and lesson is None and not program.awaiting_confirmation:
            needed.append(f"{stage.stage.name}: every lesson is confirmed; the stage check is next, with a chief "
                          "pilot or a check instructor other than the usual instructor.")
    for view in kinds:
        if view.trend.state == "rusty":
            needed.append(f"{view.label}: rusty; fly it again with an instructor until it is back at standard.")
    return needed


def build(session: Session, *, viewer: Person, pilot_id: int, selected_key: str | None = None,
          as_of: date | None = None, source: str = "all") -> ProgressFile:
    """Everything the progress file shows, from one read of the pilot's counted attempts."""
    pilot = service.viewable_pilot(session, viewer=viewer, pilot_id=pilot_id)
    as_of = as_of or people.school_today(session)
    points = service.read_points(session, pilot_id=pilot_id)
    kinds = [kind_view(t) for t in service.all_trends(session, pilot_id=pilot_id, as_of=as_of, points=points,
                                                      metrics=PAGE_METRICS, source=source)]
    enrolment = syllabi.active_enrolment(session, student_id=pilot_id)
    program = programs.program_progress(session, enrolment=enrolment, points=points) if enrolment else None
    selected = next((k for k in kinds if k.key == selected_key), None)
    if selected is None and kinds:
        selected = max(kinds, key=lambda k: (k.trend.last_flown_on, k.trend.attempts))
    charts = []
    if selected is not None:
        for data, words in ((touchdown_chart(selected), touchdown_words), (flare_chart(selected, source), flare_words)):
            charts.append(ChartView(svg=trend_chart_svg(data), summary=describe(data), words=words(data)))
    return ProgressFile(
        pilot=pilot, as_of=as_of, program=program, kinds=kinds, selected=selected, charts=charts,
        recent=list(reversed(points[-RECENT_ATTEMPTS:])), needed_next=_needed_next(program, kinds),
        total_attempts=len(points), source=source,
    )
