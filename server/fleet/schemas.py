"""Shapes of helicopter types, aircraft and sites in the API."""
from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

Point = tuple[float, float]


class TypeBase(BaseModel):
    designation: str = Field(min_length=1, max_length=60)
    rotor_radius_ft: float = Field(gt=0, le=60)
    blade_count: int = Field(ge=2, le=8)
    rotor_inertia_slug_ft2: float | None = Field(default=None, gt=0)
    normal_rotor_rpm: float = Field(gt=0, le=1000)
    nr_power_off_min_pct: float = Field(gt=50, le=120)
    nr_power_off_max_pct: float = Field(gt=50, le=130)
    autorotation_kias: float = Field(gt=0, le=150)
    reference_weight_lb: float = Field(gt=0, le=30000)
    flare_band_ft: tuple[float, float]
    touchdown_speed_max_kt: float = Field(ge=0, le=60)
    hv_avoid: list[list[Point]] = Field(default_factory=list)

    @model_validator(mode="after")
    def _ordered(self):
        if self.nr_power_off_min_pct >= self.nr_power_off_max_pct:
            raise ValueError("the power-off rotor RPM low limit must be below the high limit")
        low, high = self.flare_band_ft
        if not 0 <= low < high <= 1000:
            raise ValueError("flare_band_ft must be [low, high] with 0 <= low < high <= 1000 ft")
        return self

    @field_validator("hv_avoid")
    @classmethod
    def _polygons(cls, polygons):
        for polygon in polygons:
            if len(polygon) < 3:
                raise ValueError("each avoid region needs at least 3 points of [KIAS, ft AGL]")
        return polygons


class TypeCreate(TypeBase):
    model_config = ConfigDict(extra="forbid")


class TypeUpdate(BaseModel):
    """A partial change to a helicopter type: only the fields sent change; the result is checked in full."""

    model_config = ConfigDict(extra="forbid")
    designation: str | None = None
    rotor_radius_ft: float | None = None
    blade_count: int | None = None
    rotor_inertia_slug_ft2: float | None = None
    normal_rotor_rpm: float | None = None
    nr_power_off_min_pct: float | None = None
    nr_power_off_max_pct: float | None = None
    autorotation_kias: float | None = None
    reference_weight_lb: float | None = None
    flare_band_ft: tuple[float, float] | None = None
    touchdown_speed_max_kt: float | None = None
    hv_avoid: list[list[Point]] | None = None


class TypeRead(TypeBase):
    id: int


class AircraftCreate(BaseModel):
    model_config = ConfigDict(extra="forbid")
    registration: str = Field(min_length=2, max_length=20)
    type_id: int


class AircraftRead(AircraftCreate):
    id: int
    type_designation: str
    active: bool


class SiteCreate(BaseModel):
    model_config = ConfigDict(extra="forbid")
    name: str = Field(min_length=1, max_length=120)
    elevation_ft: float = Field(ge=-1500, le=20000)
    landing_dirs_deg: list[float] = Field(default_factory=list)
    # The aim point of practice landings, WGS 84 degrees; both or neither.
    aim_lat_deg: float | None = Field(default=None, ge=-90, le=90)
    aim_lon_deg: float | None = Field(default=None, ge=-180, le=180)

    @field_validator("landing_dirs_deg")
    @classmethod
    def _directions(cls, dirs):
        if any(not 0 <= d <= 360 for d in dirs):
            raise ValueError("landing directions are degrees from 0 to 360")
        return dirs

    @model_validator(mode="after")
    def _aim_point_whole(self):
        if (self.aim_lat_deg is None) != (self.aim_lon_deg is None):
            raise ValueError("give the aim point as both aim_lat_deg and aim_lon_deg, or neither")
        return self


class SiteRead(SiteCreate):
    id: int
