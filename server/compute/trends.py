"""Trends of a pilot's practice autorotations: EWMA chart, robust slope, trend score, proficiency state.

Pure computation (DESIGN 4.5). Values come in flight order, oldest first.

EWMA and its control limits follow the NIST/SEMATECH e-Handbook of Statistical Methods, section
6.3.2.4: EWMA_t = lam * x_t + (1 - lam) * EWMA_{t-1}, where EWMA_0 is the target, i.e. the mean of
historical data. We have no separate history, so by default EWMA_0 is the mean of the series itself;
the trend score is the exception (see `trend_score`).
"""

from __future__ import annotations

import math
import statistics
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date


DEFAULT_LAMBDA = 0.3
SLOPE_WINDOW = 20  # DESIGN 4.5: Theil-Sen over the last 20 attempts
MIN_ATTEMPTS_FOR_DIRECTION = 5  # DESIGN 4.5: under 5 attempts is "too few"


def ewma(values: Sequence[float], *, lam: float = DEFAULT_LAMBDA, start: float | None = None) -> list[float]:
    """EWMA_1..EWMA_n of the values; EWMA_0 is `start`, or the mean of the values when not given."""
    _check_lambda(lam)
    if not values:
        return []
    level = statistics.fmean(values) if start is None else float(start)
    smoothed = []
    for value in values:
        level = lam * value + (1.0 - lam) * level
        smoothed.append(level)
    return smoothed


@dataclass(frozen=True)
class ControlChart:
    """An EWMA control chart: centre line, process sigma, and per-point EWMA and limits."""

    center: float
    sigma: float
    ewma: list[float]
    ucl: list[float]
    lcl: list[float]


def ewma_chart(
    values: Sequence[float],
    *,
    lam: float = DEFAULT_LAMBDA,
    L: float = 3.0,
    center: float | None = None,
    sigma: float | None = None,
) -> ControlChart:
    """EWMA chart with time-varying limits center ± L*sigma*sqrt(lam/(2-lam)*(1-(1-lam)^(2t)))."""
    _check_lambda(lam)
    if not values:
        raise ValueError("an EWMA chart needs at least one value")
    center = statistics.fmean(values) if center is None else float(center)
    if sigma is None:
        # One value shows no spread yet: the limits sit on the centre line until a second arrives.
        sigma = statistics.stdev(values) if len(values) >= 2 else 0.0
    smoothed = ewma(values, lam=lam, start=center)
    # The exact variance of EWMA_t; it tends to the handbook's steady state lam/(2-lam)*sigma^2.
    half_widths = [
        L * sigma * math.sqrt(lam / (2.0 - lam) * (1.0 - (1.0 - lam) ** (2 * t)))
        for t in range(1, len(values) + 1)
    ]
    return ControlChart(
        center=center,
        sigma=float(sigma),
        ewma=smoothed,
        ucl=[center + h for h in half_widths],
        lcl=[center - h for h in half_widths],
    )


def theil_sen_slope(values: Sequence[float]) -> float | None:
    """Theil-Sen slope per attempt over the last 20 values (index 0..n-1); None under 2 values."""
    recent = list(values)[-SLOPE_WINDOW:]
    if len(recent) < 2:
        return None
    from scipy.stats import theilslopes  # here: scipy.stats costs every process half a second at start
    return float(theilslopes(recent, range(len(recent))).slope)


def direction(slope: float | None, n: int, *, lower_is_better: bool, steady_band: float) -> str:
    """"improving", "steady", "degrading", or "too_few" (under 5 attempts or no slope)."""
    if n < MIN_ATTEMPTS_FOR_DIRECTION or slope is None:
        return "too_few"
    if abs(slope) <= steady_band:
        return "steady"
    getting_lower = slope < 0
    return "improving" if getting_lower == lower_is_better else "degrading"


def trend_score(
    touchdown_subscores: Sequence[float | None],
    flare_subscores: Sequence[float | None],
    *,
    lam: float = DEFAULT_LAMBDA,
) -> float | None:
    """Trend score 0..100: EWMA of each attempt's mean touchdown/flare sub-score; None without any."""
    series = _trend_series(touchdown_subscores, flare_subscores, lam=lam)
    return series[-1] if series and series[-1] is not None else None


def _trend_series(
    touchdown_subscores: Sequence[float | None],
    flare_subscores: Sequence[float | None],
    *,
    lam: float,
) -> list[float | None]:
    """The trend score as it stood after each attempt (None until the first scored attempt)."""
    if len(touchdown_subscores) != len(flare_subscores):
        raise ValueError("touchdown and flare sub-scores must have one entry per attempt")
    per_attempt = [
        _mean_of_recorded(touchdown, flare) for touchdown, flare in zip(touchdown_subscores, flare_subscores)
    ]
    scored = [mean for mean in per_attempt if mean is not None]
    # EWMA_0 is the first scored attempt (no target exists for a learner), so the score after
    # attempt t depends only on attempts up to t: past states can be replayed from a prefix.
    smoothed = iter(ewma(scored, lam=lam, start=scored[0])) if scored else iter(())
    series: list[float | None] = []
    current: float | None = None
    for mean in per_attempt:
        if mean is not None:
            current = 100.0 * next(smoothed)
        series.append(current)
    return series


def _mean_of_recorded(*subscores: float | None) -> float | None:
    """Mean of the sub-scores that were recorded; None when none was."""
    recorded = [s for s in subscores if s is not None]
    return statistics.fmean(recorded) if recorded else None


@dataclass(frozen=True)
class AttemptSummary:
    """What the proficiency state needs to know about one attempt of a maneuver kind."""

    flown_on: date
    within_all_tolerances: bool
    satisfactory: bool
    touchdown_subscore: float | None
    flare_subscore: float | None


def proficiency_state(
    attempts: Sequence[AttemptSummary],
    *,
    as_of: date,
    consecutive_needed: int,
    threshold: float,
    decay_days: int,
    lam: float = DEFAULT_LAMBDA,
) -> str:
    """"at_standard", "rusty", "practising" or "not_started" for attempts in flight order.

    At standard after an attempt: the last `consecutive_needed` attempts were all inside every
    tolerance and the trend score then was >= `threshold`. Recent: a satisfactory attempt flown
    within `decay_days` before `as_of` (as_of - flown_on <= decay_days). Attempts after `as_of` are
    ignored.
    """
    if consecutive_needed < 1:
        raise ValueError("consecutive_needed must be at least 1")
    flown = [a for a in attempts if a.flown_on <= as_of]
    if not flown:
        return "not_started"
    trend = _trend_series(
        [a.touchdown_subscore for a in flown], [a.flare_subscore for a in flown], lam=lam
    )
    at_standard_after = [
        index + 1 >= consecutive_needed
        and all(a.within_all_tolerances for a in flown[index + 1 - consecutive_needed : index + 1])
        and trend[index] is not None
        and trend[index] >= threshold
        for index in range(len(flown))
    ]
    recent = any(a.satisfactory and (as_of - a.flown_on).days <= decay_days for a in flown)
    if at_standard_after[-1] and recent:
        return "at_standard"
    if any(at_standard_after) and not recent:
        return "rusty"
    return "practising"


def forecast_attempts(
    current_score: float | None, slope_per_attempt: float | None, threshold: float
) -> int | None:
    """Attempts to reach `threshold` at the current rising slope; 0 if already there, None if not rising."""
    if current_score is None:
        return None
    if current_score >= threshold:
        return 0
    if slope_per_attempt is None or slope_per_attempt <= 0:
        return None
    # The small allowance keeps an exact quotient like 4.0000000001 (float noise) at 4.
    return math.ceil((threshold - current_score) / slope_per_attempt - 1e-9)


def _check_lambda(lam: float) -> None:
    """Reject a smoothing weight outside 0 < lam <= 1."""
    if not 0.0 < lam <= 1.0:
        raise ValueError("lam must be in (0, 1]")
