"""Expected flare band checked against momentum theory and common practice."""

import math

import pytest
from fluids.atmosphere import ATMOSPHERE_1976
from hypothesis import given
from hypothesis import strategies as st

from server.compute.atmosphere import derive_atmosphere
from server.compute.flare import expected_flare_band_ft

N_PER_LB = 4.4482216152605  # pound-force, NIST SP 811


def hover_induced_velocity_m_s(weight_lb: float, rho_kg_m3: float, rotor_radius_m: float) -> float:
    """Momentum theory (Glauert / Rankine-Froude actuator disc): v_h = sqrt(W / (2 rho A))."""
    disc_area = math.pi * rotor_radius_m**2
    return math.sqrt(weight_lb * N_PER_LB / (2.0 * rho_kg_m3 * disc_area))


def band(weight_lb=None, sigma=None, low=80.0, high=120.0, reference_lb=1_500.0):
    return expected_flare_band_ft(
        baseline_low_ft=low,
        baseline_high_ft=high,
        weight_lb=weight_lb,
        reference_weight_lb=reference_lb,
        density_ratio=sigma,
    )


def test_reference_weight_at_sea_level_gives_the_baseline_band():
    # Definition of the baseline: sea-level ISA and reference weight (DESIGN 4.3).
    assert band(weight_lb=1_500.0, sigma=1.0) == pytest.approx((80.0, 120.0))


def test_missing_weight_and_density_fall_back_to_reference_and_sea_level():
    assert band() == pytest.approx((80.0, 120.0))
    assert band(weight_lb=None, sigma=0.8) == band(weight_lb=1_500.0, sigma=0.8)
    assert band(weight_lb=1_300.0, sigma=None) == band(weight_lb=1_300.0, sigma=1.0)


@pytest.mark.parametrize(
    ("weight_lb", "altitude_m"),
    [(1_200.0, 0.0), (1_500.0, 1_500.0), (1_650.0, 2_400.0), (1_350.0, 900.0)],
)
def test_scaling_follows_the_hover_induced_velocity_of_momentum_theory(weight_lb, altitude_m):
    # Momentum theory v_h = sqrt(W / (2 rho A)), densities from fluids (US Standard Atmosphere 1976).
    rho0 = ATMOSPHERE_1976(0.0).rho
    rho = ATMOSPHERE_1976(altitude_m).rho
    radius_m = 3.8
    ratio = hover_induced_velocity_m_s(weight_lb, rho, radius_m) / hover_induced_velocity_m_s(
        1_500.0, rho0, radius_m
    )
    low, high = band(weight_lb=weight_lb, sigma=rho / rho0)
    assert low == pytest.approx(80.0 * ratio, rel=1e-9)
    assert high == pytest.approx(120.0 * ratio, rel=1e-9)


@given(
    weight_lb=st.floats(min_value=800, max_value=2_500),
    heavier_by=st.floats(min_value=10, max_value=500),
    sigma=st.floats(min_value=0.5, max_value=1.2),
)
def test_heavier_helicopter_flares_higher(weight_lb, heavier_by, sigma):
    # Common practice: more weight, faster descent, earlier (higher) flare.
    light = band(weight_lb=weight_lb, sigma=sigma)
    heavy = band(weight_lb=weight_lb + heavier_by, sigma=sigma)
    assert heavy[0] > light[0] and heavy[1] > light[1]


@given(
    weight_lb=st.floats(min_value=800, max_value=2_500),
    sigma=st.floats(min_value=0.5, max_value=1.2),
    thinner_by=st.floats(min_value=0.01, max_value=0.3),
)
def test_thinner_air_means_a_higher_flare(weight_lb, sigma, thinner_by):
    # Common practice: high density altitude, faster descent, earlier (higher) flare.
    dense = band(weight_lb=weight_lb, sigma=sigma)
    thin = band(weight_lb=weight_lb, sigma=sigma - thinner_by * sigma)
    assert thin[0] > dense[0] and thin[1] > dense[1]


@pytest.mark.parametrize(
    ("elevation_ft", "oat_c", "weight_fraction"),
    [
        (0.0, 15.0, 1.0),
        (0.0, 35.0, 0.85),
        (3_000.0, 30.0, 1.0),
        (5_000.0, 25.0, 0.9),
        (1_000.0, -5.0, 0.8),
    ],
)
def test_light_helicopter_flare_stays_near_100ft(elevation_ft, oat_c, weight_fraction):
    # Common practice: light helicopters begin the flare at roughly 100 ft AGL, varying with
    # density altitude and weight. A baseline centred on 100 ft should stay roughly there.
    sigma = derive_atmosphere(elevation_ft, 1013.25, oat_c).density_ratio
    low, high = band(weight_lb=1_500.0 * weight_fraction, sigma=sigma, low=80.0, high=120.0)
    assert 70.0 <= (low + high) / 2 <= 130.0
    assert low < 100.0 * 1.3 and high > 100.0 * 0.7


@pytest.mark.parametrize(
    ("kwargs", "mentions"),
    [
        ({"low": 120.0, "high": 80.0}, "low end"),
        ({"weight_lb": 0.0}, "weight"),
        ({"sigma": -0.2}, "density ratio"),
        ({"reference_lb": 0.0}, "reference weight"),
    ],
)
def test_impossible_input_is_refused_with_a_plain_reason(kwargs, mentions):
    with pytest.raises(ValueError, match=mentions):
        band(**kwargs)
