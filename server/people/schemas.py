"""Shapes of people in the API."""
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

Role = Literal["student", "instructor", "chief_pilot", "admin"]


class PersonCreate(BaseModel):
    model_config = ConfigDict(extra="forbid")
    name: str = Field(min_length=1, max_length=120)
    email: str = Field(min_length=3, max_length=254)
    roles: list[Role] = Field(min_length=1)
    password: str = Field(min_length=8, max_length=1000)


class PersonUpdate(BaseModel):
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
