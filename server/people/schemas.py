"""Shapes of people in the API."""
from datetime import datetime
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from server.input_rules import StrictInput

Role = Literal["student", "instructor", "chief_pilot", "admin"]


class PersonCreate(StrictInput):
    model_config = ConfigDict(extra="forbid")
    name: str = Field(min_length=1, max_length=120)
    email: str = Field(min_length=3, max_length=254)
    roles: list[Role] = Field(min_length=1)
    password: str = Field(min_length=8, max_length=1000)


class PersonUpdate(StrictInput):
    model_config = ConfigDict(extra="forbid")
    name: str | None = Field(default=None, min_length=1, max_length=120)
    roles: list[Role] | None = Field(default=None, min_length=1)
    active: bool | None = None
    password: str | None = Field(default=None, min_length=8, max_length=1000)


class PersonRead(BaseModel):
    id: int
    name: str
    email: str
    roles: list[str]
    active: bool


class MeRead(BaseModel):
    id: int
    name: str
    roles: list[str]


class PasswordChange(StrictInput):
    """Choose one's own password; the current one proves it is really its owner."""

    model_config = ConfigDict(extra="forbid")
    current_password: str = Field(min_length=1, max_length=1000)
    new_password: str = Field(min_length=8, max_length=1000)


class TokenRead(BaseModel):
    id: int
    label: str
    created_at: datetime
    expires_at: datetime | None
    revoked: bool
