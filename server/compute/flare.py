"""Expected flare-initiation band corrected for weight and air density."""

import math


def _check_positive(value: float, what: str) -> None:
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        raise ValueError(f"The {what} must be a number.")
    if value <= 0:
        raise ValueError(f"The {what} must be greater than zero (got {value:g}).")


def flare_scale(
    *, weight_lb: float | None, reference_weight_lb: float, density_ratio: float | None
) -> float:
    """The band's factor sqrt((W / W_ref) / sigma): 1 at reference weight and sea-level ISA."""
    _check_positive(reference_weight_lb, "reference weight")
    weight = reference_weight_lb if weight_lb is None else weight_lb
    sigma = 1.0 if density_ratio is None else density_ratio
    _check_positive(weight, "weight")
    _check_positive(sigma, "density ratio")
    # Momentum theory: autorotative descent rate scales with v_h = sqrt(W / (2 rho A)),
    # and the height needed to arrest it scales with that rate.
    return math.sqrt((weight / reference_weight_lb) / sigma)


def expected_flare_band_ft(
    *,
    baseline_low_ft: float,
    baseline_high_ft: float,
    weight_lb: float | None,
    reference_weight_lb: float,
    density_ratio: float | None,
) -> tuple[float, float]:
    """The type's baseline flare band (ft AGL) scaled for this weight and density; guidance only."""
    _check_positive(baseline_low_ft, "low end of the flare band")
    _check_positive(baseline_high_ft, "high end of the flare band")
    if baseline_low_ft > baseline_high_ft:
        raise ValueError(
            f"The flare band's low end ({baseline_low_ft:g} ft) is above "
            f"its high end ({baseline_high_ft:g} ft)."
        )
    scale = flare_scale(
        weight_lb=weight_lb, reference_weight_lb=reference_weight_lb, density_ratio=density_ratio
    )
    return (baseline_low_ft * scale, baseline_high_ft * scale)
