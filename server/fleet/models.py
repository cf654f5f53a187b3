"""Tables for helicopter types, aircraft and sites."""
from sqlalchemy import JSON, Boolean, Float, ForeignKey, Integer, String
from sqlalchemy.orm import Mapped, mapped_column, relationship

from server.db import Base


class HelicopterType(Base):
    __tablename__ = "helicopter_types"

    id: Mapped[int] = mapped_column(primary_key=True)
    designation: Mapped[str] = mapped_column(String(60), unique=True)
    rotor_radius_ft: Mapped[float] = mapped_column(Float)
    blade_count: Mapped[int] = mapped_column(Integer)
    rotor_inertia_slug_ft2: Mapped[float | None] = mapped_column(Float)
    normal_rotor_rpm: Mapped[float] = mapped_column(Float)
    nr_power_off_min_pct: Mapped[float] = mapped_column(Float)
    nr_power_off_max_pct: Mapped[float] = mapped_column(Float)
    autorotation_kias: Mapped[float] = mapped_column(Float)
    reference_weight_lb: Mapped[float] = mapped_column(Float)
    flare_band_low_ft: Mapped[float] = mapped_column(Float)
    flare_band_high_ft: Mapped[float] = mapped_column(Float)
    touchdown_speed_max_kt: Mapped[float] = mapped_column(Float)
    # Height-velocity avoid regions: a list of polygons, each a list of [KIAS, ft AGL].
    hv_avoid: Mapped[list] = mapped_column(JSON, default=list)


class Aircraft(Base):
    __tablename__ = "aircraft"

    id: Mapped[int] = mapped_column(primary_key=True)
    registration: Mapped[str] = mapped_column(String(20), unique=True)
    type_id: Mapped[int] = mapped_column(ForeignKey("helicopter_types.id"), index=True)
    active: Mapped[bool] = mapped_column(Boolean, default=True)

    type: Mapped[HelicopterType] = relationship(lazy="joined")


class Site(Base):
    __tablename__ = "sites"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(120), unique=True)
    elevation_ft: Mapped[float] = mapped_column(Float)
    # Landing directions in degrees, e.g. [90, 270] for a 09/27 strip.
    landing_dirs_deg: Mapped[list] = mapped_column(JSON, default=list)
    # The aim point of the practice landings (WGS 84), for distances measured from a recorded track.
    aim_lat_deg: Mapped[float | None] = mapped_column(Float)
    aim_lon_deg: Mapped[float | None] = mapped_column(Float)
    # A site no longer used is kept for the records flown there, but not offered for new sorties.
    active: Mapped[bool] = mapped_column(Boolean, default=True)
