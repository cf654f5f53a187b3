"""The tracks table: a recorded flight track as uploaded, kept with the sortie it belongs to."""
from datetime import datetime

from sqlalchemy import JSON, Boolean, Float, ForeignKey, Integer, LargeBinary, String
from sqlalchemy.orm import Mapped, mapped_column

from server.db import Base
from server.types import UTCDateTime, utcnow


class Track(Base):
    """The raw file is part of the record: kept byte for byte, with its SHA-256."""

    __tablename__ = "tracks"

    id: Mapped[int] = mapped_column(primary_key=True)
    sortie_id: Mapped[int] = mapped_column(ForeignKey("sorties.id", ondelete="CASCADE"), index=True)
    filename: Mapped[str] = mapped_column(String(255), default="")
    format: Mapped[str] = mapped_column(String(8))
    sha256: Mapped[str] = mapped_column(String(64))
    size_bytes: Mapped[int] = mapped_column(Integer)
    raw: Mapped[bytes] = mapped_column(LargeBinary, deferred=True)
    points: Mapped[int] = mapped_column(Integer)
    sample_rate_hz: Mapped[float] = mapped_column(Float)
    started_at: Mapped[datetime] = mapped_column(UTCDateTime)
    ended_at: Mapped[datetime] = mapped_column(UTCDateTime)
    has_doppler_speed: Mapped[bool] = mapped_column(Boolean)
    ground_ref: Mapped[str] = mapped_column(String(24))  # on_ground_readings or site_elevation
    # The detections as measured when imported (figures, uncertainties, reasons, the profile for the chart).
    detections: Mapped[list] = mapped_column(JSON, default=list)
    notes: Mapped[list] = mapped_column(JSON, default=list)
    uploaded_by_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
