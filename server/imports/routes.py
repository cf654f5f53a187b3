"""Pages: importing earlier records step by step (file, mapping, dry run, import) and the imports made."""
import hashlib

from fastapi import APIRouter, Request
from sqlalchemy import select
from starlette.concurrency import run_in_threadpool
from starlette.datastructures import UploadFile

from server.deps import DbSession
from server.people.deps import SetupUser
from server.errors import Conflict, Invalid
from server.imports import columns, service
from server.imports.api import read_upload
from server.imports.reading import read_table
from server.people.models import Person
from server.web import render

router = APIRouter(include_in_schema=False)
PREVIEW_ROWS = 100
ACTIONS = ("check", "import", "import_clean")


def _page_context(db, person) -> dict:
    return {"person": person, "batches": service.list_batches(db), "kinds": columns.KINDS,
            "people_names": _names(db)}


def _names(db) -> dict[int, str]:
    return dict(db.execute(select(Person.id, Person.name)).all())


@router.get("/setup/imports", name="import_list")
def import_page(request: Request, db: DbSession, person: SetupUser):
    """The import form and every import made so far."""
    return render(request, "imports/imports.html", _page_context(db, person))


def _mapping_from_form(form, kind: str, header: list[str], file_sha256: str) -> dict | None:
    """The person's choices on the mapping step, if they were made for this file and kind."""
    if form.get("mapping_for") != f"{kind}:{file_sha256}":
        return None  # a new file or another kind: start from the guess
    mapping = {}
    for field in columns.fields_of(kind):
        value = str(form.get(f"map_{field.key}", ""))
        mapping[field.key] = value if value in header else None
    return mapping


@router.post("/setup/imports", name="import_check")
async def import_step(request: Request, db: DbSession, person: SetupUser):
    """One step: check the file with the mapping shown (a dry run), or import it."""
    async with request.form() as form:  # closes the uploaded file's spool when done
        kind = str(form.get("kind", ""))
        context = _page_context(db, person) | {"kind": kind}
        try:
            # Reading and checking a large file takes a while: off the event loop.
            outcome = await run_in_threadpool(_run_step, db, person, form)
        except (Invalid, Conflict) as error:
            context["problem"] = error.message
            return render(request, "imports/imports.html", context, status_code=422, fragment="imports/_step.html")
    context |= {"outcome": outcome, "fields": columns.fields_of(kind), "preview_rows": PREVIEW_ROWS,
                "errors_by_row": _by_row(outcome.errors)}
    status = 422 if outcome.refused else 200
    return render(request, "imports/imports.html", context, status_code=status, fragment="imports/_step.html")


def _run_step(db, person, form) -> service.Outcome:
    kind, action, upload = str(form.get("kind", "")), str(form.get("action", "check")), form.get("file")
    if kind not in columns.KINDS:
        raise Invalid("Choose what the file holds: people or past attempts.")
    if action not in ACTIONS:
        raise Invalid("Choose to check the file or to import it.")
    if not isinstance(upload, UploadFile) or not upload.filename:
        raise Invalid("Choose the file to import.")
    data = read_upload(upload)
    table = read_table(data)
    mapping = _mapping_from_form(form, kind, table.header, hashlib.sha256(data).hexdigest())
    return service.run_import(db, actor=person, kind=kind, data=data, file_name=upload.filename, mapping=mapping,
                              dry_run=action == "check", only_clean=action == "import_clean")


def _by_row(errors) -> dict[int, list]:
    grouped: dict[int, list] = {}
    for error in errors:
        grouped.setdefault(error.row, []).append(error)
    return grouped


@router.get("/setup/imports/{batch_id}", name="import_batch")
def batch_page(request: Request, db: DbSession, person: SetupUser, batch_id: int):
    """One import: who made it, from which file, with which mapping, and what each row became."""
    batch = service.get_batch(db, batch_id=batch_id)
    return render(request, "imports/batch.html", {
        "person": person, "batch": batch, "records": service.batch_records(db, batch=batch),
        "people_names": _names(db), "fields": {f.key: f.label for f in columns.fields_of(batch.kind)},
    })
