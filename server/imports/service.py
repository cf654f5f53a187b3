"""Importing a school's earlier records: people, and past practice autorotations.

Every row is checked first (a dry run stops there and says, row by row, what would be created and
what is wrong). Nothing is created unless the whole file is clean, or the person chose to take only
the clean rows. Imported sorties go through the same services as typed ones (created, each attempt
scored with the standard that applies, then signed), signed by the importing chief pilot with the
meaning "transcribed from earlier records"; they count for trends and currency like any signed record.
Each import is one audited batch, and each created record is linked to its batch and file row.
"""
import hashlib
from collections import defaultdict
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, time
from zoneinfo import ZoneInfo

from pydantic import ValidationError
from sqlalchemy import insert, select
from sqlalchemy.orm import Session

from server.errors import Conflict, FlarebookError, Forbidden, Invalid, NotFound
from server.fleet.models import Aircraft, HelicopterType, Site
from server.imports import columns, values
from server.imports.models import ImportBatch, ImportedRecord
from server.imports.reading import Table, read_table
from server.logbook import transcribe
from server.logbook.schemas import AttemptFields, SortieCreate, SortieFields
from server.people import service as people
from server.people.models import Person
from server.people.security import new_secret
from server.records import audit
from server.vocabulary import MANEUVER_LABELS, TERMINATION_LABELS

DEFAULT_TIME = time(12, 0)  # a sheet without times: midday, local
EARLIEST = date(1950, 1, 1)
NUMBER_UNITS = {
    "landing_dir_deg": ("deg", "°"), "entry_height_ft": ("ft", "agl"), "entry_kias": ("kt", "kts", "kias"),
    "descent_kias": ("kt", "kts", "kias"), "nr_low_pct": ("%", "pct"), "nr_high_pct": ("%", "pct"),
    "flare_height_ft": ("ft", "agl"), "touchdown_speed_kt": ("kt", "kts"), "point_error_ft": ("ft",),
    "heading_error_deg": ("deg", "°"), "oat_c": ("c", "°c", "°"), "altimeter_hpa": ("hpa", "mb"),
    "altimeter_inhg": ("inhg",), "wind_dir_deg": ("deg", "°"), "wind_kt": ("kt", "kts"), "gust_kt": ("kt", "kts"),
    "takeoff_weight_lb": ("lb", "lbs"), "takeoff_weight_kg": ("kg",),
}
ATTEMPT_NUMBERS = ("landing_dir_deg", "entry_height_ft", "entry_kias", "descent_kias", "nr_low_pct", "nr_high_pct",
                   "flare_height_ft", "touchdown_speed_kt", "point_error_ft", "heading_error_deg")
SORTIE_NUMBERS = ("oat_c", "altimeter_hpa", "altimeter_inhg", "wind_dir_deg", "wind_kt", "gust_kt",
                  "takeoff_weight_lb", "takeoff_weight_kg")


@dataclass(frozen=True)
class RowError:
    row: int
    column: str
    message: str


@dataclass
class PlannedPerson:
    row: int
    name: str
    email: str
    roles: list[str]


@dataclass
class PlannedAttempt:
    row: int
    group: tuple
    flown_at: datetime
    pilot: Person
    instructor: Person
    aircraft: Aircraft
    site: Site
    sortie_fields: dict
    attempt: AttemptFields


@dataclass
class Outcome:
    """What an import found and did; `created` stays at zero for a dry run or a refused import."""

    kind: str
    file_format: str
    file_description: str
    file_sha256: str
    header: list[str]
    mapping: dict[str, str | None]
    rows: int
    ok: int
    errors: list[RowError]
    dry_run: bool
    would_create: dict[str, int]
    created: dict[str, int] = field(default_factory=lambda: {"people": 0, "sorties": 0, "attempts": 0})
    preview: list[tuple[int, str]] = field(default_factory=list)
    batch_id: int | None = None
    refused: str | None = None  # why nothing was created, when the import was refused
    earlier_batch: ImportBatch | None = None  # the same file imported before

    @property
    def clean(self) -> bool:
        return not self.errors


def _zero() -> dict[str, int]:
    return {"people": 0, "sorties": 0, "attempts": 0}


# ---- checking ------------------------------------------------------------------------------------

def _cell(row: list, header: list[str], mapping: dict, key: str):
    column = mapping.get(key)
    return None if column is None else row[header.index(column)]


def _label(mapping: dict, key: str) -> str:
    """The column a message points at: the file's header for the field, else the field's own name."""
    return mapping.get(key) or next(f.label for kind in columns.FIELDS.values() for f in kind if f.key == key)


def _missing_columns(kind: str, mapping: dict) -> list[RowError]:
    return [RowError(1, f.label, f"No column gives the {f.label.lower()}; choose its column on the mapping step.")
            for f in columns.fields_of(kind) if f.required and not mapping.get(f.key)]


def _validation_errors(error: ValidationError, row: int, mapping: dict, *, whole_row_key: str) -> list[RowError]:
    """pydantic's complaints about one row, in words, each pointing at its column."""
    out = []
    for problem in error.errors():
        key = str(problem["loc"][0]) if problem["loc"] else whole_row_key
        context, value = problem.get("ctx") or {}, problem.get("input")
        if problem["type"] == "less_than_equal":
            message = f"{_plain(value)} is above the highest value accepted here, {_plain(context['le'])}."
        elif problem["type"] == "greater_than_equal":
            message = f"{_plain(value)} is below the lowest value accepted here, {_plain(context['ge'])}."
        elif problem["type"] == "string_too_long":
            message = f"The text is longer than {context['max_length']} characters."
        else:
            message = problem["msg"].removeprefix("Value error, ")
            message = message[:1].upper() + message[1:] + ("" if message.endswith(".") else ".")
        out.append(RowError(row, _label(mapping, key), message))
    return out


def _plain(value) -> str:
    """140.0 reads 140; 12.5 stays 12.5."""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


def check_people(session: Session, table: Table, mapping: dict) -> tuple[list[PlannedPerson], list[RowError]]:
    """Each row as a person to create, or the reasons it cannot be one."""
    known = set(session.scalars(select(Person.email)))
    seen: dict[str, int] = {}
    planned, errors = [], []
    for number, row in table.rows:
        problems = []
        name = " ".join(values.text(_cell(row, table.header, mapping, "name")).split())
        email = people.normalise_email(values.text(_cell(row, table.header, mapping, "email")))
        if not name:
            problems.append(RowError(number, _label(mapping, "name"), "The name is empty."))
        elif len(name) > 120:
            problems.append(RowError(number, _label(mapping, "name"), "The name is longer than 120 characters."))
        if not email:
            problems.append(RowError(number, _label(mapping, "email"), "The email address is empty."))
        elif "@" not in email or " " in email or len(email) > 254:
            problems.append(RowError(number, _label(mapping, "email"), f"{email!r} is not an email address."))
        elif email in known:
            problems.append(RowError(number, _label(mapping, "email"), f"Someone already signs in as {email}."))
        elif email in seen:
            problems.append(RowError(number, _label(mapping, "email"),
                                     f"{email} is also on row {seen[email]} of this file."))
        try:
            roles = values.roles(_cell(row, table.header, mapping, "roles"))
        except values.CellError as error:
            problems.append(RowError(number, _label(mapping, "roles"), str(error)))
            roles = []
        if email:
            seen.setdefault(email, number)
        if problems:
            errors.extend(problems)
        else:
            planned.append(PlannedPerson(row=number, name=name, email=email, roles=roles))
    return planned, errors


class _Directory:
    """The school's people, aircraft, types and sites, read once and looked up per row."""

    def __init__(self, session: Session):
        everyone = list(session.scalars(select(Person)))
        self.by_email = {p.email: p for p in everyone}
        self.by_name: dict[str, list[Person]] = defaultdict(list)
        for person in everyone:
            self.by_name[_fold(person.name)].append(person)
        self.aircraft = list(session.scalars(select(Aircraft)))
        self.by_registration = {_registration(a.registration): a for a in self.aircraft}
        self.types = {_fold(t.designation): t for t in session.scalars(select(HelicopterType))}
        self.sites = list(session.scalars(select(Site)))
        self.by_site = {_fold(s.name): s for s in self.sites}

    def person(self, cell, what: str) -> Person:
        raw = values.text(cell)
        if not raw:
            raise values.CellError(f"The {what} is empty.")
        if "@" in raw:
            found = self.by_email.get(people.normalise_email(raw))
            if found is None:
                raise values.CellError(f"No one signs in as {raw}; import the people first.")
            return found
        matches = self.by_name.get(_fold(raw), [])
        if not matches:
            raise values.CellError(f"No one is called {raw!r}; import the people first, or give the email address.")
        if len(matches) > 1:
            raise values.CellError(f"{len(matches)} people are called {raw!r}; give the email address instead.")
        return matches[0]

    def aircraft_for(self, registration_cell, type_cell) -> Aircraft:
        registration, designation = values.text(registration_cell), values.text(type_cell)
        if registration:
            found = self.by_registration.get(_registration(registration))
            if found is None:
                raise values.CellError(f"No aircraft is registered {registration!r}; add it under Setup first.")
            if designation and _fold(found.type.designation) != _fold(designation):
                raise values.CellError(f"{found.registration} is a {found.type.designation}, not a {designation}.")
            return found
        candidates = self.aircraft
        if designation:
            helicopter = self.types.get(_fold(designation))
            if helicopter is None:
                raise values.CellError(f"No helicopter type is called {designation!r}; add it under Setup first.")
            candidates = [a for a in self.aircraft if a.type_id == helicopter.id]
        if len(candidates) == 1:
            return candidates[0]
        which = f"of type {designation} " if designation else ""
        if not candidates:
            raise values.CellError(f"The school has no aircraft {which}yet; add one under Setup first.")
        raise values.CellError(f"The school has {len(candidates)} aircraft {which}; give the registration.")

    def site_for(self, cell) -> Site:
        name = values.text(cell)
        if name:
            found = self.by_site.get(_fold(name))
            if found is None:
                raise values.CellError(f"No site is called {name!r}; add it under Setup first.")
            return found
        if len(self.sites) == 1:
            return self.sites[0]
        raise values.CellError("The school has several sites; give the site." if self.sites
                               else "The school has no site yet; add one under Setup first.")


def _fold(text: str) -> str:
    return " ".join(text.split()).casefold()


def _registration(text: str) -> str:
    return "".join(ch for ch in text.upper() if ch.isalnum())


def check_attempts(session: Session, table: Table, mapping: dict) -> tuple[list[PlannedAttempt], list[RowError]]:
    """Each row as a past attempt (and its sortie) to create, or the reasons it cannot be one."""
    directory = _Directory(session)
    zone = ZoneInfo(people.school(session).timezone)
    today = people.school_today(session)
    planned, errors = [], []
    for number, row in table.rows:
        problems: list[RowError] = []

        def read(key, parse, *args):
            try:
                return parse(_cell(row, table.header, mapping, key), *args)
            except values.CellError as error:
                problems.append(RowError(number, _label(mapping, key), str(error)))
                return None

        flown = read("date", values.date_and_time)
        at = read("time", values.time_of_day) if mapping.get("time") else None
        if flown is not None:
            flown_on, time_in_date = flown
            at = at or time_in_date
            if flown_on > today:
                problems.append(RowError(number, _label(mapping, "date"), f"{flown_on} is in the future."))
            elif flown_on < EARLIEST:
                problems.append(RowError(number, _label(mapping, "date"), f"{flown_on} is before {EARLIEST.year}."))
        pilot = read("pilot", directory.person, "pilot")
        instructor = read("instructor", directory.person, "instructor")
        if instructor is not None and not instructor.has_role("instructor"):
            problems.append(RowError(number, _label(mapping, "instructor"),
                                     f"{instructor.name} is not an instructor in Flarebook."))
        if pilot is not None and not pilot.active:
            problems.append(RowError(number, _label(mapping, "pilot"), f"{pilot.name} is not active."))
        try:
            aircraft = directory.aircraft_for(_cell(row, table.header, mapping, "aircraft"),
                                              _cell(row, table.header, mapping, "type"))
        except values.CellError as error:
            problems.append(RowError(number, _label(mapping, "aircraft" if mapping.get("aircraft") else "type"),
                                     str(error)))
            aircraft = None
        site = read("site", directory.site_for)
        attempt_values = {
            "maneuver": read("maneuver", values.maneuver), "termination": read("termination", values.termination),
            "takeover": read("takeover", values.yes_no) or False, "grade": read("grade", values.grade),
            "remarks": values.text(_cell(row, table.header, mapping, "remarks")),
        }
        for key in ATTEMPT_NUMBERS:
            attempt_values[key] = read(key, values.number, NUMBER_UNITS[key])
        sortie_values = {key: read(key, values.number, NUMBER_UNITS[key]) for key in SORTIE_NUMBERS}
        attempt = None
        if attempt_values["maneuver"] and attempt_values["termination"]:
            try:
                attempt = AttemptFields.model_validate(attempt_values)
            except ValidationError as error:
                problems.extend(_validation_errors(error, number, mapping, whole_row_key="nr_low_pct"))
        try:
            SortieFields.model_validate({k: v for k, v in sortie_values.items() if v is not None})
        except ValidationError as error:
            problems.extend(_validation_errors(error, number, mapping, whole_row_key="wind_kt"))
        if problems:
            errors.extend(problems)
            continue
        local = datetime.combine(flown_on, at or DEFAULT_TIME, tzinfo=zone)
        group = (values.text(_cell(row, table.header, mapping, "sortie")), local, pilot.id, instructor.id,
                 aircraft.id, site.id)
        planned.append(PlannedAttempt(
            row=number, group=group, flown_at=local.astimezone(UTC), pilot=pilot, instructor=instructor,
            aircraft=aircraft, site=site, sortie_fields={k: v for k, v in sortie_values.items() if v is not None},
            attempt=attempt))
    return planned, errors


# ---- the import --------------------------------------------------------------------------------

def _describe_person(plan: PlannedPerson) -> str:
    return f"Person {plan.name} <{plan.email}>, {', '.join(r.replace('_', ' ') for r in plan.roles)}"


def _describe_attempt(plan: PlannedAttempt, zone: ZoneInfo) -> str:
    local = plan.flown_at.astimezone(zone)
    grade = f", graded {plan.attempt.grade}" if plan.attempt.grade else ""
    return (f"{local:%Y-%m-%d %H:%M}: {MANEUVER_LABELS[plan.attempt.maneuver]} · "
            f"{TERMINATION_LABELS[plan.attempt.termination]}{grade} — {plan.pilot.name} with "
            f"{plan.instructor.name}, {plan.aircraft.registration}, {plan.site.name}")


def _groups(plans: list[PlannedAttempt]) -> dict[tuple, list[PlannedAttempt]]:
    grouped: dict[tuple, list[PlannedAttempt]] = {}
    for plan in plans:
        grouped.setdefault(plan.group, []).append(plan)
    return grouped


def earlier_batch(session: Session, *, kind: str, file_sha256: str) -> ImportBatch | None:
    return session.scalar(select(ImportBatch).where(ImportBatch.kind == kind, ImportBatch.file_sha256 == file_sha256)
                          .order_by(ImportBatch.id).limit(1))


def run_import(session: Session, *, actor: Person, kind: str, data: bytes, file_name: str = "",
               mapping: dict | None = None, dry_run: bool = True, only_clean: bool = False) -> Outcome:
    """Check a file and, unless it is a dry run, create its records as one batch."""
    if not actor.has_role("chief_pilot", "admin"):
        raise Forbidden("Only chief pilots and administrators import records.")
    fields = columns.fields_of(kind)
    table = read_table(data)
    used = columns.check_mapping(kind, table.header, mapping) if mapping else columns.guess_mapping(kind,
                                                                                                   table.header)
    digest = hashlib.sha256(data).hexdigest()
    errors = _missing_columns(kind, used)
    plans: list = []
    if not errors:
        check = check_people if kind == "people" else check_attempts
        plans, errors = check(session, table, used)
    ok = len(plans)
    zone = ZoneInfo(people.school(session).timezone)
    would = _zero()
    if kind == "people":
        would["people"] = ok
        preview = [(p.row, _describe_person(p)) for p in plans]
    else:
        would["sorties"], would["attempts"] = len(_groups(plans)), ok
        preview = [(p.row, _describe_attempt(p, zone)) for p in plans]
    outcome = Outcome(
        kind=kind, file_format=table.file_format, file_description=table.describe(), file_sha256=digest,
        header=table.header, mapping={f.key: used.get(f.key) for f in fields}, rows=len(table.rows), ok=ok,
        errors=errors, dry_run=dry_run, would_create=would, preview=preview,
        earlier_batch=earlier_batch(session, kind=kind, file_sha256=digest),
    )
    if dry_run:
        return outcome
    if kind == "attempts" and not actor.has_role("chief_pilot"):
        raise Forbidden("Imported sorties are signed by the importing chief pilot; only a chief pilot imports them.")
    if outcome.earlier_batch is not None:
        raise Conflict(f"This file was imported already (import {outcome.earlier_batch.id}, "
                       f"{outcome.earlier_batch.imported_at:%Y-%m-%d %H:%M} UTC); nothing was created.")
    if errors and not only_clean:
        outcome.refused = (f"{len({e.row for e in errors})} row(s) have problems, so nothing was created. "
                           "Correct them and import again, or choose to import only the clean rows.")
        return outcome
    if not plans:
        outcome.refused = "No row can be imported, so nothing was created."
        return outcome
    batch = ImportBatch(kind=kind, imported_by_id=actor.id, file_name=file_name[:255], file_sha256=digest,
                        file_format=table.file_format, mapping=outcome.mapping, rows=outcome.rows,
                        rows_left_out=outcome.rows - ok, created=_zero())
    session.add(batch)
    session.flush()
    try:
        links = _create_people(session, actor, plans) if kind == "people" else _create_sorties(session, actor,
                                                                                                 batch, plans)
    except FlarebookError as error:  # a check above missed something: say so, and keep nothing
        raise Invalid(f"The import stopped and created nothing: {error.message}") from None
    session.execute(insert(ImportedRecord), [dict(link, batch_id=batch.id) for link in links])
    created = _zero()
    created["people"] = sum(1 for link in links if link.get("person_id"))
    created["attempts"] = sum(1 for link in links if link.get("attempt_id"))
    created["sorties"] = len({link["sortie_id"] for link in links if link.get("sortie_id")})
    batch.created = created
    session.flush()
    audit.append(session, actor_id=actor.id, action="import", entity="import_batch", entity_id=batch.id,
                 after=batch_record(batch))
    outcome.created, outcome.batch_id = created, batch.id
    return outcome


def _create_people(session: Session, actor: Person, plans: list[PlannedPerson]) -> list[dict]:
    links = []
    for plan in plans:
        # A password no one knows: the person signs in once an administrator sets one.
        person = people.create_person(session, name=plan.name, email=plan.email, roles=plan.roles,
                                      password=new_secret(), actor=actor)
        links.append({"row": plan.row, "person_id": person.id})
    return links


def _create_sorties(session: Session, actor: Person, batch: ImportBatch, plans: list[PlannedAttempt]) -> list[dict]:
    groups = list(_groups(plans).values())
    items = []
    for group in groups:
        first = group[0]
        rows = ", ".join(str(p.row) for p in group)
        remark = f"Transcribed from earlier records: import {batch.id}, file row{'s' if len(group) > 1 else ''} {rows}."
        items.append(transcribe.TranscribedSortie(
            data=SortieCreate(flown_at=first.flown_at, aircraft_id=first.aircraft.id, pilot_id=first.pilot.id,
                              site_id=first.site.id, instructor_id=first.instructor.id, remarks=remark[:4000],
                              **first.sortie_fields),
            aircraft=first.aircraft, site=first.site, attempts=[p.attempt for p in group]))
    sorties = transcribe.create_transcribed(session, actor=actor, sorties=items,
                                            reason=f"transcribed from earlier records, import {batch.id}")
    links = []
    for sortie, group in zip(sorties, groups, strict=True):
        for attempt, plan in zip(sorted(sortie.attempts, key=lambda a: a.sequence), group, strict=True):
            links.append({"row": plan.row, "sortie_id": sortie.id, "attempt_id": attempt.id})
    return links


def batch_record(batch: ImportBatch) -> dict:
    """What the audit chain keeps of a batch."""
    return {"id": batch.id, "kind": batch.kind, "imported_by_id": batch.imported_by_id,
            "file_name": batch.file_name, "file_sha256": batch.file_sha256, "file_format": batch.file_format,
            "mapping": batch.mapping, "rows": batch.rows, "rows_left_out": batch.rows_left_out,
            "created": batch.created}


# ---- listing -----------------------------------------------------------------------------------

def list_batches(session: Session, *, limit: int = 200) -> list[ImportBatch]:
    return list(session.scalars(select(ImportBatch).order_by(ImportBatch.id.desc()).limit(limit)))


def get_batch(session: Session, *, batch_id: int) -> ImportBatch:
    batch = session.get(ImportBatch, batch_id)
    if batch is None:
        raise NotFound("No such import.")
    return batch


def batch_records(session: Session, *, batch: ImportBatch) -> list[ImportedRecord]:
    return list(session.scalars(select(ImportedRecord).where(ImportedRecord.batch_id == batch.id)
                                .order_by(ImportedRecord.row)))


def batch_of_sortie(session: Session, *, sortie_id: int) -> ImportBatch | None:
    """The import a sortie came from, if it was imported."""
    return session.scalar(select(ImportBatch).join(ImportedRecord, ImportedRecord.batch_id == ImportBatch.id)
                          .where(ImportedRecord.sortie_id == sortie_id).limit(1))
