"""Invented recorded tracks for the demo school: a sortie of racetrack circuits, each ending in a practice
autorotation towards the site's aim point, sampled at 5 Hz with receiver-like noise (deterministic seed).

Demo data only: nothing here is a real flight. The tests check the detector against a kinematic model of
their own (tests/compute/flight_model.py), not against this.
"""
import math
from dataclasses import dataclass
from datetime import datetime, timedelta

import numpy as np

FT, KT, FPM = 0.3048, 1852 / 3600, 0.3048 / 60
EARTH_M = 6371008.8


@dataclass(frozen=True)
class DemoAutorotation:
    end: str  # "touchdown", "hover" or "recovery"
    entry_ft: float = 600.0
    rate_fpm: float = 1600.0
    flare_ft: float = 90.0
    end_kt: float = 4.0
    recovery_bottom_ft: float = 80.0


@dataclass
class _Phase:
    seconds: float
    speed_kt: float | None = None  # target groundspeed, reached linearly over the phase (or `ramp_s`)
    vs_fpm: float | None = None
    ramp_s: float | None = None
    turn_deg: float = 0.0


def _autorotation_phases(a: DemoAutorotation) -> list[_Phase]:
    rate = a.rate_fpm / 60  # ft/s
    steady_s = max(3.0, (a.entry_ft - rate * 1.5 - a.flare_ft) / rate)
    phases = [_Phase(6, 65, 0, 2), _Phase(3, 60, -a.rate_fpm, 3), _Phase(steady_s)]
    if a.end == "recovery":
        to_bottom = 2 * (a.flare_ft - a.recovery_bottom_ft) / rate
        phases += [_Phase(to_bottom, 40, 0), _Phase(4, None, 800, 2), _Phase(25, 60)]
    else:
        flare_s = max(1.0, 2 * (a.flare_ft - 8) / rate)
        phases.append(_Phase(flare_s, 20, 0))
        if a.end == "touchdown":
            phases += [_Phase(4, a.end_kt, -120, 0.5), _Phase(1.5, 0, 0, 0.3), _Phase(20)]
        else:
            phases += [_Phase(4, a.end_kt, -60, 0.5), _Phase(1.5, 0, 0, 0.3), _Phase(15),
                       _Phase(5, None, -100, 0.5), _Phase(15, None, 0, 0.3)]
    return phases


class _Flyer:
    """Integrates phases at a fixed step; heights never go below the ground."""

    def __init__(self, step: float):
        self.step = step
        self.t, self.x, self.y, self.h, self.v, self.course = [0.0], [0.0], [0.0], [0.0], [0.0], [270.0]
        self.vs = 0.0
        self.heading = 270.0

    def fly(self, phase: _Phase) -> None:
        n = max(1, int(round(phase.seconds / self.step)))
        v0, w0 = self.v[-1], self.vs
        v1 = v0 if phase.speed_kt is None else phase.speed_kt * KT
        w1 = w0 if phase.vs_fpm is None else phase.vs_fpm * FPM
        ramp = phase.ramp_s or phase.seconds
        tau = np.arange(1, n + 1) * self.step
        share = np.minimum(1.0, tau / ramp)
        speed, vertical = v0 + (v1 - v0) * share, w0 + (w1 - w0) * share
        heading = self.heading + phase.turn_deg * np.arange(1, n + 1) / n
        rad = np.radians(heading)
        height = np.maximum(0.0, self.h[-1] + np.cumsum(vertical) * self.step)
        self.t += list(self.t[-1] + tau)
        self.x += list(self.x[-1] + np.cumsum(speed * np.sin(rad)) * self.step)
        self.y += list(self.y[-1] + np.cumsum(speed * np.cos(rad)) * self.step)
        self.h += list(height)
        self.v += list(speed)
        self.course += list(heading % 360)
        self.vs = 0.0 if height[-1] <= 0 else float(vertical[-1])
        self.heading = float(heading[-1]) % 360


def _east_distance_m(phases: list[_Phase], *, start_kt: float) -> float:
    scratch = _Flyer(0.2)
    scratch.h[-1], scratch.v[-1] = 1000.0, start_kt * KT
    start = scratch.x[-1]
    for phase in phases:
        scratch.fly(phase)
        if scratch.h[-1] <= 0.0 or (phase.vs_fpm == 800):
            break
    return scratch.x[-1] - start


def synthetic_track_csv(*, started_at: datetime, aim_lat_deg: float, aim_lon_deg: float, elevation_ft: float,
                        autorotations: list[DemoAutorotation], seed: int) -> bytes:
    """The CSV (time, lat, lon, alt_m, speed_kt, course_deg) of an invented sortie flying `autorotations`."""
    flyer = _Flyer(0.2)
    flyer.fly(_Phase(45))  # on the ground at the site before take-off
    for a in autorotations:
        flyer.heading = 270.0
        if flyer.h[-1] <= 0.5:
            flyer.fly(_Phase(4, 0, 200, 1))
            flyer.fly(_Phase(8, 60, 700, 3))
        else:
            flyer.fly(_Phase(6, 60, 700, 3))
        while flyer.h[-1] < a.entry_ft * FT:
            flyer.fly(_Phase(1))
        flyer.fly(_Phase(2, None, 0, 2))
        flyer.fly(_Phase(60, 60, turn_deg=180))
        phases = _autorotation_phases(a)
        needed = -_east_distance_m(phases, start_kt=60)
        while flyer.x[-1] < needed:
            flyer.fly(_Phase(1))
        flyer.fly(_Phase(60, turn_deg=180))
        flyer.heading = 270.0
        for phase in phases:
            flyer.fly(phase)
    rng = np.random.default_rng(seed)
    t = np.array(flyer.t)
    n = t.size
    # Receiver-like errors: a bias and white noise (invented, of the size GPS receivers show).
    east = np.array(flyer.x) + rng.normal(0, 0.8, n) + rng.normal(0, 1.0)
    north = np.array(flyer.y) + rng.normal(0, 0.8, n) + rng.normal(0, 1.0)
    alt = elevation_ft * FT + np.array(flyer.h) + rng.normal(0, 1.0, n) + rng.normal(0, 2.0)
    speed = np.abs(np.array(flyer.v) + rng.normal(0, 0.1, n)) / KT
    lat = aim_lat_deg + np.degrees(north / EARTH_M)
    lon = aim_lon_deg + np.degrees(east / (EARTH_M * math.cos(math.radians(aim_lat_deg))))
    lines = ["time,lat,lon,alt_m,speed_kt,course_deg"]
    for k in range(n):
        stamp = (started_at + timedelta(seconds=float(t[k]))).isoformat(timespec="milliseconds").replace("+00:00", "Z")
        lines.append(f"{stamp},{lat[k]:.7f},{lon[k]:.7f},{alt[k]:.2f},{speed[k]:.2f},{flyer.course[k]:.1f}")
    return ("\n".join(lines) + "\n").encode()
