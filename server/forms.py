"""Turning submitted HTML forms into the API's pydantic models, with errors per field."""
from pydantic import BaseModel, ValidationError


def blank_to_none(form, names) -> dict:
    """Empty inputs mean "not recorded", never zero."""
    values = {}
    for name in names:
        raw = form.get(name)
        values[name] = None if raw is None or str(raw).strip() == "" else str(raw).strip()
    return values


def validate(model: type[BaseModel], values: dict) -> tuple[BaseModel | None, dict[str, str], str | None]:
    """The model, or the errors keyed by field plus a message for errors about the whole form."""
    try:
        return model.model_validate(values), {}, None
    except ValidationError as error:
        by_field: dict[str, str] = {}
        general = []
        for item in error.errors():
            message = str(item["msg"]).removeprefix("Value error, ")
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
