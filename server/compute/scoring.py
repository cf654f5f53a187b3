"""Score one practice autorotation against the school's tolerances (0 to 100, with flags)."""

import math
from dataclasses import dataclass, field

from server.compute.hv import Polygon, in_avoid_region

# Metric keys in display order, with the default weights of the design (section 4.4).
DEFAULT_WEIGHTS: dict[str, float] = {
    "touchdown_speed": 0.30,
    "flare_height": 0.25,
    "rotor_rpm": 0.20,
    "airspeed": 0.10,
    "touchdown_point": 0.10,
    "heading": 0.05,
}
METRICS: tuple[str, ...] = tuple(DEFAULT_WEIGHTS)
GRADES = ("satisfactory", "unsatisfactory")
NR_CAP_SCORE = 50.0


def _is_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _require_number(value: object, what: str, *, minimum: float | None = None) -> None:
    if not _is_number(value):
        raise ValueError(f"The {what} must be a number.")
    if minimum is not None and value < minimum:
        raise ValueError(f"The {what} cannot be below {minimum:g} (got {value:g}).")


def _fmt(value: float) -> str:
    """A figure as a person writes it: 86, 86.5 (no trailing .0)."""
    return f"{value:.1f}".rstrip("0").rstrip(".")


@dataclass(frozen=True)
class Tolerances:
    """A school's standard for one maneuver; defaults recalled from the FAA practical tests."""

    airspeed_kt: float = 5.0
    touchdown_speed_max_kt: float | None = None  # None: the helicopter type's maximum
    touchdown_point_ft: float = 200.0
    heading_deg: float = 10.0
    weights: dict[str, float] = field(default_factory=lambda: dict(DEFAULT_WEIGHTS))

    def __post_init__(self) -> None:
        _require_number(self.airspeed_kt, "airspeed tolerance", minimum=0)
        if self.touchdown_speed_max_kt is not None:
            _require_number(self.touchdown_speed_max_kt, "maximum touchdown speed", minimum=0)
        _require_number(self.touchdown_point_ft, "touchdown point tolerance", minimum=0)
        _require_number(self.heading_deg, "heading tolerance", minimum=0)
        unknown = sorted(set(self.weights) - set(METRICS))
        if unknown:
            raise ValueError(
                f"Unknown metric(s) in the weights: {', '.join(unknown)}; "
                f"the metrics are {', '.join(METRICS)}."
            )
        for name, weight in self.weights.items():
            _require_number(weight, f"weight of {name}", minimum=0)
        if not any(weight > 0 for weight in self.weights.values()):
            raise ValueError("At least one metric needs a weight above zero.")


@dataclass(frozen=True)
class TypeLimits:
    """A helicopter type's figures for scoring: power-off NR limits, speeds, avoid regions."""

    nr_power_off_min_pct: float
    nr_power_off_max_pct: float
    autorotation_kias: float
    touchdown_speed_max_kt: float
    hv_avoid: list[Polygon] = field(default_factory=list)

    def __post_init__(self) -> None:
        _require_number(self.nr_power_off_min_pct, "power-off rotor RPM lower limit", minimum=0)
        _require_number(self.nr_power_off_max_pct, "power-off rotor RPM upper limit", minimum=0)
        if self.nr_power_off_min_pct >= self.nr_power_off_max_pct:
            raise ValueError(
                f"The power-off rotor RPM lower limit ({_fmt(self.nr_power_off_min_pct)}%) must be "
                f"below the upper limit ({_fmt(self.nr_power_off_max_pct)}%)."
            )
        _require_number(self.autorotation_kias, "autorotation airspeed", minimum=0)
        _require_number(self.touchdown_speed_max_kt, "maximum touchdown speed", minimum=0)


@dataclass(frozen=True)
class Observation:
    """What the instructor recorded for one attempt; None where nothing was observed."""

    entry_height_ft: float | None = None
    entry_kias: float | None = None
    descent_kias: float | None = None
    nr_low_pct: float | None = None
    nr_high_pct: float | None = None
    flare_height_ft: float | None = None
    touchdown_speed_kt: float | None = None
    point_error_ft: float | None = None  # + long, - short of the aim point
    heading_error_deg: float | None = None
    takeover: bool = False
    grade: str | None = None
    # "power_recovery", "to_hover", "touchdown" or None when not known.
    termination: str | None = None

    def __post_init__(self) -> None:
        non_negative = {
            "entry_height_ft": "entry height",
            "entry_kias": "entry airspeed",
            "descent_kias": "descent airspeed",
            "nr_low_pct": "lowest rotor RPM",
            "nr_high_pct": "highest rotor RPM",
            "flare_height_ft": "flare height",
            "touchdown_speed_kt": "touchdown speed",
        }
        for name, what in non_negative.items():
            value = getattr(self, name)
            if value is not None:
                _require_number(value, what, minimum=0)
        signed = {"point_error_ft": "touchdown point error", "heading_error_deg": "heading error"}
        for name, what in signed.items():
            value = getattr(self, name)
            if value is not None:
                _require_number(value, what)
        if self.grade not in (*GRADES, None):
            raise ValueError(
                f"The grade must be 'satisfactory', 'unsatisfactory' or empty, not {self.grade!r}."
            )


@dataclass(frozen=True)
class Part:
    """One metric of a score: value, tolerance, deviation beyond it, sub-score and weight used."""

    value: float | None
    tolerance: float
    deviation: float
    subscore: float
    weight: float


@dataclass(frozen=True)
class Flag:
    """A caution raised by an attempt: a code for filters and a message in plain words."""

    code: str
    message: str


@dataclass(frozen=True)
class Score:
    """An attempt's score (None when nothing was recorded), its parts, flags and verdict."""

    score: float | None
    parts: dict[str, Part]
    flags: list[Flag]
    satisfactory: bool
    within_all_tolerances: bool


def _subscore(deviation: float, tolerance: float) -> float:
    if tolerance <= 0:
        # A zero tolerance leaves no room: full marks exactly on target, none otherwise.
        return 1.0 if deviation <= 0 else 0.0
    return max(0.0, 1.0 - deviation / tolerance)


def _outside(value: float, low: float, high: float) -> float:
    """How far a value lies outside [low, high]; 0 inside."""
    return max(0.0, low - value, value - high)


def _wrap_degrees(angle: float) -> float:
    """An angle folded into -180..180, so 350 degrees reads as 10 degrees the other way."""
    return (angle + 180.0) % 360.0 - 180.0


def _touchdown_max_kt(limits: TypeLimits, tolerances: Tolerances) -> float:
    """The school's touchdown-speed maximum where it set one, else the type's."""
    if tolerances.touchdown_speed_max_kt is not None:
        return tolerances.touchdown_speed_max_kt
    return limits.touchdown_speed_max_kt


def _raw_parts(
    observation: Observation,
    limits: TypeLimits,
    tolerances: Tolerances,
    flare_band_ft: tuple[float, float],
) -> dict[str, tuple[float, float, float]]:
    """Per recorded metric: (value, tolerance, deviation beyond tolerance)."""
    raw: dict[str, tuple[float, float, float]] = {}
    if observation.touchdown_speed_kt is not None:
        max_kt = _touchdown_max_kt(limits, tolerances)
        value = observation.touchdown_speed_kt
        raw["touchdown_speed"] = (value, max_kt, max(0.0, value - max_kt))
    if observation.flare_height_ft is not None:
        low, high = flare_band_ft
        value = observation.flare_height_ft
        raw["flare_height"] = (value, (high - low) / 2, _outside(value, low, high))
    recorded_nr = [nr for nr in (observation.nr_low_pct, observation.nr_high_pct) if nr is not None]
    if recorded_nr:
        low, high = limits.nr_power_off_min_pct, limits.nr_power_off_max_pct
        middle = (low + high) / 2
        worst = max(recorded_nr, key=lambda nr: abs(nr - middle))
        raw["rotor_rpm"] = (worst, (high - low) / 2, _outside(worst, low, high))
    if observation.descent_kias is not None:
        value = observation.descent_kias
        tol = tolerances.airspeed_kt
        raw["airspeed"] = (value, tol, max(0.0, abs(value - limits.autorotation_kias) - tol))
    if observation.point_error_ft is not None:
        value = observation.point_error_ft
        tol = tolerances.touchdown_point_ft
        raw["touchdown_point"] = (value, tol, max(0.0, abs(value) - tol))
    if observation.heading_error_deg is not None:
        value = observation.heading_error_deg
        tol = tolerances.heading_deg
        raw["heading"] = (value, tol, max(0.0, abs(_wrap_degrees(value)) - tol))
    return {name: tuple(map(float, raw[name])) for name in METRICS if name in raw}


def _flags(observation: Observation, limits: TypeLimits, touchdown_max_kt: float,
           flare_band_ft: tuple[float, float]) -> list[Flag]:
    flags: list[Flag] = []
    low, high = limits.nr_power_off_min_pct, limits.nr_power_off_max_pct
    # Both readings are checked against both limits: a droop typed in the high box is still a droop.
    readings = [nr for nr in (observation.nr_low_pct, observation.nr_high_pct) if nr is not None]
    excursions = []
    if readings and min(readings) < low:
        excursions.append(
            f"Rotor RPM {_fmt(min(readings))}% was below the power-off limit of {_fmt(low)}%"
        )
    if readings and max(readings) > high:
        excursions.append(
            f"Rotor RPM {_fmt(max(readings))}% was above the power-off limit of {_fmt(high)}%"
        )
    if excursions:
        message = "; ".join(excursions) + f": score capped at {_fmt(NR_CAP_SCORE)}."
        flags.append(Flag("nr_limits", message))
    if observation.takeover:
        flags.append(
            Flag("takeover", "The instructor took the controls: the attempt is unsatisfactory.")
        )
    kias, height_ft = observation.entry_kias, observation.entry_height_ft
    entry_known = kias is not None and height_ft is not None
    if entry_known and in_avoid_region(kias, height_ft, limits.hv_avoid):
        message = (
            f"Entry at {_fmt(kias)} KIAS and {_fmt(height_ft)} ft AGL "
            "was inside the height-velocity avoid region."
        )
        flags.append(Flag("hv_avoid", message))
    flare_ft, band_low_ft = observation.flare_height_ft, flare_band_ft[0]
    # Common practice: a flare begun low leaves less height to stop the descent before the ground, so any
    # flare begun below the expected band is worth a word, not only a lower score.
    if flare_ft is not None and flare_ft < band_low_ft:
        message = (
            f"Flare begun at {_fmt(flare_ft)} ft AGL, {_fmt(band_low_ft - flare_ft)} ft below "
            f"the expected band of {_fmt(flare_band_ft[0])}–{_fmt(flare_band_ft[1])} ft."
        )
        flags.append(Flag("low_flare", message))
    touchdown_kt = observation.touchdown_speed_kt
    # A power recovery ends in flight: its groundspeed is scored, but it is no touchdown to flag.
    lands = observation.termination != "power_recovery"
    if lands and touchdown_kt is not None and touchdown_kt > touchdown_max_kt:
        message = (
            f"Touchdown at {_fmt(touchdown_kt)} kt was faster than "
            f"the maximum of {_fmt(touchdown_max_kt)} kt."
        )
        flags.append(Flag("fast_touchdown", message))
    return flags


def score_attempt(
    *,
    observation: Observation,
    limits: TypeLimits,
    tolerances: Tolerances,
    flare_band_ft: tuple[float, float],
) -> Score:
    """Score an attempt: weighted mean of per-metric sub-scores, capped and flagged (DESIGN 4.4)."""
    band_low, band_high = flare_band_ft
    _require_number(band_low, "low end of the flare band", minimum=0)
    _require_number(band_high, "high end of the flare band", minimum=0)
    if band_low > band_high:
        raise ValueError(
            f"The flare band's low end ({_fmt(band_low)} ft) is above "
            f"its high end ({_fmt(band_high)} ft)."
        )

    raw = _raw_parts(observation, limits, tolerances, flare_band_ft)
    total_weight = sum(tolerances.weights.get(name, 0.0) for name in raw)
    parts = {
        name: Part(
            value=value,
            tolerance=tol,
            deviation=deviation,
            subscore=_subscore(deviation, tol),
            # Metrics not recorded drop out; the rest share the whole weight.
            weight=tolerances.weights.get(name, 0.0) / total_weight if total_weight > 0 else 0.0,
        )
        for name, (value, tol, deviation) in raw.items()
    }

    flags = _flags(observation, limits, _touchdown_max_kt(limits, tolerances), flare_band_ft)

    score: float | None = None
    if total_weight > 0:
        score = 100.0 * sum(part.weight * part.subscore for part in parts.values())
        if any(flag.code == "nr_limits" for flag in flags):
            score = min(score, NR_CAP_SCORE)
        score = round(score, 1)

    within_all = bool(parts) and all(part.deviation == 0 for part in parts.values())
    if observation.takeover or observation.grade == "unsatisfactory":
        satisfactory = False
    else:
        satisfactory = observation.grade == "satisfactory" or within_all
    return Score(
        score=score,
        parts=parts,
        flags=flags,
        satisfactory=satisfactory,
        within_all_tolerances=within_all,
    )
