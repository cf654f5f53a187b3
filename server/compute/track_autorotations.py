"""Find each practice autorotation in a recorded track and measure it, every figure with its uncertainty.

A practice autorotation shows in a track as a sustained descent far steeper than a normal approach while
the aircraft keeps forward speed; then the flare (groundspeed falling fast) and an end: either a power
recovery (descent arrested well above the ground, then a climb) or an end at the ground (a touchdown or a
hover: a receiver alone cannot tell those two apart). Heights and rates come from a Savitzky-Golay filter
(scipy); the flare starts where a hinge fitted to the groundspeed by least squares breaks downwards.

Every figure carries a 95 % uncertainty built from the sample rate, the fix quality (HDOP, VDOP,
differential fix) and the method; a figure that cannot be measured is None with the reason.
"""
import math
from dataclasses import dataclass, field
from datetime import timedelta

import numpy as np

from server.compute.track_files import KT_PER_MS, Track
from server.compute.track_geo import (
    FT_PER_M,
    along_landing_direction_ft,
    bearing_deg,
    signed_angle_deg,
    to_local_m,
)

FPM_PER_MS = FT_PER_M * 60


@dataclass(frozen=True)
class DetectionSettings:
    """Every threshold of the detector, in one place."""

    # Sustained descent well above a normal approach (these run at 500-800 ft/min, common practice).
    descent_rate_fpm: float = 1200.0
    min_descent_s: float = 5.0
    # Noise at a descent rate near the threshold breaks the run; pieces this close together are one.
    steep_gap_s: float = 2.0
    # Forward speed during the descent: a hover or a vertical descent is not detected.
    min_groundspeed_kt: float = 15.0
    # The entry is the last moment before the descent at which the aircraft was about level.
    level_rate_fpm: float = 300.0
    # Smoothing windows (seconds; at least 5 samples at any rate).
    height_window_s: float = 3.0
    speed_window_s: float = 1.0
    # The flare is searched from the middle of the descent to where groundspeed has halved,
    # at most this long after the steep descent.
    flare_search_s: float = 15.0
    # The end: either slow over the ground for this long, within this soon after the flare ...
    settle_s: float = 3.0
    settle_within_s: float = 15.0
    settle_groundspeed_kt: float = 15.0
    # ... or a climb by this much within this long: a power recovery.
    recovery_climb_ft: float = 50.0
    recovery_within_s: float = 30.0
    # Touchdown (or hover): a line falling, then level, is fitted to heights from this far above the
    # lowest point soon after the flare to this long after it.
    touchdown_window_ft: float = 12.0
    touchdown_after_s: float = 8.0
    # Readings on the ground: stationary this long, slower than this, within this height of the site
    # elevation and (with an aim point) this close to it.
    ground_min_s: float = 10.0
    ground_groundspeed_kt: float = 3.0
    ground_match_ft: float = 200.0
    # Pressure altitudes on the standard setting (IGC) differ from the elevation by the day's pressure:
    # about 30 ft per hPa (common practice), so up to about 1,500 ft in any weather.
    ground_match_pressure_ft: float = 1500.0
    ground_radius_m: float = 1500.0
    # A reading on the ground this close in time shares most of the receiver's vertical error.
    ground_fresh_s: float = 600.0


@dataclass(frozen=True)
class AccuracySettings:
    """Receiver accuracy (95 %) and what each method adds; see the sources beside each value."""

    # GPS SPS Performance Standard (2008), a well-designed receiver: about 3 m horizontal, 5 m vertical.
    horizontal_m: float = 3.0
    vertical_m: float = 5.0
    # With SBAS (WAAS performance analysis reports): about 1 m horizontal, 1.8 m vertical.
    sbas_horizontal_m: float = 1.0
    sbas_vertical_m: float = 1.8
    # The DOPs at which those figures hold (assumption: typical geometry); worse DOPs scale them up,
    # better ones never claim better than the standard.
    nominal_hdop: float = 1.5
    nominal_vdop: float = 2.5
    # Doppler speed over ground: about 0.2 m/s per axis, 95 % (about 0.4 kt).
    doppler_kt: float = 0.4
    # Derived: heights taken from readings on the ground nearby in time keep this share of the error.
    fresh_ground_share: float = 0.6
    # A reading taken as "on the ground" may be a low hover (3-5 ft skid height, common practice).
    hover_allowance_ft: float = 5.0
    # Method: a pilot's flare is not a step; its start is ambiguous by about this much.
    flare_timing_s: float = 0.5
    # Method: what the instructor would call the entry groundspeed varies over the first second.
    speed_method_kt: float = 1.0


@dataclass(frozen=True)
class SiteInfo:
    """What the analysis needs of the site and the sortie."""

    elevation_ft: float
    aim_lat_deg: float | None = None
    aim_lon_deg: float | None = None
    landing_dirs_deg: tuple[float, ...] = ()


@dataclass
class Detection:
    index: int
    start_at: object
    end_at: object
    termination: str
    flare_at: object | None
    figures: dict[str, float | None]
    uncertainty: dict[str, float]
    unmeasured: dict[str, str]
    landing_dir_deg: float | None
    end_lat_deg: float
    end_lon_deg: float
    profile: dict[str, list]


@dataclass
class TrackAnalysis:
    ground_ref: str
    sample_rate_hz: float
    has_doppler_speed: bool
    detections: list[Detection]
    notes: list[str] = field(default_factory=list)


FIGURES = ("entry_height_ft", "entry_groundspeed_kt", "descent_groundspeed_kt", "descent_rate_fpm",
           "flare_height_ft", "recovery_height_ft", "touchdown_speed_kt", "point_error_ft", "track_error_deg")
HEIGHT_FIGURES = ("entry_height_ft", "flare_height_ft", "recovery_height_ft")


def _odd_window(seconds: float, rate_hz: float, minimum: int = 5) -> int:
    n = max(minimum, int(round(seconds * rate_hz)))
    return n if n % 2 else n + 1


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(start, end) index pairs, end exclusive, of each run of True."""
    padded = np.concatenate(([False], mask, [False]))
    edges = np.flatnonzero(np.diff(padded.astype(np.int8)))
    return list(zip(edges[::2], edges[1::2]))


def _merged(runs: list[tuple[int, int]], gap: int) -> list[tuple[int, int]]:
    merged: list[tuple[int, int]] = []
    for start, end in runs:
        if merged and start - merged[-1][1] <= gap:
            merged[-1] = (merged[-1][0], end)
        else:
            merged.append((start, end))
    return merged


def _dop_scale(values: np.ndarray, nominal: float) -> float:
    finite = values[np.isfinite(values)]
    return max(1.0, float(np.median(finite)) / nominal) if finite.size else 1.0


def _hinge_fit(t: np.ndarray, y: np.ndarray, *, falling_after: bool):
    """Best least-squares hinge over every break k: with `falling_after`, y = c + s * max(0, t - t_k)
    (level, then falling: a flare in groundspeed); otherwise y = c + s * min(0, t - t_k) (falling, then
    level: a touchdown in height). Returns (k, slope, standard error of t_k) or None."""
    n = t.size
    if n < 6:
        return None
    candidates = np.arange(2, n - 2)
    offset = t[None, :] - t[candidates, None]  # one row per candidate break
    ramp = np.maximum(0.0, offset) if falling_after else np.minimum(0.0, offset)
    centred = ramp - ramp.mean(axis=1, keepdims=True)
    y_centred = y - y.mean()
    slope = (centred @ y_centred) / np.maximum((centred**2).sum(axis=1), 1e-12)
    sse = ((y_centred[None, :] - slope[:, None] * centred) ** 2).sum(axis=1)
    sse[slope >= 0] = np.inf  # falling in both shapes
    best = int(np.argmin(sse))
    if not math.isfinite(sse[best]):
        return None
    k = int(candidates[best])
    residual_sd = math.sqrt(sse[best] / max(1, n - 3))
    sloped = int((t > t[k]).sum() if falling_after else (t < t[k]).sum())
    # Where two lines meet, the time is known to about the scatter over the slope, shrinking with the
    # number of readings on the sloping part.
    timing_se = residual_sd / abs(float(slope[best])) / math.sqrt(max(1, sloped))
    return k, float(slope[best]), timing_se, residual_sd


class _Series:
    """The track on a uniform time grid, smoothed."""

    def __init__(self, track: Track, settings: DetectionSettings, origin: tuple[float, float]):
        from scipy.signal import savgol_filter  # here, not at the top: scipy.signal takes a second to import, and
        # every command and app process would pay it at start whether it reads a track or not
        rate = track.sample_rate_hz
        self.dt = 1.0 / rate
        self.t = np.arange(0.0, float(track.t_s[-1]) + 1e-9, self.dt)
        self.rate = rate
        east, north = to_local_m(track.lat_deg, track.lon_deg, origin_lat_deg=origin[0], origin_lon_deg=origin[1])
        self.origin = origin
        self.x = np.interp(self.t, track.t_s, east)
        self.y = np.interp(self.t, track.t_s, north)
        self.alt = np.interp(self.t, track.t_s, track.alt_m)
        n_height = _odd_window(settings.height_window_s, rate)
        n_speed = _odd_window(settings.speed_window_s, rate, minimum=3)
        self.n_height = n_height
        self.height = savgol_filter(self.alt, n_height, 3)
        self.vs = savgol_filter(self.alt, n_height, 3, deriv=1, delta=self.dt)
        self.vx = savgol_filter(self.x, n_height, 3, deriv=1, delta=self.dt)
        self.vy = savgol_filter(self.y, n_height, 3, deriv=1, delta=self.dt)
        self.doppler = track.has_doppler_speed
        if self.doppler:
            finite = np.isfinite(track.speed_ms)
            raw = np.interp(self.t, track.t_s[finite], track.speed_ms[finite])
            self.gs = savgol_filter(raw, n_speed, 2)
            self.gs_for_fit = raw  # least squares needs no smoothing, and smoothing would blur the break
        else:
            self.gs = np.hypot(self.vx, self.vy)
            self.gs_for_fit = self.gs

    def at(self, index: int, started_at):
        return started_at + timedelta(seconds=float(self.t[index]))


def _ground_segments(series: _Series, site: SiteInfo, settings: DetectionSettings, match_ft: float):
    """(mid time s, median altitude m) of stationary stretches that look like the site's ground."""
    still = (series.gs < settings.ground_groundspeed_kt / KT_PER_MS) & (
        np.abs(series.vs) < settings.level_rate_fpm / FPM_PER_MS)
    site_m = site.elevation_ft / FT_PER_M
    found = []
    for start, end in _runs(still):
        if series.t[end - 1] - series.t[start] < settings.ground_min_s:
            continue
        level = float(np.median(series.alt[start:end]))
        if abs(level - site_m) * FT_PER_M > match_ft:
            continue
        if site.aim_lat_deg is not None:
            distance = math.hypot(float(np.median(series.x[start:end])), float(np.median(series.y[start:end])))
            if distance > settings.ground_radius_m:
                continue
        found.append((float(series.t[(start + end) // 2]), level))
    return found


def analyse_track(track: Track, site: SiteInfo, *, settings: DetectionSettings = DetectionSettings(),
                  accuracy: AccuracySettings = AccuracySettings()) -> TrackAnalysis:
    """Every practice autorotation in the track, measured."""
    origin = ((site.aim_lat_deg, site.aim_lon_deg) if site.aim_lat_deg is not None and site.aim_lon_deg is not None
              else (float(track.lat_deg[0]), float(track.lon_deg[0])))
    series = _Series(track, settings, origin)
    match_ft = settings.ground_match_pressure_ft if track.altitude_datum == "pressure_1013" else settings.ground_match_ft
    grounds = _ground_segments(series, site, settings, match_ft)
    notes = list(track.notes)
    ground_ref = "on_ground_readings" if grounds else "site_elevation"
    heights_reason = None
    if not grounds and track.altitude_datum == "pressure_1013":
        heights_reason = ("the file's heights are pressure altitudes (1013.25 hPa) and the track has no readings "
                          "on the ground at the site to reference them")
    elif not grounds and track.altitude_datum == "unstated":
        notes.append("Heights are taken from the site elevation; this file does not state its height datum "
                      "(some phones record heights above the ellipsoid, which differ from sea level by tens of metres).")

    sbas = track.fix_kind == "sbas"
    horizontal_m = (accuracy.sbas_horizontal_m if sbas else accuracy.horizontal_m) * _dop_scale(track.hdop, accuracy.nominal_hdop)
    vdop_source = track.vdop if np.isfinite(track.vdop).any() else track.hdop * (accuracy.nominal_vdop / accuracy.nominal_hdop)
    vertical_m = (accuracy.sbas_vertical_m if sbas else accuracy.vertical_m) * _dop_scale(vdop_source, accuracy.nominal_vdop)

    steep = (series.vs < -settings.descent_rate_fpm / FPM_PER_MS) & (series.gs > settings.min_groundspeed_kt / KT_PER_MS)
    steep_runs = [(a, b) for a, b in _merged(_runs(steep), int(settings.steep_gap_s / series.dt))
                  if series.t[b - 1] - series.t[a] >= settings.min_descent_s]
    detections: list[Detection] = []
    last_end = -1
    for a, b in steep_runs:
        if a <= last_end:
            continue
        found = _measure(series, track, site, settings, accuracy, a, b, grounds, horizontal_m, vertical_m,
                         heights_reason, len(detections) + 1)
        if found is not None:
            detection, end_index = found
            detections.append(detection)
            last_end = end_index
    return TrackAnalysis(ground_ref=ground_ref, sample_rate_hz=track.sample_rate_hz,
                         has_doppler_speed=track.has_doppler_speed, detections=detections, notes=notes)


def _measure(series: _Series, track: Track, site: SiteInfo, settings: DetectionSettings,
             accuracy: AccuracySettings, a: int, b: int, grounds, horizontal_m: float, vertical_m: float,
             heights_reason: str | None, number: int):
    t, dt = series.t, series.dt
    n = t.size
    level = settings.level_rate_fpm / FPM_PER_MS
    # Entry: the last about-level moment before the steep descent.
    entry = a
    while entry > 0 and series.vs[entry] < -level:
        entry -= 1
    # Steady descent: the steep run.
    descent_rate_ms = float(np.median(-series.vs[a:b]))
    descent_gs_ms = float(np.median(series.gs[a:b]))

    # Flare: the hinge in groundspeed between the middle of the steep run and where the deceleration
    # is nearly over (three quarters of the speed lost by then).
    search_end = min(n, b + int(settings.flare_search_s / dt))
    start_search = (a + b) // 2
    lowest = float(series.gs[b:search_end].min()) if search_end > b else descent_gs_ms
    nearly = np.flatnonzero(series.gs[b:search_end] <= lowest + 0.25 * (descent_gs_ms - lowest))
    window_end = max(b + (int(nearly[0]) + 1 if nearly.size else 0), min(n, b + 3))
    flare, flare_se_s = None, 0.0
    if window_end - start_search >= 6:
        fit = _hinge_fit(t[start_search:window_end], series.gs_for_fit[start_search:window_end], falling_after=True)
        if fit is not None:
            flare, flare_se_s = start_search + fit[0], fit[2]

    # End: slow over the ground for a while soon after (a touchdown or a hover), or a climb (power recovery).
    after = flare if flare is not None else b
    settle_n = max(2, int(round(settings.settle_s / dt)))
    horizon = min(n, after + int((settings.settle_within_s + settings.settle_s) / dt))
    slow = series.gs < settings.settle_groundspeed_kt / KT_PER_MS
    settle_start = None
    for start, end in _runs(slow[after:horizon]):
        if end - start >= settle_n:
            settle_start = after + start
            break
    bottom_horizon = min(n, after + int(settings.settle_within_s / dt))
    bottom = after + int(np.argmin(series.height[after:bottom_horizon])) if bottom_horizon > after else after
    termination = None
    if settle_start is not None:
        termination = "ground"
        # The end of the descent: where a line falling, then level, fits the last feet of height best.
        lowest_level = float(series.height[bottom])
        low = np.flatnonzero(series.height[after:bottom + 1] <= lowest_level + settings.touchdown_window_ft / FT_PER_M)
        first = after + int(low[0]) if low.size else after
        last = min(n, max(bottom, first) + int(settings.touchdown_after_s / dt))
        fit = _hinge_fit(t[first:last], series.alt[first:last], falling_after=False)
        if fit is None:
            end, td_timing_s = bottom, settings.touchdown_after_s
        else:
            # Honest timing: the break itself, or the time the last sink takes to cross one reading's
            # scatter, whichever is longer (a slow final sink hides in the height noise).
            end = first + fit[0]
            td_timing_s = 2 * dt + max(2 * fit[2], 1.5 * fit[3] / abs(fit[1]))
    else:
        climb_horizon = min(n, bottom + int(settings.recovery_within_s / dt))
        if climb_horizon > bottom and (series.height[bottom:climb_horizon].max() - series.height[bottom]) * FT_PER_M >= settings.recovery_climb_ft:
            termination = "power_recovery"
            end = bottom
    if termination is None:
        return None

    figures: dict[str, float | None] = {name: None for name in FIGURES}
    uncertainty: dict[str, float] = {}
    unmeasured: dict[str, str] = {}

    # Heights above the ground.
    ground_level, fresh = _ground_for(t[end], grounds, site, settings)
    share = accuracy.fresh_ground_share if fresh else 1.0
    vertical_ft = vertical_m * share * FT_PER_M + (accuracy.hover_allowance_ft if grounds else 0.0)
    timing_half_s = dt / 2

    def height_at(index: int) -> float:
        return (float(series.height[index]) - ground_level) * FT_PER_M

    def put(name: str, value: float, plus_minus: float, digits: int = 0):
        figures[name] = round(value, digits) if digits else float(round(value))
        uncertainty[name] = round(plus_minus, 1)

    if heights_reason:
        for name in HEIGHT_FIGURES:
            unmeasured[name] = heights_reason
    else:
        entry_rate_fps = abs(float(series.vs[entry])) * FT_PER_M
        put("entry_height_ft", height_at(entry), vertical_ft + entry_rate_fps * (timing_half_s + 0.5))
        if flare is not None:
            rate_fps = abs(float(series.vs[flare])) * FT_PER_M
            timing_ft = rate_fps * (timing_half_s + accuracy.flare_timing_s + 2 * flare_se_s)
            put("flare_height_ft", height_at(flare), math.hypot(timing_ft, vertical_m * share * FT_PER_M)
                + (accuracy.hover_allowance_ft if grounds else 0.0))
        else:
            unmeasured["flare_height_ft"] = "no deceleration that marks a flare was found"
        if termination == "power_recovery":
            put("recovery_height_ft", height_at(bottom), vertical_ft)
        else:
            unmeasured["recovery_height_ft"] = "the autorotation ended at the ground, not in a power recovery"

    speed_noise_kt = _speed_noise_kt(series, track, horizontal_m, accuracy)
    # The entry moment is known to about half the height filter's window: whatever the speed did then.
    half = series.n_height // 2 + 1
    entry_spread_kt = float(np.ptp(series.gs[max(0, entry - half):entry + half + 1])) * KT_PER_MS
    put("entry_groundspeed_kt", float(series.gs[entry]) * KT_PER_MS,
        speed_noise_kt + accuracy.speed_method_kt + entry_spread_kt, 1)
    steady_n = max(1, b - a)
    put("descent_groundspeed_kt", descent_gs_ms * KT_PER_MS,
        speed_noise_kt / math.sqrt(steady_n * dt) + accuracy.speed_method_kt, 1)
    rate_noise = _rate_noise_fpm(series, vertical_m)
    put("descent_rate_fpm", descent_rate_ms * FPM_PER_MS, rate_noise / math.sqrt(max(1.0, (b - a) * dt)) + 50.0)

    if termination == "ground":
        # Whatever the groundspeed and position did while the moment of touchdown is uncertain.
        spread = int(math.ceil(td_timing_s / dt))
        lo, hi = max(0, end - spread), min(n, end + spread + 1)
        speed_spread_kt = float(np.ptp(series.gs_for_fit[lo:hi])) * KT_PER_MS
        moved_ft = math.hypot(float(np.ptp(series.x[lo:hi])), float(np.ptp(series.y[lo:hi]))) * FT_PER_M
        if series.doppler:
            put("touchdown_speed_kt", float(series.gs_for_fit[end]) * KT_PER_MS, accuracy.doppler_kt + speed_spread_kt, 1)
        else:
            unmeasured["touchdown_speed_kt"] = ("the file carries no Doppler speed; speed computed from "
                                                "successive positions is not a touchdown speed")
    else:
        unmeasured["touchdown_speed_kt"] = "a power recovery has no touchdown"
        moved_ft = 0.0

    # Direction over the ground from the flare (or the descent) to the end.
    begin = flare if flare is not None else (a + b) // 2
    de, dn = float(series.x[end] - series.x[begin]), float(series.y[end] - series.y[begin])
    travelled = math.hypot(de, dn)
    course = bearing_deg(de, dn)
    landing_dir = None
    if site.landing_dirs_deg:
        landing_dir = min(site.landing_dirs_deg, key=lambda d: abs(signed_angle_deg(course, d)))
    if travelled < 10:
        unmeasured["track_error_deg"] = "the aircraft barely moved over the ground in the flare"
    elif landing_dir is None:
        unmeasured["track_error_deg"] = "the site has no landing directions"
    else:
        put("track_error_deg", signed_angle_deg(course, landing_dir),
            math.degrees(math.atan2(2 * horizontal_m, travelled)) + 2.0)

    end_lat, end_lon = _to_latlon(series, end)
    if termination != "ground":
        unmeasured["point_error_ft"] = "a power recovery does not land"
    elif site.aim_lat_deg is None or site.aim_lon_deg is None:
        unmeasured["point_error_ft"] = "the site has no aim point"
    else:
        direction = landing_dir if landing_dir is not None else course
        along, _ = along_landing_direction_ft(lat_deg=end_lat, lon_deg=end_lon, aim_lat_deg=site.aim_lat_deg,
                                              aim_lon_deg=site.aim_lon_deg, landing_dir_deg=direction)
        put("point_error_ft", along, horizontal_m * FT_PER_M + moved_ft)

    detection = Detection(
        index=number, start_at=series.at(entry, track.started_at), end_at=series.at(end, track.started_at),
        termination=termination, flare_at=series.at(flare, track.started_at) if flare is not None else None,
        figures=figures, uncertainty=uncertainty, unmeasured=unmeasured, landing_dir_deg=landing_dir,
        end_lat_deg=end_lat, end_lon_deg=end_lon,
        profile=_profile(series, entry, end, flare, ground_level),
    )
    return detection, max(end, b)


def _ground_for(time_s: float, grounds, site: SiteInfo, settings: DetectionSettings) -> tuple[float, bool]:
    """Ground level (m) for a moment: the nearest reading on the ground, else the site elevation."""
    if not grounds:
        return site.elevation_ft / FT_PER_M, False
    mid, level = min(grounds, key=lambda g: abs(g[0] - time_s))
    return level, abs(mid - time_s) <= settings.ground_fresh_s


def _speed_noise_kt(series: _Series, track: Track, horizontal_m: float, accuracy: AccuracySettings) -> float:
    """95 % noise of one groundspeed reading: Doppler's, or that of the filtered position difference."""
    if series.doppler:
        return accuracy.doppler_kt
    # Gain of the Savitzky-Golay derivative on white noise of the horizontal error per axis.
    coefficients = _derivative_gain(series.n_height, series.dt)
    return horizontal_m / 2.45 * coefficients * 1.96 * KT_PER_MS * math.sqrt(2)


def _rate_noise_fpm(series: _Series, vertical_m: float) -> float:
    return vertical_m / 1.96 * _derivative_gain(series.n_height, series.dt) * 1.96 * FPM_PER_MS


def _derivative_gain(window: int, dt: float) -> float:
    from scipy.signal import savgol_coeffs

    return float(np.sqrt(np.sum(savgol_coeffs(window, 3, deriv=1, delta=dt) ** 2)))


def _to_latlon(series: _Series, index: int) -> tuple[float, float]:
    from server.compute.track_geo import radii_m

    lat0, lon0 = series.origin
    meridional, prime = radii_m(lat0)
    lat = lat0 + math.degrees(float(series.y[index]) / meridional)
    lon = lon0 + math.degrees(float(series.x[index]) / (prime * math.cos(math.radians(lat0))))
    return lat, lon


def _profile(series: _Series, entry: int, end: int, flare: int | None, ground_level: float) -> dict[str, list]:
    """A small copy of the profile for the chart: at most about 150 points from 5 s before to 8 s after."""
    first = max(0, entry - int(5 / series.dt))
    last = min(series.t.size, end + int(8 / series.dt) + 1)
    step = max(1, (last - first) // 150)
    picks = np.arange(first, last, step)
    return {
        "t_s": [round(float(series.t[i] - series.t[entry]), 2) for i in picks],
        "height_ft": [round((float(series.height[i]) - ground_level) * FT_PER_M, 1) for i in picks],
        "groundspeed_kt": [round(float(series.gs[i]) * KT_PER_MS, 1) for i in picks],
        "flare_t_s": round(float(series.t[flare] - series.t[entry]), 2) if flare is not None else None,
        "end_t_s": round(float(series.t[end] - series.t[entry]), 2),
    }
