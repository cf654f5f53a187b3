"""Headwind and crosswind components of the wind for a landing direction."""

import math
from dataclasses import dataclass

MAX_WIND_KT = 150.0
# Components smaller than this are rounding noise from sin/cos, shown as 0.
_NOISE_KT = 1e-9


@dataclass(frozen=True)
class WindComponents:
    """Wind along and across the landing direction; crosswind positive from the right."""

    headwind_kt: float
    crosswind_kt: float
    gust_headwind_kt: float | None
    gust_crosswind_kt: float | None


def _check_direction(value: float, what: str) -> None:
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        raise ValueError(f"The {what} must be a number of degrees.")
    if not 0 <= value <= 360:
        raise ValueError(f"The {what} of {value:g} degrees must be between 0 and 360.")


def _check_speed(value: float, what: str) -> None:
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        raise ValueError(f"The {what} must be a number of knots.")
    if not 0 <= value <= MAX_WIND_KT:
        raise ValueError(f"The {what} of {value:g} kt must be between 0 and {MAX_WIND_KT:g} kt.")


def _split(speed_kt: float, angle_rad: float) -> tuple[float, float]:
    head = speed_kt * math.cos(angle_rad)
    cross = speed_kt * math.sin(angle_rad)
    return (0.0 if abs(head) < _NOISE_KT else head, 0.0 if abs(cross) < _NOISE_KT else cross)


def wind_components(
    *, wind_dir_deg: float, wind_kt: float, landing_dir_deg: float, gust_kt: float | None = None
) -> WindComponents:
    """Head- and crosswind of a wind blowing FROM wind_dir_deg; negative headwind = tailwind."""
    _check_direction(wind_dir_deg, "wind direction")
    _check_direction(landing_dir_deg, "landing direction")
    _check_speed(wind_kt, "wind speed")
    if gust_kt is not None:
        _check_speed(gust_kt, "gust speed")
        if gust_kt < wind_kt:
            raise ValueError(
                f"The gust speed of {gust_kt:g} kt is lower than the steady wind of {wind_kt:g} kt."
            )
    # Wind from the right of the nose has a positive angle, hence a positive crosswind.
    angle = math.radians(wind_dir_deg - landing_dir_deg)
    head, cross = _split(wind_kt, angle)
    gust_head, gust_cross = _split(gust_kt, angle) if gust_kt is not None else (None, None)
    return WindComponents(
        headwind_kt=head,
        crosswind_kt=cross,
        gust_headwind_kt=gust_head,
        gust_crosswind_kt=gust_cross,
    )
