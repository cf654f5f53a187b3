"""JSON API: import earlier records from CSV or XLSX, and list the imports made (chief pilots, admins)."""
import json

from fastapi import APIRouter, File, Form, UploadFile
from fastapi.responses import JSONResponse

from server.deps import DbSession
from server.people.deps import ApiUser, require_role
from server.errors import Invalid
from server.imports import service
from server.imports.reading import MAX_BYTES
from server.imports.schemas import BatchDetailRead, BatchRead, ImportedRecordRead, ImportRead, Kind

router = APIRouter(tags=["imports"])
IMPORTERS = ("chief_pilot", "admin")


def read_upload(file: UploadFile) -> bytes:
    """The uploaded bytes, refusing a file over the size limit before reading all of it."""
    data = file.file.read(MAX_BYTES + 1)
    if len(data) > MAX_BYTES:
        raise Invalid(f"The file is larger than {MAX_BYTES // (1024 * 1024)} MB; split it and import the parts.")
    return data


def parse_mapping(mapping: str | None) -> dict | None:
    if mapping is None or not mapping.strip():
        return None
    try:
        value = json.loads(mapping)
    except ValueError:
        raise Invalid("The mapping is not JSON: send an object from field names to column headers.") from None
    if not isinstance(value, dict):
        raise Invalid("The mapping is a JSON object from field names to column headers.")
    return value


# A refused import answers 422 with the whole report (and `detail`); bad form fields get the usual error body.
REFUSED = {422: {"description": "The import was refused (every problem listed), or the form was not valid.",
                 "content": {"application/json": {"schema": {"anyOf": [
                     {"$ref": "#/components/schemas/ImportRead"},
                     {"$ref": "#/components/schemas/HTTPValidationError"}]}}}}}


@router.post("/imports", response_model=ImportRead, responses=REFUSED)
def import_file(db: DbSession, person: ApiUser, file: UploadFile = File(...), kind: Kind = Form(...),
                mapping: str | None = Form(default=None), dry_run: bool = Form(default=True),
                only_clean: bool = Form(default=False)):
    """Check a CSV or XLSX file of people or past attempts and, unless a dry run, import it as one batch.

    Nothing is created when a row has a problem, unless `only_clean` is true; a refused import
    answers 422 with the same body, every problem listed by row and column.
    """
    require_role(person, *IMPORTERS)
    outcome = service.run_import(db, actor=person, kind=kind, data=read_upload(file), file_name=file.filename or "",
                                 mapping=parse_mapping(mapping), dry_run=dry_run, only_clean=only_clean)
    body = ImportRead.of(outcome)
    if outcome.refused:
        return JSONResponse(body.model_dump(mode="json") | {"detail": outcome.refused}, status_code=422)
    return body


@router.get("/imports", response_model=list[BatchRead])
def list_imports(db: DbSession, person: ApiUser):
    """Every import made, newest first."""
    require_role(person, *IMPORTERS)
    return [BatchRead.of(b) for b in service.list_batches(db)]


@router.get("/imports/{batch_id}", response_model=BatchDetailRead)
def get_import(db: DbSession, person: ApiUser, batch_id: int):
    """One import and what each of its file rows became."""
    require_role(person, *IMPORTERS)
    batch = service.get_batch(db, batch_id=batch_id)
    records = [ImportedRecordRead(row=r.row, person_id=r.person_id, sortie_id=r.sortie_id, attempt_id=r.attempt_id)
               for r in service.batch_records(db, batch=batch)]
    return BatchDetailRead(**BatchRead.of(batch).model_dump(), records=records)
