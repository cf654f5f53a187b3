"""A kinematic model of a training sortie with practice autorotations, with known truth, for the tests.

Written here, apart from the detector, so the detector is checked against an independent description
of the manoeuvre. Phases are described by groundspeed and vertical speed over time and integrated at
100 Hz; the truth of every figure is read off the integrated flight. Sampling adds receiver errors as the
GPS SPS Performance Standard (2008) describes them for a well-designed receiver: about 3 m horizontal and
5 m vertical, 95 % (here: a constant bias, a slowly wandering part and white noise that together give
those 95 % figures); Doppler speed about 0.2 m/s per axis, 95 %.
"""
import math
from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone

import numpy as np

FT = 0.3048
KT = 1852 / 3600
FPM = FT / 60
STEP = 0.01  # s, integration step
EARTH_M = 6371008.8  # mean Earth radius (IUGG); positions only need to be consistent, not exact


@dataclass
class Truth:
    termination: str  # "power_recovery" or "ground"
    entry_t: float
    flare_t: float
    end_t: float
    entry_height_ft: float
    entry_groundspeed_kt: float
    descent_groundspeed_kt: float
    descent_rate_fpm: float
    flare_height_ft: float
    recovery_height_ft: float | None = None
    touchdown_speed_kt: float | None = None
    end_east_m: float = 0.0
    end_north_m: float = 0.0
    track_deg: float = 0.0


@dataclass
class Flight:
    """The flight as integrated: time, east, north, height AGL (m), groundspeed (m/s), course (deg)."""

    heading_deg: float = 90.0
    t: list = field(default_factory=lambda: [0.0])
    east: list = field(default_factory=lambda: [0.0])
    north: list = field(default_factory=lambda: [0.0])
    height: list = field(default_factory=lambda: [0.0])
    speed: list = field(default_factory=lambda: [0.0])
    course: list = field(default_factory=lambda: [90.0])
    truths: list = field(default_factory=list)

    def fly(self, seconds: float, *, speed_to_kt: float | None = None, vs_to_fpm: float | None = None,
            vs_ramp_s: float = 0.0, speed_ramp_s: float | None = None, turn_deg: float = 0.0,
            stop_at_height_ft: float | None = None):
        """Fly for `seconds`: groundspeed changes linearly to `speed_to_kt` (over `speed_ramp_s`, default the
        whole phase), vertical speed to `vs_to_fpm` over `vs_ramp_s`; the heading turns by `turn_deg`."""
        v0, w0 = self.speed[-1], self._vs
        v1 = v0 if speed_to_kt is None else speed_to_kt * KT
        w1 = w0 if vs_to_fpm is None else vs_to_fpm * FPM
        speed_ramp = seconds if speed_ramp_s is None else speed_ramp_s
        steps = int(round(seconds / STEP))
        for i in range(1, steps + 1):
            tau = i * STEP
            v = v0 + (v1 - v0) * min(1.0, tau / speed_ramp) if speed_ramp > 0 else v1
            w = w0 + (w1 - w0) * min(1.0, tau / vs_ramp_s) if vs_ramp_s > 0 else w1
            self.heading_deg += turn_deg / steps
            h = self.height[-1] + w * STEP
            if h <= 0.0:  # on the ground
                h, w = 0.0, 0.0
            heading = math.radians(self.heading_deg)
            self.t.append(self.t[-1] + STEP)
            self.east.append(self.east[-1] + v * math.sin(heading) * STEP)
            self.north.append(self.north[-1] + v * math.cos(heading) * STEP)
            self.height.append(h)
            self.speed.append(v)
            self.course.append(self.heading_deg % 360)
            self._vs = w
            if stop_at_height_ft is not None and h <= stop_at_height_ft * FT:
                break
        return self

    _vs: float = 0.0

    # --- whole manoeuvres -------------------------------------------------------------------------

    def autorotation(self, *, end: str, rate_fpm: float = 1500, entry_kt: float = 65, descent_kt: float = 60,
                     flare_ft: float = 70, flare_s: float = 5.0, td_kt: float = 6.0, recovery_bottom_ft: float = 60):
        """Entry from level flight, steady descent, flare, then `end`: "touchdown", "hover" or "recovery"."""
        self.fly(6, speed_to_kt=entry_kt, vs_to_fpm=0, vs_ramp_s=2)
        entry_t, entry_h = self.t[-1], self.height[-1]
        self.fly(3, speed_to_kt=descent_kt, vs_to_fpm=-rate_fpm, vs_ramp_s=3)
        self.fly(600, stop_at_height_ft=flare_ft)
        flare_t, flare_h = self.t[-1], self.height[-1]
        if end == "recovery":
            # Flare and power: descent arrested at the bottom, then a climb away.
            climb_fpm = 800
            to_bottom_s = 2 * (flare_h / FT - recovery_bottom_ft) / (rate_fpm / 60)
            self.fly(to_bottom_s, speed_to_kt=descent_kt - 20, vs_to_fpm=0, vs_ramp_s=to_bottom_s,
                     speed_ramp_s=to_bottom_s)
            bottom_t, bottom_h = self.t[-1], self.height[-1]  # the descent rate reaches zero here
            self.fly(4, vs_to_fpm=climb_fpm, vs_ramp_s=2)
            self.fly(30, speed_to_kt=60)
            truth = Truth("power_recovery", entry_t, flare_t, bottom_t, entry_h / FT, entry_kt,
                          descent_kt, rate_fpm, flare_h / FT, recovery_height_ft=bottom_h / FT)
        else:
            # Flare: descent rate falls to zero at the level-off height, speed bleeds off.
            level_ft = 8.0
            flare_time = 2 * (flare_h / FT - level_ft) / (rate_fpm / 60)
            flare_time = max(flare_time, 1.0)
            self.fly(flare_time, speed_to_kt=20, vs_to_fpm=0, vs_ramp_s=flare_time, speed_ramp_s=flare_time)
            if end == "touchdown":
                sink_s = 4.0
                self.fly(sink_s + 1, speed_to_kt=20 - (20 - td_kt) * (sink_s + 1) / sink_s, vs_to_fpm=-120,
                         vs_ramp_s=0.5, stop_at_height_ft=0.0)
                td_index = len(self.height) - 1
                td_speed = self.speed[-1] / KT
                self.fly(max(0.5, td_speed / 6), speed_to_kt=0)  # the skids slide to a stop
                self.fly(20, vs_to_fpm=0)
            else:
                self.fly(4, speed_to_kt=td_kt, vs_to_fpm=-60, vs_ramp_s=0.5)
                td_index = len(self.height) - 1
                td_speed = self.speed[-1] / KT
                self.fly(1.5, speed_to_kt=0, vs_to_fpm=0, vs_ramp_s=0.3)
                self.fly(15)  # a low hover
                self.fly(3, vs_to_fpm=-100, vs_ramp_s=0.5, stop_at_height_ft=0.0)
                self.fly(15, vs_to_fpm=0)  # set down
            truth = Truth("ground", entry_t, flare_t, self.t[td_index], entry_h / FT, entry_kt, descent_kt,
                          rate_fpm, flare_h / FT, touchdown_speed_kt=td_speed,
                          end_east_m=self.east[td_index], end_north_m=self.north[td_index],
                          track_deg=self.course[td_index])
        self.truths.append(truth)
        return self

    def take_off_and_climb(self, *, to_ft: float, climb_fpm: float = 700, speed_kt: float = 60):
        self.fly(4, vs_to_fpm=200, vs_ramp_s=1, stop_at_height_ft=None)
        self.fly(8, speed_to_kt=speed_kt, vs_to_fpm=climb_fpm, vs_ramp_s=3)
        while self.height[-1] < to_ft * FT:
            self.fly(1)
        self.fly(2, vs_to_fpm=0, vs_ramp_s=2)
        return self

    def normal_approach(self, *, rate_fpm: float = 600, from_kt: float = 60):
        self.fly(5, speed_to_kt=from_kt, vs_to_fpm=-rate_fpm, vs_ramp_s=3)
        while self.height[-1] > 60 * FT:
            self.fly(1)
        self.fly(12, speed_to_kt=0, vs_to_fpm=-250, vs_ramp_s=3, stop_at_height_ft=4)
        self.fly(2, vs_to_fpm=0, vs_ramp_s=1)
        self.fly(10)
        return self

    def circuit_to_autorotation(self, *, at_ft: float, **autorotation):
        """Climb out westbound, a racetrack (two right turns of 180 degrees), and an autorotation westbound
        that ends near the take-off point (the site's aim point)."""
        self.heading_deg = 270.0
        if self.height[-1] < 5 * FT:
            self.take_off_and_climb(to_ft=at_ft)
        else:
            self.fly(8, speed_to_kt=60, vs_to_fpm=700, vs_ramp_s=3)
            while self.height[-1] < at_ft * FT:
                self.fly(1)
            self.fly(2, vs_to_fpm=0, vs_ramp_s=2)
        self.fly(10, speed_to_kt=60)
        self.fly(60, turn_deg=180)
        scratch = Flight(heading_deg=270.0, height=[self.height[-1]], speed=[self.speed[-1]])
        scratch._vs = 0.0
        scratch.autorotation(**autorotation)
        truth = scratch.truths[0]
        distance = scratch.east[scratch.t.index(truth.end_t)] if truth.end_t in scratch.t else scratch.east[-1]
        while self.east[-1] < -distance:
            self.fly(1)
        self.fly(60, turn_deg=180)
        self.heading_deg = 270.0
        return self.autorotation(**autorotation)


def sample(flight: Flight, *, rate_hz: float, seed: int, doppler: bool = True, elevation_m: float = 120.0,
           origin=(50.60, -3.40), started_at=datetime(2026, 10, 14, 9, 30, tzinfo=timezone.utc)):
    """Sample the flight as a receiver would: rows of (time, lat, lon, alt MSL m, speed kt or None, course)."""
    rng = np.random.default_rng(seed)
    t_all = np.array(flight.t)
    times = np.arange(0.0, t_all[-1], 1.0 / rate_hz)
    index = np.minimum(np.searchsorted(t_all, times), t_all.size - 1)
    n = times.size
    dt = 1.0 / rate_hz

    def wander(sigma, tau):
        phi = math.exp(-dt / tau)
        out = np.empty(n)
        out[0] = rng.normal(0, sigma)
        shocks = rng.normal(0, sigma * math.sqrt(1 - phi * phi), n)
        for k in range(1, n):
            out[k] = phi * out[k - 1] + shocks[k]
        return out

    # Vertical: 1.5 m bias + 1.5 m wandering (20 min) + 1.0 m white: 2.35 m one sigma, 4.6 m at 95 %.
    vertical = rng.normal(0, 1.5) + wander(1.5, 1200.0) + rng.normal(0, 1.0, n)
    # Horizontal per axis: 1.0 m wandering (5 min) + 0.7 m white: 3.0 m radial at 95 %.
    east_err = wander(1.0, 300.0) + rng.normal(0, 0.7, n)
    north_err = wander(1.0, 300.0) + rng.normal(0, 0.7, n)
    east = np.array(flight.east)[index] + east_err
    north = np.array(flight.north)[index] + north_err
    lat = origin[0] + np.degrees(north / EARTH_M)
    lon = origin[1] + np.degrees(east / (EARTH_M * math.cos(math.radians(origin[0]))))
    alt = elevation_m + np.array(flight.height)[index] + vertical
    speed = np.array(flight.speed)[index]
    course = np.radians(np.array(flight.course)[index])
    ve = speed * np.sin(course) + rng.normal(0, 0.1, n)
    vn = speed * np.cos(course) + rng.normal(0, 0.1, n)
    rows = []
    for k in range(n):
        rows.append((started_at + timedelta(seconds=float(times[k])), float(lat[k]), float(lon[k]), float(alt[k]),
                     float(math.hypot(ve[k], vn[k]) / KT) if doppler else None,
                     float(math.degrees(math.atan2(ve[k], vn[k])) % 360)))
    return rows


def to_latlon(east_m: float, north_m: float, origin=(50.60, -3.40)) -> tuple[float, float]:
    return (origin[0] + math.degrees(north_m / EARTH_M),
            origin[1] + math.degrees(east_m / (EARTH_M * math.cos(math.radians(origin[0])))))


def rows_to_csv(rows) -> bytes:
    lines = ["time,lat,lon,alt_m,speed_kt,course_deg"]
    for at, lat, lon, alt, speed, course in rows:
        speed_text = "" if speed is None else f"{speed:.2f}"
        lines.append(f"{at.isoformat().replace('+00:00', 'Z')},{lat:.7f},{lon:.7f},{alt:.2f},{speed_text},{course:.1f}")
    return ("\n".join(lines) + "\n").encode()


def training_sortie(seed_shift: int = 0) -> Flight:
    """On the ground at the site, hover work, cruise and climbs, a normal approach, and four practice
    autorotations: two touchdowns, one to a hover, one power recovery."""
    f = Flight(heading_deg=270.0)
    f.fly(40)  # on the ground before take-off
    f.fly(3, vs_to_fpm=150, vs_ramp_s=1)
    f.fly(3, vs_to_fpm=0, vs_ramp_s=1)
    f.fly(20, speed_to_kt=4, turn_deg=90)  # hover work: hover taxi and a pedal turn
    f.fly(8, speed_to_kt=0, turn_deg=-90)
    f.fly(5, vs_to_fpm=-60, vs_ramp_s=1, stop_at_height_ft=0)
    f.fly(5, vs_to_fpm=0)
    f.circuit_to_autorotation(at_ft=800, end="touchdown", rate_fpm=1500 + 100 * seed_shift, flare_ft=70)
    f.circuit_to_autorotation(at_ft=700, end="recovery", rate_fpm=1700, flare_ft=110, recovery_bottom_ft=70)
    f.circuit_to_autorotation(at_ft=600, end="hover", rate_fpm=1800, flare_ft=80, td_kt=3)
    f.heading_deg = 270.0
    f.take_off_and_climb(to_ft=600)
    f.fly(50, speed_to_kt=85, turn_deg=360)  # cruise
    f.normal_approach(rate_fpm=700)
    f.circuit_to_autorotation(at_ft=750, end="touchdown", rate_fpm=1400, flare_ft=60, td_kt=9)
    return f


def short_sortie() -> Flight:
    """On the ground at the site, then one practice autorotation to a touchdown and one power recovery."""
    f = Flight(heading_deg=270.0)
    f.fly(40)
    f.circuit_to_autorotation(at_ft=700, end="touchdown", rate_fpm=1600, flare_ft=75, td_kt=5)
    f.circuit_to_autorotation(at_ft=700, end="recovery", rate_fpm=1700, flare_ft=110, recovery_bottom_ft=70)
    return f
