"""Shapes of imports in the API."""
from datetime import datetime
from typing import Literal

from pydantic import BaseModel, Field

from server.imports import columns
from server.imports.models import ImportBatch
from server.imports.service import Outcome

Kind = Literal["people", "attempts"]


class RowErrorRead(BaseModel):
    row: int = Field(description="the row in the file as a spreadsheet numbers it; the header is row 1")
    column: str
    message: str


class CreatedRead(BaseModel):
    people: int = 0
    sorties: int = 0
    attempts: int = 0


class FieldRead(BaseModel):
    key: str
    label: str
    required: bool
    hint: str


class PreviewRead(BaseModel):
    row: int
    creates: str


class ImportRead(BaseModel):
    rows: int = Field(description="data rows in the file (blank rows left out)")
    ok: int = Field(description="rows without a problem")
    errors: list[RowErrorRead]
    created: CreatedRead
    clean: bool = Field(description="every row can be imported")
    dry_run: bool
    would_create: CreatedRead
    kind: Kind
    file_format: str
    file_description: str
    file_sha256: str
    header: list[str]
    mapping: dict[str, str | None] = Field(description="field -> the column header it was read from")
    fields: list[FieldRead]
    preview: list[PreviewRead] = Field(description="row by row, what each clean row creates")
    batch_id: int | None = None
    refused: str | None = None
    earlier_batch_id: int | None = Field(default=None, description="the import of this same file made before")

    @classmethod
    def of(cls, outcome: Outcome) -> "ImportRead":
        return cls(
            rows=outcome.rows, ok=outcome.ok, clean=outcome.clean, dry_run=outcome.dry_run,
            errors=[RowErrorRead(row=e.row, column=e.column, message=e.message) for e in outcome.errors],
            created=CreatedRead(**outcome.created), would_create=CreatedRead(**outcome.would_create),
            kind=outcome.kind, file_format=outcome.file_format, file_description=outcome.file_description,
            file_sha256=outcome.file_sha256, header=outcome.header, mapping=outcome.mapping,
            fields=[FieldRead(key=f.key, label=f.label, required=f.required, hint=f.hint)
                    for f in columns.fields_of(outcome.kind)],
            preview=[PreviewRead(row=row, creates=text) for row, text in outcome.preview],
            batch_id=outcome.batch_id, refused=outcome.refused,
            earlier_batch_id=outcome.earlier_batch.id if outcome.earlier_batch else None,
        )


class BatchRead(BaseModel):
    id: int
    kind: str
    imported_by_id: int
    imported_at: datetime
    file_name: str
    file_sha256: str
    file_format: str
    mapping: dict
    rows: int
    rows_left_out: int
    created: CreatedRead

    @classmethod
    def of(cls, batch: ImportBatch) -> "BatchRead":
        return cls(id=batch.id, kind=batch.kind, imported_by_id=batch.imported_by_id, imported_at=batch.imported_at,
                   file_name=batch.file_name, file_sha256=batch.file_sha256, file_format=batch.file_format,
                   mapping=batch.mapping, rows=batch.rows, rows_left_out=batch.rows_left_out,
                   created=CreatedRead(**batch.created))


class ImportedRecordRead(BaseModel):
    row: int
    person_id: int | None
    sortie_id: int | None
    attempt_id: int | None


class BatchDetailRead(BatchRead):
    records: list[ImportedRecordRead]
