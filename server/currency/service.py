"""Currency rules as data: create, edit, delete, and say in words what a rule asks for."""
import json
from collections import namedtuple

from sqlalchemy import JSON, Text, cast, select
from sqlalchemy.orm import Session

from server.currency.models import CurrencyRule
from server.currency.schemas import RuleCreate, RuleFields, RuleUpdate
from server.errors import Forbidden, Invalid, NotFound
from server.fleet.models import HelicopterType
from server.people.models import Person
from server.records import audit

RULE_FIELDS = tuple(RuleFields.model_fields)
FLYING_ROLES = ("student", "instructor", "chief_pilot")

_TERMINATION_WORDS = {"touchdown": "full-touchdown", "power_recovery": "power-recovery", "to_hover": "to-a-hover"}
_MANEUVER_WORDS = {"straight_in": "straight-in", "turn_180": "180° turn", "turn_360": "360° turn",
                   "hovering": "hovering"}


def _kept_state_follows(session: Session, rule_id: int) -> None:
    """The readiness board's kept rows of this rule, rewritten in the rule change's transaction."""
    from server.currency import kept  # kept reads the rules through this module: imported when called

    kept.after_rule_change(session, rule_id)


def require_chief(actor: Person) -> None:
    """Rules are setup: chief pilots and administrators keep them (DESIGN section 5)."""
    if not actor.has_role("chief_pilot", "admin"):
        raise Forbidden("Only a chief pilot or an administrator can change currency rules.")


def list_rules(session: Session) -> list[CurrencyRule]:
    return list(session.scalars(select(CurrencyRule).where(CurrencyRule.active).order_by(*_RULE_ORDER)))


_RULE_ORDER = (CurrencyRule.name, CurrencyRule.id)
_RULES_TABLE = CurrencyRule.__table__
# The JSON columns as the text stored (PostgreSQL's driver would decode them): the rows are then plain
# values, and the same rules read again find their decoded rows kept (`list_rule_rows`).
_RULE_ROWS = select(*(cast(c, Text).label(c.name) if isinstance(c.type, JSON) else c for c in _RULES_TABLE.c)
                    ).where(CurrencyRule.active).order_by(*_RULE_ORDER)
_JSON_AT = tuple(i for i, c in enumerate(_RULES_TABLE.c) if isinstance(c.type, JSON))
RuleRow = namedtuple("RuleRow", [c.name for c in _RULES_TABLE.c])
_DECODED: dict[tuple, list] = {}


def list_rule_rows(session: Session) -> list:
    """The rules of `list_rules` as plain rows (same attributes, no ORM objects; never to be changed): for
    a caller on every signature, where loading a dozen objects, or decoding their JSON, costs more than
    the rest of its work. The same rules as last time give the same list, so a caller may keep what it
    built from them by the list's identity."""
    raw = tuple(session.connection().execute(_RULE_ROWS).all())
    found = _DECODED.get(raw)
    if found is None:
        found = [RuleRow(*(json.loads(v) if i in _JSON_AT and v is not None else v for i, v in enumerate(row)))
                 for row in raw]
        if len(_DECODED) > 64:
            _DECODED.clear()
        _DECODED[raw] = found
    return found


def get_rule(session: Session, *, rule_id: int) -> CurrencyRule:
    rule = session.get(CurrencyRule, rule_id)
    if rule is None or not rule.active:
        raise NotFound("No such currency rule.")
    return rule


def rule_values(rule: CurrencyRule) -> dict:
    return {name: getattr(rule, name) for name in RULE_FIELDS}


def _check_references(session: Session, data: RuleCreate) -> None:
    """Named people and helicopter types must exist; say which do not."""
    if data.applies_to_people:
        known = set(session.scalars(select(Person.id).where(Person.id.in_(data.applies_to_people))))
        missing = sorted(set(data.applies_to_people) - known)
        if missing:
            raise Invalid(f"applies_to_people names no one with id {', '.join(map(str, missing))}.")
    if data.type_ids:
        known = set(session.scalars(select(HelicopterType.id).where(HelicopterType.id.in_(data.type_ids))))
        missing = sorted(set(data.type_ids) - known)
        if missing:
            raise Invalid(f"type_ids names no helicopter type with id {', '.join(map(str, missing))}.")


def _normalised(data: RuleCreate) -> dict:
    values = data.model_dump()
    values["name"] = data.name.strip()
    for name in ("applies_to_roles", "applies_to_people", "maneuvers", "terminations", "type_ids"):
        values[name] = sorted(set(values[name]), key=str)
    return values


def create_rule(session: Session, *, actor: Person, data: RuleCreate) -> CurrencyRule:
    """Add a rule; it applies from the next evaluation on, to past attempts as well."""
    require_chief(actor)
    _check_references(session, data)
    rule = CurrencyRule(**_normalised(data), active=True)
    session.add(rule)
    session.flush()
    audit.append(session, actor_id=actor.id, action="create", entity="currency_rule", entity_id=rule.id,
                 after=rule_values(rule))
    _kept_state_follows(session, rule.id)
    return rule


def merged_update(rule: CurrencyRule, data: RuleUpdate) -> RuleCreate:
    """The rule as it would be after the change, validated as a whole (raises pydantic's ValidationError)."""
    values = rule_values(rule)
    changes = data.model_dump(exclude_unset=True)
    if changes.get("window_days") is not None and "window_months" not in changes:
        values["window_months"] = None
    if changes.get("window_months") is not None and "window_days" not in changes:
        values["window_days"] = None
    for name, value in changes.items():
        if value is None and name in ("name", "require_satisfactory", "min_count", "warn_days"):
            raise Invalid(f"{name} cannot be empty.")
        values[name] = [] if value is None and isinstance(values[name], list) else value
    return RuleCreate.model_validate(values)


def update_rule(session: Session, *, actor: Person, rule: CurrencyRule, data: RuleCreate) -> CurrencyRule:
    require_chief(actor)
    _check_references(session, data)
    before = rule_values(rule)
    for name, value in _normalised(data).items():
        setattr(rule, name, value)
    session.flush()
    audit.append(session, actor_id=actor.id, action="edit", entity="currency_rule", entity_id=rule.id,
                 before=before, after=rule_values(rule))
    _kept_state_follows(session, rule.id)
    return rule


def delete_rule(session: Session, *, actor: Person, rule: CurrencyRule) -> None:
    """Remove a rule from the board; the audit chain keeps what it said."""
    require_chief(actor)
    before, rule_id = rule_values(rule), rule.id
    # The audit entry first, as every change does before the kept rows (on PostgreSQL: the chain's lock,
    # then the kept rows' locks, in that one order, so two changes never wait on each other).
    audit.append(session, actor_id=actor.id, action="delete", entity="currency_rule", entity_id=rule_id,
                 before=before)
    rule.active = False  # out of list_rules, so its kept rows go before the rule does
    _kept_state_follows(session, rule_id)
    session.delete(rule)
    session.flush()


def applies_to(rule: CurrencyRule, *, person_id: int, roles: list[str]) -> bool:
    """Named people always; else anyone holding a listed role; with neither, every flying person."""
    if person_id in (rule.applies_to_people or []):
        return True
    if rule.applies_to_roles:
        return any(role in rule.applies_to_roles for role in roles)
    if rule.applies_to_people:
        return False
    return any(role in FLYING_ROLES for role in roles)


def describe(rule: CurrencyRule, type_names: dict[int, str]) -> tuple[str, str]:
    """The qualifying attempts in words, plural and singular: "satisfactory full-touchdown autorotations"."""
    before = []
    if rule.require_satisfactory:
        before.append("satisfactory")
    if rule.maneuvers:
        before.append(" or ".join(_MANEUVER_WORDS[m] for m in rule.maneuvers))
    if rule.terminations:
        before.append(" or ".join(_TERMINATION_WORDS[t] for t in rule.terminations))
    after = []
    if rule.type_ids:
        after.append("in a " + " or ".join(type_names.get(t, f"type {t}") for t in rule.type_ids))
    if rule.with_instructor is True:
        after.append("with an instructor")
    elif rule.with_instructor is False:
        after.append("without an instructor")
    if rule.min_score is not None:
        after.append(f"scoring at least {rule.min_score:g}")
    head = " ".join(before)
    tail = (" " + " ".join(after)) if after else ""
    many = f"{head} autorotations{tail}".strip()
    one = f"{head} autorotation{tail}".strip()
    return many, one


def window_words(rule: CurrencyRule) -> str:
    if rule.window_days is not None:
        return f"{rule.window_days} day{'s' if rule.window_days != 1 else ''}"
    return f"{rule.window_months} calendar month{'s' if rule.window_months != 1 else ''}"


def type_names(session: Session) -> dict[int, str]:
    return {tid: name for tid, name in session.execute(select(HelicopterType.id, HelicopterType.designation))}
