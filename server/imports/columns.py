"""What an import can fill, and a first guess at which column of the file gives each field.

The guess compares the file's headers, in a normalised form (lower case, punctuation and units in
brackets set aside), with the names a school's own sheet is likely to use. The person checks the guess
and corrects it on the mapping step; the mapping used is kept with the batch.
"""
import re
from dataclasses import dataclass

from server.errors import Invalid


@dataclass(frozen=True)
class Field:
    key: str
    label: str
    required: bool = False
    names: tuple[str, ...] = ()  # header names that mean this field (normalised)
    hint: str = ""


PEOPLE_FIELDS = (
    Field("name", "Name", True, ("name", "full name", "person", "pilot", "student", "instructor", "first and last name")),
    Field("email", "Email (sign-in)", True, ("email", "e mail", "email address", "mail", "login", "sign in")),
    Field("roles", "Roles", False, ("role", "roles", "position", "function", "job"),
          "student, instructor, chief pilot or administrator; several separated by commas. Empty: student."),
)

ATTEMPT_FIELDS = (
    Field("date", "Date flown", True, ("date", "flown on", "date flown", "day", "flight date", "sortie date")),
    Field("time", "Time of day", False, ("time", "take off time", "takeoff time", "start time", "time flown", "off block"),
          "Local time at the school; empty: midday."),
    Field("sortie", "Sortie number in the sheet", False, ("sortie", "sortie no", "sortie number", "flight",
                                                          "flight no", "flight number", "lesson no"),
          "Rows with the same number (and date, pilot, instructor, aircraft and site) make one sortie."),
    Field("pilot", "Pilot (email or name)", True, ("pilot", "student", "trainee", "pilot name", "student name",
                                                   "pilot email", "student email", "candidate")),
    Field("instructor", "Instructor (email or name)", True, ("instructor", "instructor name", "instructor email",
                                                             "examiner", "fi", "cfi", "graded by")),
    Field("aircraft", "Aircraft registration", False, ("aircraft", "registration", "reg", "tail", "tail number",
                                                       "aircraft registration", "airframe"),
          "Empty: the helicopter type's only aircraft, or the school's only aircraft."),
    Field("type", "Helicopter type", False, ("type", "helicopter type", "aircraft type", "model", "helicopter")),
    Field("site", "Site", False, ("site", "location", "practice area", "field", "airfield", "heliport", "place"),
          "Empty: the school's only site."),
    Field("maneuver", "Maneuver", True, ("maneuver", "manoeuvre", "manoeuver", "auto type", "autorotation",
                                          "autorotation type", "kind", "exercise", "entry")),
    Field("termination", "Termination", True, ("termination", "terminate", "terminated", "ending", "end",
                                                "recovery", "finish")),
    Field("landing_dir_deg", "Landing direction (°)", False, ("landing direction", "landing dir", "runway",
                                                               "direction", "heading landing")),
    Field("entry_height_ft", "Entry height (ft AGL)", False, ("entry height", "entry altitude", "entry agl",
                                                               "height at entry", "start height")),
    Field("entry_kias", "Entry airspeed (KIAS)", False, ("entry kias", "entry airspeed", "entry speed", "entry ias")),
    Field("descent_kias", "Descent airspeed (KIAS)", False, ("descent kias", "descent airspeed", "descent speed",
                                                              "glide speed", "airspeed", "ias", "kias")),
    Field("nr_low_pct", "Lowest rotor RPM (% NR)", False, ("nr low", "rotor rpm low", "rrpm low", "low rpm",
                                                            "min rpm", "min nr", "lowest nr", "lowest rotor rpm")),
    Field("nr_high_pct", "Highest rotor RPM (% NR)", False, ("nr high", "rotor rpm high", "rrpm high", "high rpm",
                                                              "max rpm", "max nr", "highest nr", "highest rotor rpm")),
    Field("flare_height_ft", "Flare height (ft AGL)", False, ("flare height", "flare", "flare agl", "flare at",
                                                               "flare initiation height")),
    Field("touchdown_speed_kt", "Touchdown speed (kt)", False, ("touchdown speed", "td speed", "landing speed",
                                                                 "groundspeed at touchdown", "touchdown groundspeed",
                                                                 "termination speed")),
    Field("point_error_ft", "Distance from aim point (ft, + long)", False, ("point error", "distance from aim point",
                                                                             "aim point error", "spot error",
                                                                             "distance", "long short")),
    Field("heading_error_deg", "Heading error (°)", False, ("heading error", "heading", "heading dev",
                                                             "alignment error")),
    Field("takeover", "Instructor took the controls", False, ("takeover", "took controls", "took over",
                                                              "instructor took controls", "instructor takeover")),
    Field("grade", "Grade", False, ("grade", "result", "assessment", "sat unsat", "s u", "mark", "outcome")),
    Field("remarks", "Remarks", False, ("remarks", "remark", "notes", "note", "comments", "comment", "debrief")),
    Field("oat_c", "Outside air temperature (°C)", False, ("oat", "temperature", "temp", "outside air temperature")),
    Field("altimeter_hpa", "Altimeter setting (hPa)", False, ("qnh", "altimeter", "altimeter setting", "pressure")),
    Field("altimeter_inhg", "Altimeter setting (inHg)", False, ("qnh inhg", "altimeter inhg", "altimeter setting inhg")),
    Field("wind_dir_deg", "Wind direction (°)", False, ("wind direction", "wind dir", "wind from")),
    Field("wind_kt", "Wind speed (kt)", False, ("wind speed", "wind", "wind kt")),
    Field("gust_kt", "Gusts (kt)", False, ("gust", "gusts", "gusting")),
    Field("takeoff_weight_lb", "Take-off weight (lb)", False, ("takeoff weight", "take off weight", "weight", "tow",
                                                                "gross weight", "weight lb")),
    Field("takeoff_weight_kg", "Take-off weight (kg)", False, ("takeoff weight kg", "take off weight kg",
                                                                "weight kg", "tow kg", "mass", "take off mass")),
)

FIELDS = {"people": PEOPLE_FIELDS, "attempts": ATTEMPT_FIELDS}
KINDS = tuple(FIELDS)
# Units that may stand in brackets or at the end of a header without changing which field it is.
NEUTRAL_UNITS = {"ft", "feet", "agl", "kt", "kts", "knots", "kias", "pct", "percent", "deg", "degrees", "c",
                 "lb", "lbs", "hpa", "mb", "nr"}
UNIT_FIELDS = {"kg": {"takeoff_weight_lb": "takeoff_weight_kg"}, "inhg": {"altimeter_hpa": "altimeter_inhg"}}


def fields_of(kind: str) -> tuple[Field, ...]:
    if kind not in FIELDS:
        raise Invalid(f"The kind of import is people or attempts, not {kind!r}.")
    return FIELDS[kind]


def normalise(header: str) -> str:
    """'Touchdown speed (kt)' -> 'touchdown speed kt'; '°' reads 'deg', '%' reads 'pct'."""
    text = header.casefold().replace("°", " deg ").replace("%", " pct ").replace("-", " ").replace("_", " ")
    return " ".join(re.findall(r"[a-z0-9]+", text))


def _without_units(name: str) -> str:
    words = name.split()
    while len(words) > 1 and words[-1] in NEUTRAL_UNITS:
        words.pop()
    return " ".join(words)


def _field_for(header: str, fields: tuple[Field, ...]) -> str | None:
    name = normalise(header)
    bare = _without_units(name)
    words = set(name.split())
    for field in fields:
        candidates = {normalise(field.key), normalise(field.label), *field.names}
        if name in candidates or bare in candidates or _without_units(normalise(field.label)) == bare:
            key = field.key
            for unit, swaps in UNIT_FIELDS.items():
                if unit in words and key in swaps:
                    key = swaps[key]
            return key
    return None


def guess_mapping(kind: str, header: list[str]) -> dict[str, str | None]:
    """field -> the header of the column that seems to give it, or None; each column used once."""
    fields = fields_of(kind)
    mapping: dict[str, str | None] = {f.key: None for f in fields}
    for column in header:
        key = _field_for(column, fields)
        if key is not None and mapping.get(key) is None:
            mapping[key] = column
    return mapping


def check_mapping(kind: str, header: list[str], mapping: dict) -> dict[str, str | None]:
    """A mapping the person sent, completed from the guess for fields it leaves out; refused if it cannot be used."""
    if not isinstance(mapping, dict):
        raise Invalid("The mapping is a JSON object from field names to column headers.")
    fields = {f.key for f in fields_of(kind)}
    unknown = sorted(set(mapping) - fields)
    if unknown:
        raise Invalid(f"The mapping names fields this import does not have: {', '.join(unknown)}. "
                      f"Fields: {', '.join(sorted(fields))}.")
    by_fold = {h.casefold(): h for h in header}
    out = guess_mapping(kind, header)
    out.update({key: None for key in mapping})
    used: dict[str, str] = {}
    for key, column in mapping.items():
        if column in (None, ""):
            continue
        if not isinstance(column, str) or column.casefold() not in by_fold:
            raise Invalid(f"The mapping gives {key} from a column {column!r} the file does not have. "
                          f"Its columns: {', '.join(header)}.")
        column = by_fold[column.casefold()]
        if column in used:
            raise Invalid(f"The column {column!r} is mapped to both {used[column]} and {key}; choose one.")
        used[column] = key
        out[key] = column
    # A guessed field whose column the person gave to another field gives way.
    for key, column in list(out.items()):
        if column is not None and key not in mapping and column in used:
            out[key] = None
    return out
