"""Tables for sorties, attempts, signatures and the recorded tracks kept with sorties."""
import math
from datetime import date, datetime

from sqlalchemy import JSON, Boolean, Date, Float, ForeignKey, Index, Integer, LargeBinary, String, Text, text
from sqlalchemy.orm import Mapped, mapped_column, relationship

from server.db import Base
from server.fleet.models import Aircraft, Site
from server.people.models import Person
from server.types import UTCDateTime, utcnow


class Sortie(Base):
    """One flight with a pilot and (usually) an instructor; one row per version.

    An amendment of a signed sortie is a new row that names the version it supersedes; the signed
    row is never written again.
    """

    __tablename__ = "sorties"

    id: Mapped[int] = mapped_column(primary_key=True)
    version: Mapped[int] = mapped_column(Integer, default=1)
    supersedes_id: Mapped[int | None] = mapped_column(ForeignKey("sorties.id"), unique=True)
    amendment_reason: Mapped[str | None] = mapped_column(Text)
    state: Mapped[str] = mapped_column(String(12), default="draft")  # draft or signed

    flown_at: Mapped[datetime] = mapped_column(UTCDateTime)
    aircraft_id: Mapped[int] = mapped_column(ForeignKey("aircraft.id"))
    instructor_id: Mapped[int | None] = mapped_column(ForeignKey("people.id"), index=True)
    pilot_id: Mapped[int] = mapped_column(ForeignKey("people.id"), index=True)
    site_id: Mapped[int] = mapped_column(ForeignKey("sites.id"))

    wind_dir_deg: Mapped[float | None] = mapped_column(Float)
    wind_kt: Mapped[float | None] = mapped_column(Float)
    gust_kt: Mapped[float | None] = mapped_column(Float)
    oat_c: Mapped[float | None] = mapped_column(Float)
    altimeter_hpa: Mapped[float | None] = mapped_column(Float)
    altimeter_unit: Mapped[str] = mapped_column(String(4), default="hPa")  # how it was entered
    metar: Mapped[str | None] = mapped_column(Text)
    takeoff_weight_lb: Mapped[float | None] = mapped_column(Float)
    remarks: Mapped[str] = mapped_column(Text, default="")

    pressure_altitude_ft: Mapped[float | None] = mapped_column(Float)
    density_altitude_ft: Mapped[float | None] = mapped_column(Float)
    density_ratio: Mapped[float | None] = mapped_column(Float)

    created_by_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)
    updated_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow, onupdate=utcnow)

    aircraft: Mapped[Aircraft] = relationship(lazy="joined")
    site: Mapped[Site] = relationship(lazy="joined")
    pilot: Mapped[Person] = relationship(foreign_keys=[pilot_id], lazy="joined")
    instructor: Mapped[Person | None] = relationship(foreign_keys=[instructor_id], lazy="joined")
    attempts: Mapped[list["Attempt"]] = relationship(
        back_populates="sortie", order_by="Attempt.sequence", cascade="all, delete-orphan"
    )


class Attempt(Base):
    """One practice autorotation, with what the instructor observed and what the server derived."""

    __tablename__ = "attempts"
    __table_args__ = (
        # Currency and trends read attempts per pilot in date order; the covering columns avoid
        # a table lookup per row.
        Index("ix_attempts_pilot_maneuver_date", "pilot_id", "maneuver", "termination", "flown_on"),
        # The readiness board reads every attempt per pilot in date order with what its rules test; an
        # index holding all of it spares a table lookup per attempt (measured: tests/benchmarks/bench_currency.py).
        Index("ix_attempts_currency", "pilot_id", "flown_on", "sortie_id", "takeover", "maneuver", "termination",
              "satisfactory", "score"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    sortie_id: Mapped[int] = mapped_column(ForeignKey("sorties.id", ondelete="CASCADE"), index=True)
    sequence: Mapped[int] = mapped_column(Integer)
    # Copied from the sortie (fixed once signed) so per-pilot queries need no join.
    pilot_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    flown_on: Mapped[date] = mapped_column(Date)

    maneuver: Mapped[str] = mapped_column(String(20))
    termination: Mapped[str] = mapped_column(String(20))
    landing_dir_deg: Mapped[float | None] = mapped_column(Float)
    entry_height_ft: Mapped[float | None] = mapped_column(Float)
    entry_kias: Mapped[float | None] = mapped_column(Float)
    descent_kias: Mapped[float | None] = mapped_column(Float)
    nr_low_pct: Mapped[float | None] = mapped_column(Float)
    nr_high_pct: Mapped[float | None] = mapped_column(Float)
    flare_height_ft: Mapped[float | None] = mapped_column(Float)
    touchdown_speed_kt: Mapped[float | None] = mapped_column(Float)
    point_error_ft: Mapped[float | None] = mapped_column(Float)
    heading_error_deg: Mapped[float | None] = mapped_column(Float)
    takeover: Mapped[bool] = mapped_column(Boolean, default=False)
    grade: Mapped[str | None] = mapped_column(String(16))  # satisfactory / unsatisfactory
    remarks: Mapped[str] = mapped_column(Text, default="")

    # Derived when saved, and kept: a standard changed later does not rescore history.
    standard_id: Mapped[int | None] = mapped_column(ForeignKey("standards.id"))
    headwind_kt: Mapped[float | None] = mapped_column(Float)
    crosswind_kt: Mapped[float | None] = mapped_column(Float)
    flare_band_low_ft: Mapped[float | None] = mapped_column(Float)
    flare_band_high_ft: Mapped[float | None] = mapped_column(Float)
    score: Mapped[float | None] = mapped_column(Float)
    parts: Mapped[dict] = mapped_column(JSON, default=dict)
    flags: Mapped[list] = mapped_column(JSON, default=list)
    satisfactory: Mapped[bool] = mapped_column(Boolean, default=False)
    within_tolerances: Mapped[bool] = mapped_column(Boolean, default=False)
    # Figures taken from a recorded track: {field: {value, uncertainty, track_id, track_sha256, detection}}.
    # A figure counts as measured while the stored value is still the measured one; typing another wins.
    measured: Mapped[dict] = mapped_column(JSON, default=dict, server_default=text("'{}'"))

    created_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)

    sortie: Mapped[Sortie] = relationship(back_populates="attempts")

    @property
    def measured_fields(self) -> list[str]:
        """Fields whose stored value is still the one measured from a track (a typed change wins)."""
        return sorted(name for name, entry in (self.measured or {}).items()
                      if getattr(self, name, None) is not None and entry.get("value") is not None
                      and math.isclose(getattr(self, name), entry["value"], abs_tol=1e-9))

    @property
    def measured_uncertainty(self) -> dict[str, float]:
        return {name: self.measured[name]["uncertainty"] for name in self.measured_fields
                if self.measured[name].get("uncertainty") is not None}

    @property
    def track_sha256s(self) -> list[str]:
        """The recorded tracks this attempt's measured figures come from."""
        return sorted({self.measured[name]["track_sha256"] for name in self.measured_fields})

MEANINGS = {
    "instructor_certifies": (
        "I certify that this sortie and its practice autorotations took place as recorded, "
        "and that I observed and graded each one."
    ),
    "pilot_acknowledges": "I have read this signed record of my sortie.",
}


class Signature(Base):
    """Who signed which version of a record, when, meaning what, over which content."""

    __tablename__ = "signatures"

    id: Mapped[int] = mapped_column(primary_key=True)
    sortie_id: Mapped[int] = mapped_column(ForeignKey("sorties.id"), index=True)
    signer_id: Mapped[int] = mapped_column(ForeignKey("people.id"))
    meaning: Mapped[str] = mapped_column(String(32))
    statement: Mapped[str] = mapped_column(Text)
    content_sha256: Mapped[str] = mapped_column(String(64))
    signed_at: Mapped[datetime] = mapped_column(UTCDateTime, default=utcnow)


class Track(Base):
    """A recorded flight track as uploaded, part of the sortie's record: kept byte for byte, with its SHA-256."""

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
