"""Shapes of the trends route (DESIGN section 6)."""
from datetime import date
from typing import Literal

from pydantic import BaseModel, Field

Direction = Literal["improving", "steady", "degrading", "too_few"]
State = Literal["at_standard", "practising", "rusty", "not_started"]


class MetricTrendRead(BaseModel):
    values: list[float] = Field(description="the metric of each attempt that recorded it, in flight order")
    attempt_ids: list[int] = Field(description="the attempt each value belongs to")
    flown_on: list[date] = Field(description="the school-local date of each value")
    ewma: list[float] = Field(description="EWMA (lambda 0.3) after each value")
    ucl: list[float] = Field(description="upper control limit after each value (NIST/SEMATECH 6.3.2.4, L = 3)")
    lcl: list[float] = Field(description="lower control limit after each value")
    center: float | None = Field(description="centre line: the mean of the values")
    sigma: float | None = Field(description="sample standard deviation of the values")
    slope_per_attempt: float | None = Field(description="Theil-Sen slope over the last 20 values")
    direction: Direction = Field(
        description="improving, steady, degrading or too_few (under 5 values); for signed metrics the size "
                    "of the deviation is judged")
    tolerance: float | None = Field(description="the latest tolerance of this metric, in its unit")
    measured: list[bool] = Field(default_factory=list,
                                 description="beside each value: true where it was measured from a recorded track")


class StandardRead(BaseModel):
    standard_id: int | None
    name: str
    consecutive_needed: int
    threshold: float
    decay_days: int


class TrendsRead(BaseModel):
    pilot_id: int
    maneuver: str
    termination: str
    as_of: date
    attempts: int = Field(description="counted attempts: those of the latest signed version of each sortie")
    metrics: dict[str, MetricTrendRead] = Field(
        description="touchdown_speed_kt, flare_height_dev_ft (signed distance outside the expected band, 0 "
                    "inside), point_error_ft (+ long, - short), nr_dev_pct (signed excursion beyond the "
                    "power-off limits, 0 inside), score")
    trend_score: float | None = Field(description="EWMA of the touchdown-speed and flare-height sub-scores, 0-100")
    state: State
    forecast_attempts: int | None = Field(
        description="attempts still needed to be at standard at the current rate; 0 when at standard, null "
                    "when not improving")
    standard: StandardRead
    source: Literal["all", "measured"] = Field(
        default="all", description="all recorded figures, or only those measured from recorded tracks")
