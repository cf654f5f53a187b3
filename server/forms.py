"""Turning submitted HTML forms into the API's pydantic models, with errors per field."""
from pydantic import BaseModel, ValidationError


def blank_to_none(form, names) -> dict:
    """Empty inputs mean "not recorded", never zero."""
    values = {}
    for name in names:
        raw = form.get(name)
        values[name] = None if raw is None or str(raw).strip() == "" else str(raw).strip()
    return values


def _figure(value) -> str:
    return f"{value:,g}" if isinstance(value, (int, float)) else str(value)


def plain_words(item: dict) -> str:
    """A validator's error as a person at the practice area reads it, not as pydantic words it."""
    kind, ctx = item.get("type", ""), item.get("ctx") or {}
    if kind == "missing":
        return "Required."
    if kind in ("float_parsing", "float_type", "int_parsing", "int_type", "int_from_float", "finite_number"):
        return "Give a number, such as 65."
    if kind == "greater_than_equal":
        return f"At least {_figure(ctx.get('ge'))}."
    if kind == "greater_than":
        return f"Greater than {_figure(ctx.get('gt'))}."
    if kind == "less_than_equal":
        return f"At most {_figure(ctx.get('le'))}."
    if kind == "less_than":
        return f"Less than {_figure(ctx.get('lt'))}."
    if kind in ("literal_error", "enum"):
        return "Pick one of the choices shown."
    if kind.startswith(("datetime", "date", "timezone")):
        return "Give the date and time, such as 20/11/2026 10:30."
    if kind == "string_too_long":
        length = len(item["input"]) if isinstance(item.get("input"), str) else None
        over = f" (this has {length:,})" if length is not None else ""
        return f"At most {ctx.get('max_length', 0):,} characters{over}."
    if kind == "string_too_short":
        return f"At least {ctx.get('min_length', 1):,} characters."
    if kind in ("bool_parsing", "bool_type"):
        return "Yes or no."
    return str(item["msg"]).removeprefix("Value error, ")


def validate(model: type[BaseModel], values: dict) -> tuple[BaseModel | None, dict[str, str], str | None]:
    """The model, or the errors keyed by field plus a message for errors about the whole form."""
    try:
        return model.model_validate(values), {}, None
    except ValidationError as error:
        by_field: dict[str, str] = {}
        general = []
        for item in error.errors():
            message = plain_words(item)
            location = [str(p) for p in item["loc"]]
            if location and location[0] in values:
                by_field.setdefault(location[0], message)
            else:
                general.append(message)
        return None, by_field, "; ".join(general) or None


def plain(value):
    """A stored figure as a person types it: 270.0 shows as 270."""
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value
