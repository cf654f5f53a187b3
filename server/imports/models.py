"""Tables for imports of earlier records: one batch per import, and what each row of the file became."""
from datetime import datetime

from sqlalchemy import JSON, ForeignKey, Integer, String
from sqlalchemy.orm import Mapped, mapped_column

from server.db import Base
from server.types import UTCDateTime, utcnow


class ImportBatch(Base):
    """One import of earlier records from a spreadsheet: who, when, which file, the mapping, what it made."""

    __tablename__ = "import_batches"

    id: Mapped[int] = mapped_column(primary_key=True)
    kind: Mapped[str] = mapped_column(String(12))  # people or attempts
    imported_by_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    imported_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    file_name: Mapped[str] = mapped_column(String(255), default="")
    file_sha256: Mapped[str] = mapped_column(String(64), index=True)
    file_format: Mapped[str] = mapped_column(String(8))  # csv or xlsx
    mapping: Mapped[dict] = mapped_column(JSON, default=dict)  # field -> column header
    rows: Mapped[int] = mapped_column(Integer, default=0)  # data rows in the file (blank rows left out)
    rows_left_out: Mapped[int] = mapped_column(Integer, default=0)  # bad rows, when only clean rows were taken
    created: Mapped[dict] = mapped_column(JSON, default=dict)  # {"people": n, "sorties": n, "attempts": n}


class ImportedRecord(Base):
    """What one row of an imported file became, so every imported record leads back to its batch and row."""

    __tablename__ = "imported_records"

    id: Mapped[int] = mapped_column(primary_key=True)
    batch_id: Mapped[int] = mapped_column(ForeignKey("import_batches.id"), index=True)
    row: Mapped[int] = mapped_column(Integer)  # the row number in the file, the header being row 1
    person_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"))
    sortie_id: Mapped[int | None] = mapped_column(ForeignKey("sorties.id"), index=True)
    attempt_id: Mapped[int | None] = mapped_column(ForeignKey("attempts.id", ondelete="SET NULL"))
