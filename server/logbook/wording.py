"""How an attempt's outcome reads on its card: the verdict with its reason, the wind with its side."""
from server.logbook.models import Attempt

METRIC_NAMES = {
    "touchdown_speed": "touchdown speed", "flare_height": "flare height", "rotor_rpm": "rotor RPM",
    "airspeed": "descent airspeed", "touchdown_point": "touchdown point", "heading": "heading",
}
# What the groundspeed at the end of an attempt is called depends on how it ended: a power
# recovery never touches down.
END_SPEED_NAMES = {
    "touchdown": "Touchdown speed", "to_hover": "Groundspeed into the hover",
    "power_recovery": "Groundspeed at recovery",
}
FLAG_SHORT = {
    "nr_limits": "Rotor RPM outside limits", "takeover": "Instructor took the controls",
    "hv_avoid": "Entry in the avoid region", "fast_touchdown": "Fast touchdown",
    "low_flare": "Flare below the band",
}


def metric_name(key: str, termination: str) -> str:
    if key == "touchdown_speed":
        return END_SPEED_NAMES.get(termination, "End groundspeed").lower()
    return METRIC_NAMES.get(key, key)


def outside(attempt: Attempt) -> list[str]:
    """The measures recorded beyond their tolerance, in the trade's words."""
    return [metric_name(key, attempt.termination) for key, part in (attempt.parts or {}).items()
            if part.get("deviation", 0) > 0]


def verdict_reason(attempt: Attempt) -> str:
    """Why an attempt is (not) satisfactory, in one short phrase."""
    beyond = outside(attempt)
    beyond_text = "outside on " + ", ".join(beyond) if beyond else ""
    if attempt.takeover:
        return "the instructor took the controls"
    if attempt.grade == "unsatisfactory":
        return "graded so by the instructor" + (f"; {beyond_text}" if beyond else "")
    if attempt.grade == "satisfactory":
        return "instructor's grade" + (f", though {beyond_text}" if beyond else "")
    if not attempt.parts:
        return "nothing measured to judge by"
    return beyond_text if beyond else "inside every tolerance"


def wind_words(attempt: Attempt) -> str | None:
    """Head or tail wind and the crosswind's side (components are positive from the right)."""
    if attempt.headwind_kt is None or attempt.crosswind_kt is None:
        return None
    along = f"{abs(attempt.headwind_kt):.0f} kt {'headwind' if attempt.headwind_kt >= 0 else 'tailwind'}"
    cross = abs(attempt.crosswind_kt)
    if round(cross) == 0:
        return f"{along}, no crosswind"
    side = "right" if attempt.crosswind_kt > 0 else "left"
    return f"{along}, {cross:.0f} kt crosswind from the {side}"
