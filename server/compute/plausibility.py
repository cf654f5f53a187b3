"""Figures that are probably a slip of the finger: warned about and confirmed, never refused.

Each threshold names where it comes from. They catch typing slips (a digit lost, kilograms typed as
pounds), not unusual flying: the instructor confirms and the figures are kept as entered.
"""

# Common practice: a light training helicopter takes off within roughly a third below and a sixth
# above its usual loaded weight (empty weight plus two people and fuel). Further out, a lost digit or
# kilograms typed as pounds is far more likely than a real loading: 1,420 lb typed as 420 is 29 %.
WEIGHT_LOW_RATIO = 0.65
WEIGHT_HIGH_RATIO = 1.15
# Common practice: a hovering autorotation starts from a low hover, a few feet up and with almost no
# airspeed; above these figures it is a forward-flight entry or a typing slip.
HOVER_ENTRY_MAX_FT = 25
HOVER_ENTRY_MAX_KIAS = 20


def _fmt(value: float) -> str:
    return f"{value:,.0f}"


def weight_warnings(*, weight_lb: float | None, reference_weight_lb: float | None) -> list[str]:
    """A take-off weight far from the type's reference weight."""
    if weight_lb is None or not reference_weight_lb:
        return []
    ratio = weight_lb / reference_weight_lb
    if WEIGHT_LOW_RATIO <= ratio <= WEIGHT_HIGH_RATIO:
        return []
    side = "below" if ratio < 1 else "above"
    return [f"A take-off weight of {_fmt(weight_lb)} lb is far {side} this type's reference weight of "
            f"{_fmt(reference_weight_lb)} lb ({ratio:.0%}). Is it right, and in pounds?"]


def attempt_warnings(*, maneuver: str, entry_height_ft: float | None, entry_kias: float | None,
                     flare_height_ft: float | None) -> list[str]:
    """Figures of one attempt that contradict each other or the kind of autorotation."""
    warnings = []
    if entry_height_ft is not None and flare_height_ft is not None and flare_height_ft > entry_height_ft:
        warnings.append(f"The flare began at {_fmt(flare_height_ft)} ft, above the entry height of "
                        f"{_fmt(entry_height_ft)} ft: the flare comes after the entry, lower down.")
    if maneuver == "hovering":
        if entry_height_ft is not None and entry_height_ft > HOVER_ENTRY_MAX_FT:
            warnings.append(f"A hovering autorotation entered at {_fmt(entry_height_ft)} ft: it usually "
                            f"starts from a low hover, under {HOVER_ENTRY_MAX_FT} ft.")
        if entry_kias is not None and entry_kias > HOVER_ENTRY_MAX_KIAS:
            warnings.append(f"A hovering autorotation entered at {_fmt(entry_kias)} KIAS: it starts with "
                            f"almost no airspeed (under {HOVER_ENTRY_MAX_KIAS} KIAS).")
    return warnings
