"""Rules every input model and every stored text follows, whichever area it belongs to.

- Numbers are numbers: JSON `true` is not 1 kt. Pydantic's lax mode would take a bool for a number
  (and forms need lax mode, as they send numbers as text), so input models refuse bools themselves.
- Text holds no control characters (NUL, bell, escape, ...; tab and line breaks are fine): they are
  invisible on screen, break exports, and PostgreSQL cannot store NUL at all. Checked when anything
  is about to be written, so forms, the API and the command line all meet the same rule.
"""
import re
import typing

from pydantic import BaseModel, ValidationInfo, field_validator
from sqlalchemy import String, inspect
from sqlalchemy.orm import Session

from server.errors import Invalid

CONTROL_CHARACTERS = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")


def _takes_bool(annotation) -> bool:
    if annotation is bool:
        return True
    return any(_takes_bool(arg) for arg in typing.get_args(annotation))


class StrictInput(BaseModel):
    """Base of the API's input models: a bool is refused where a number is expected, and text with
    a control character is refused beside its field (the flush check below stays the backstop)."""

    @field_validator("*", mode="before")
    @classmethod
    def _numbers_are_not_bools(cls, value, info: ValidationInfo):
        if isinstance(value, bool) and not _takes_bool(cls.model_fields[info.field_name].annotation):
            raise ValueError("must be a number, not true or false")
        if isinstance(value, str) and (found := control_character_in(value)):
            raise ValueError(f"holds a control character ({found}); type it again without it")
        return value


def control_character_in(text: str) -> str | None:
    match = CONTROL_CHARACTERS.search(text)
    return None if match is None else f"U+{ord(match.group()):04X}"


def refuse_control_characters(session: Session, _context, _instances) -> None:
    """before_flush: no text column of a new or changed row holds a control character."""
    for row in (*session.new, *session.dirty):
        for attribute in inspect(row).mapper.column_attrs:
            if not isinstance(attribute.columns[0].type, String):
                continue
            value = getattr(row, attribute.key, None)
            if isinstance(value, str) and (found := control_character_in(value)):
                raise Invalid(f"{attribute.key} holds a control character ({found}); type it again without it.")
