"""What the sortie sheet shows of a sortie's recorded tracks: summaries, figures and profile charts."""
from sqlalchemy.orm import Session

from server.compute.flare import expected_flare_band_ft
from server.logbook.models import Sortie
from server.logbook import tracks
from server.logbook.track_chart import profile_svg

# Label, unit, decimals: in the order an instructor reads an autorotation.
FIGURE_LABELS = {
    "entry_height_ft": ("Entry height", "ft AGL", 0),
    "entry_groundspeed_kt": ("Entry groundspeed", "kt", 0),
    "descent_groundspeed_kt": ("Descent groundspeed", "kt", 0),
    "descent_rate_fpm": ("Rate of descent", "ft/min", 0),
    "flare_height_ft": ("Flare begun at", "ft AGL", 0),
    "recovery_height_ft": ("Lowest height in the recovery", "ft AGL", 0),
    "touchdown_speed_kt": ("Groundspeed at the end", "kt", 1),
    "point_error_ft": ("From the aim point (+ long, − short)", "ft", 0),
    "track_error_deg": ("Track against the landing direction", "°", 0),
}
GROUND_REF_WORDS = {
    "on_ground_readings": "the receiver's own readings on the ground at the site",
    "site_elevation": "the site elevation (the track has no readings on the ground there)",
}


def _band(sortie: Sortie) -> tuple[float, float] | None:
    helicopter = sortie.aircraft.type
    try:
        return expected_flare_band_ft(
            baseline_low_ft=helicopter.flare_band_low_ft, baseline_high_ft=helicopter.flare_band_high_ft,
            weight_lb=sortie.takeoff_weight_lb, reference_weight_lb=helicopter.reference_weight_lb,
            density_ratio=sortie.density_ratio)
    except ValueError:
        return None


def _used_by(sortie: Sortie, track_id: int) -> dict[int, list[int]]:
    """Detection index -> sequence numbers of the attempts whose measured figures come from it."""
    used: dict[int, list[int]] = {}
    for attempt in sortie.attempts:
        for name in attempt.measured_fields:
            entry = attempt.measured[name]
            if entry.get("track_id") == track_id and attempt.sequence not in used.setdefault(entry["detection"], []):
                used[entry["detection"]].append(attempt.sequence)
    return used


def sheet_tracks(session: Session, *, sortie: Sortie) -> list[dict]:
    band = _band(sortie)
    shown = []
    for track in tracks.tracks_of(session, sortie=sortie):
        used = _used_by(sortie, track.id)
        detections = []
        for d in track.detections:
            rows = []
            for name, (label, unit, digits) in FIGURE_LABELS.items():
                value = d.get(name)
                rows.append({"name": name, "label": label, "unit": unit, "digits": digits, "value": value,
                             "uncertainty": d["uncertainty"].get(name), "reason": d["unmeasured"].get(name)})
            ground = d["termination"] == "ground"
            candidates = [a for a in sortie.attempts
                          if (a.termination in tracks.GROUND_TERMINATIONS) == ground]
            detections.append({
                "index": d["index"], "start_clock": d["start_at"][11:19], "ground": ground, "rows": rows,
                "used_by": used.get(d["index"], []), "candidates": candidates,
                # Drawn from numbers, every text escaped (server/logbook/track_chart.py): the template marks it safe.
                "chart": profile_svg(
                    chart_id=f"profile-{track.id}-{d['index']}", profile=d["profile"], flare_band_ft=band,
                    title=f"Profile of autorotation {d['index']} found in the track"),
            })
        shown.append({"track": track, "ground_ref_words": GROUND_REF_WORDS[track.ground_ref],
                      "detections": detections})
    return shown
