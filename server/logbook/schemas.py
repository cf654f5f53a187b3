"""Shapes of sorties and attempts, with the ranges a real flight can have.

The same models validate the JSON API and the sortie sheet's forms, so both refuse the same input
with the same words.
"""
from datetime import UTC, datetime
from typing import Literal

from pydantic import AwareDatetime, BaseModel, ConfigDict, Field, field_validator, model_validator

from server.compute.wind import MAX_WIND_KT
from server.input_rules import StrictInput
from server.vocabulary import Maneuver, Termination

Grade = Literal["satisfactory", "unsatisfactory"]

KG_PER_LB = 0.45359237  # exact, by definition of the international pound


class ConditionsFields(StrictInput):
    oat_c: float | None = Field(default=None, ge=-60, le=60, description="outside air temperature, °C")
    altimeter_hpa: float | None = Field(default=None, ge=850, le=1100)
    # 25.11 to 32.48 inHg stays inside 850 to 1100 hPa once converted (25.1 inHg is 849.98 hPa).
    altimeter_inhg: float | None = Field(default=None, ge=25.11, le=32.48)
    wind_dir_deg: float | None = Field(default=None, ge=0, le=360)
    # The same ceiling as the wind computation, so a figure the form takes can always be computed.
    wind_kt: float | None = Field(default=None, ge=0, le=MAX_WIND_KT)
    gust_kt: float | None = Field(default=None, ge=0, le=MAX_WIND_KT)
    metar: str | None = Field(default=None, max_length=500)

    @model_validator(mode="after")
    def _one_altimeter(self):
        if self.altimeter_hpa is not None and self.altimeter_inhg is not None:
            raise ValueError("give the altimeter setting in hPa or in inHg, not both")
        if self.gust_kt is not None and self.wind_kt is not None and self.gust_kt < self.wind_kt:
            raise ValueError("the gust speed cannot be below the mean wind speed")
        return self


class SortieFields(ConditionsFields):
    takeoff_weight_lb: float | None = Field(default=None, ge=200, le=30000)
    takeoff_weight_kg: float | None = Field(default=None, ge=90, le=13600)
    remarks: str = Field(default="", max_length=4000)

    @model_validator(mode="after")
    def _one_weight(self):
        if self.takeoff_weight_lb is not None and self.takeoff_weight_kg is not None:
            raise ValueError("give the take-off weight in lb or in kg, not both")
        return self


def _representable(moment: datetime | None) -> datetime | None:
    """A moment that exists in UTC: 9999-12-31T23:59:59-12:00 is past the last day Python can hold."""
    if moment is None:
        return None
    try:
        moment.astimezone(UTC)
    except (OverflowError, ValueError):
        raise ValueError("is not a date and time Flarebook can record") from None
    return moment


class SortieCreate(SortieFields):
    model_config = ConfigDict(extra="forbid")
    flown_at: AwareDatetime
    aircraft_id: int
    pilot_id: int
    site_id: int
    instructor_id: int | None = None  # defaults to the instructor creating it

    _flown_at_exists = field_validator("flown_at")(_representable)


class SortieUpdate(SortieFields):
    """Fields that may change while a sortie is a draft; its instructor is kept."""

    model_config = ConfigDict(extra="forbid")
    flown_at: AwareDatetime | None = None
    pilot_id: int | None = None
    aircraft_id: int | None = None
    site_id: int | None = None

    _flown_at_exists = field_validator("flown_at")(_representable)


class AttemptFields(StrictInput):
    model_config = ConfigDict(extra="forbid")
    maneuver: Maneuver
    termination: Termination
    landing_dir_deg: float | None = Field(default=None, ge=0, le=360)
    entry_height_ft: float | None = Field(default=None, ge=0, le=10000)
    entry_kias: float | None = Field(default=None, ge=0, le=200)
    descent_kias: float | None = Field(default=None, ge=0, le=200)
    nr_low_pct: float | None = Field(default=None, ge=50, le=130)
    nr_high_pct: float | None = Field(default=None, ge=50, le=130)
    flare_height_ft: float | None = Field(default=None, ge=0, le=1000)
    touchdown_speed_kt: float | None = Field(default=None, ge=0, le=100)
    point_error_ft: float | None = Field(default=None, ge=-5000, le=5000)
    heading_error_deg: float | None = Field(default=None, ge=-180, le=180)
    takeover: bool = False
    grade: Grade | None = None
    remarks: str = Field(default="", max_length=2000)

    @model_validator(mode="after")
    def _rpm_order(self):
        if self.nr_low_pct is not None and self.nr_high_pct is not None and self.nr_low_pct > self.nr_high_pct:
            raise ValueError("the lowest rotor RPM cannot be above the highest")
        return self


class AttemptUpdate(StrictInput):
    """A partial change to an attempt: only the fields sent change; the result is checked in full."""

    model_config = ConfigDict(extra="forbid")
    maneuver: Maneuver | None = None
    termination: Termination | None = None
    landing_dir_deg: float | None = Field(default=None, ge=0, le=360)
    entry_height_ft: float | None = Field(default=None, ge=0, le=10000)
    entry_kias: float | None = Field(default=None, ge=0, le=200)
    descent_kias: float | None = Field(default=None, ge=0, le=200)
    nr_low_pct: float | None = Field(default=None, ge=50, le=130)
    nr_high_pct: float | None = Field(default=None, ge=50, le=130)
    flare_height_ft: float | None = Field(default=None, ge=0, le=1000)
    touchdown_speed_kt: float | None = Field(default=None, ge=0, le=100)
    point_error_ft: float | None = Field(default=None, ge=-5000, le=5000)
    heading_error_deg: float | None = Field(default=None, ge=-180, le=180)
    takeover: bool | None = None
    grade: Grade | None = None
    remarks: str | None = Field(default=None, max_length=2000)


class PartRead(BaseModel):
    value: float | None
    tolerance: float
    deviation: float
    subscore: float
    weight: float


class FlagRead(BaseModel):
    code: str
    message: str


class AttemptRead(AttemptFields):
    model_config = ConfigDict(extra="ignore")
    id: int
    sortie_id: int
    sequence: int
    score: float | None
    parts: dict[str, PartRead]
    flags: list[FlagRead]
    satisfactory: bool
    within_tolerances: bool
    expected_flare_band_ft: tuple[float, float] | None
    headwind_kt: float | None
    crosswind_kt: float | None
    standard_id: int | None
    # Fields measured from a recorded track (the rest were observed and typed), with their 95 % uncertainty.
    measured: list[str] = Field(default_factory=list)
    measured_uncertainty: dict[str, float] = Field(default_factory=dict)


class SignatureRead(BaseModel):
    signer_id: int
    signer_name: str
    meaning: str
    statement: str
    content_sha256: str
    signed_at: datetime


class SortieRead(BaseModel):
    id: int
    version: int
    supersedes_id: int | None
    superseded_by_id: int | None
    amendment_reason: str | None
    state: Literal["draft", "signed", "acknowledged", "amended"]
    flown_at: datetime
    aircraft_id: int
    instructor_id: int | None
    pilot_id: int
    site_id: int
    oat_c: float | None
    altimeter_hpa: float | None
    altimeter_inhg: float | None
    wind_dir_deg: float | None
    wind_kt: float | None
    gust_kt: float | None
    metar: str | None
    takeoff_weight_lb: float | None
    takeoff_weight_kg: float | None
    remarks: str
    pressure_altitude_ft: float | None
    density_altitude_ft: float | None
    density_ratio: float | None
    attempts: list[AttemptRead]
    signatures: list[SignatureRead]


class SignRequest(StrictInput):
    model_config = ConfigDict(extra="forbid")
    password: str = Field(min_length=1, max_length=1000)


class AmendRequest(StrictInput):
    model_config = ConfigDict(extra="forbid")
    reason: str = Field(min_length=3, max_length=2000)


class ConditionsRequest(ConditionsFields):
    model_config = ConfigDict(extra="forbid")
    elevation_ft: float | None = Field(default=None, ge=-1500, le=20000)
    landing_dir_deg: float | None = Field(default=None, ge=0, le=360)


class ConditionsRead(BaseModel):
    pressure_altitude_ft: float | None
    density_altitude_ft: float | None
    density_ratio: float | None
    isa_temp_c: float | None
    headwind_kt: float | None
    crosswind_kt: float | None
    gust_headwind_kt: float | None = None
    oat_c: float | None = None
    altimeter_hpa: float | None = None
    wind_dir_deg: float | None = None
    wind_kt: float | None = None
    gust_kt: float | None = None
    filled_from_metar: list[str] = Field(default_factory=list)
    message: str | None = None
