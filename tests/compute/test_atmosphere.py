"""Atmosphere checks against ICAO/US Standard Atmosphere references, handbooks and common practice."""

import itertools
import math

import pytest
from ambiance import Atmosphere as AmbianceAtmosphere
from fluids.atmosphere import ATMOSPHERE_1976
from hypothesis import given
from hypothesis import strategies as st
from scipy.optimize import brentq

from server.compute.atmosphere import (
    Atmosphere,
    density_altitude_ft,
    density_ratio,
    derive_atmosphere,
    hpa_to_inhg,
    inhg_to_hpa,
    isa_temperature_c,
    pressure_altitude_ft,
)

M_PER_FT = 0.3048
EARTH_RADIUS_M = 6_356_766.0  # US Standard Atmosphere 1976, for geopotential <-> geometric height

# Grid of conditions a school flies in: elevations 0..12000 ft, QNH 980..1040 hPa, OAT -20..+40 C.
GRID = list(
    itertools.product(
        [0.0, 4_000.0, 8_000.0, 12_000.0], [980.0, 1013.25, 1040.0], [-20.0, 10.0, 40.0]
    )
)
GRID_IDS = [f"elev{e:g}-qnh{q:g}-oat{t:g}" for e, q, t in GRID]


def geometric_m(geopotential_m: float) -> float:
    return EARTH_RADIUS_M * geopotential_m / (EARTH_RADIUS_M - geopotential_m)


def density_altitude_tolerance_ft(reference_ft: float) -> float:
    return max(0.005 * abs(reference_ft), 30.0)


# --- reference: ambiance (ICAO standard atmosphere 1993) ---------------------------------------


def ambiance_actual_density(pa_ft: float, oat_c: float) -> float:
    """Density at the ISA pressure of this pressure altitude and the actual temperature."""
    isa = AmbianceAtmosphere(geometric_m(pa_ft * M_PER_FT))
    # Ideal gas at equal pressure: density scales with 1/T.
    return float(isa.density[0] * isa.temperature[0] / (oat_c + 273.15))


@pytest.mark.parametrize(("elevation_ft", "qnh_hpa", "oat_c"), GRID, ids=GRID_IDS)
def test_density_ratio_and_altitude_match_ambiance(elevation_ft, qnh_hpa, oat_c):
    # Source: ambiance library (ICAO Doc 7493 / ISO 2533 standard atmosphere).
    pa_ft = pressure_altitude_ft(elevation_ft, qnh_hpa)
    rho = ambiance_actual_density(pa_ft, oat_c)
    rho0 = float(AmbianceAtmosphere(0.0).density[0])
    assert density_ratio(pa_ft, oat_c) == pytest.approx(rho / rho0, rel=1e-3)

    reference_da_ft = float(AmbianceAtmosphere.from_density(rho).H[0]) / M_PER_FT
    assert abs(density_altitude_ft(pa_ft, oat_c) - reference_da_ft) <= density_altitude_tolerance_ft(
        reference_da_ft
    )


# --- reference: fluids (US Standard Atmosphere 1976) --------------------------------------------


@pytest.mark.parametrize(("elevation_ft", "qnh_hpa", "oat_c"), GRID, ids=GRID_IDS)
def test_density_ratio_and_altitude_match_fluids_us1976(elevation_ft, qnh_hpa, oat_c):
    # Source: fluids.atmosphere.ATMOSPHERE_1976 (US Standard Atmosphere 1976), with its
    # temperature offset dT, which keeps the standard pressure and changes the temperature.
    pa_ft = pressure_altitude_ft(elevation_ft, qnh_hpa)
    z_m = geometric_m(pa_ft * M_PER_FT)
    isa_c = ATMOSPHERE_1976(z_m).T - 273.15
    rho = ATMOSPHERE_1976(z_m, dT=oat_c - isa_c).rho
    rho0 = ATMOSPHERE_1976(0.0).rho
    assert density_ratio(pa_ft, oat_c) == pytest.approx(rho / rho0, rel=1e-3)

    # Cold dense days put DA below sea level; fluids carries the troposphere law down there.
    z_da = brentq(lambda z: ATMOSPHERE_1976(z).rho - rho, -3_000.0, 10_000.0, xtol=1e-6)
    reference_da_ft = ATMOSPHERE_1976(z_da).H / M_PER_FT
    assert abs(density_altitude_ft(pa_ft, oat_c) - reference_da_ft) <= density_altitude_tolerance_ft(
        reference_da_ft
    )


@pytest.mark.parametrize("pa_ft", [0.0, 5_000.0, 10_000.0, 20_000.0, 30_000.0, 36_000.0])
def test_isa_temperature_matches_fluids_us1976(pa_ft):
    # Source: fluids.atmosphere.ATMOSPHERE_1976 (US Standard Atmosphere 1976).
    reference_c = ATMOSPHERE_1976(geometric_m(pa_ft * M_PER_FT)).T - 273.15
    assert isa_temperature_c(pa_ft) == pytest.approx(reference_c, abs=0.01)


@pytest.mark.parametrize(
    ("pa_ft", "table_c"),
    [
        (0.0, 15.0),  # ICAO Doc 7488 sea level, by definition
        (5_000.0, 5.1),  # ICAO Doc 7488 table, from memory
        (10_000.0, -4.8),  # ICAO Doc 7488 table, from memory
        (36_089.0, -56.5),  # ICAO Doc 7488 tropopause temperature
    ],
)
def test_isa_temperature_matches_icao_table(pa_ft, table_c):
    assert isa_temperature_c(pa_ft) == pytest.approx(table_c, abs=0.06)


@pytest.mark.parametrize(
    ("pa_ft", "table_sigma"),
    [(5_000.0, 0.8617), (10_000.0, 0.7385), (20_000.0, 0.5328)],  # ICAO Doc 7488 table, from memory
)
def test_standard_day_density_ratio_matches_icao_table(pa_ft, table_sigma):
    assert density_ratio(pa_ft, isa_temperature_c(pa_ft)) == pytest.approx(table_sigma, abs=5e-4)


def test_isa_temperature_falls_about_2c_per_1000ft():
    # Common practice: the standard lapse rate is about 2 degC per 1,000 ft.
    assert isa_temperature_c(0.0) - isa_temperature_c(1_000.0) == pytest.approx(2.0, abs=0.05)


# --- pressure altitude -------------------------------------------------------------------------


@pytest.mark.parametrize("elevation_ft", [0.0, 1_165.0, 5_000.0, 12_000.0])
def test_standard_altimeter_gives_pressure_altitude_equal_to_elevation(elevation_ft):
    # FAA Pilot's Handbook of Aeronautical Knowledge: with 29.92 inHg set, PA = elevation.
    assert pressure_altitude_ft(elevation_ft, inhg_to_hpa(29.92)) == pytest.approx(elevation_ft, abs=5)
    assert pressure_altitude_ft(elevation_ft, 1013.25) == pytest.approx(elevation_ft, abs=0.01)


@pytest.mark.parametrize(
    ("altimeter_inhg", "correction_ft"),
    [
        (29.70, 205.0),  # FAA PHAK, field elevation versus pressure figure: "29.7 ... PA of 205 feet"
        (28.00, 1_824.0),  # FAA PHAK conversion-factor table, from memory
        (29.00, 863.0),  # FAA PHAK conversion-factor table, from memory
        (30.00, -73.0),  # FAA PHAK conversion-factor table, from memory
        (31.00, -983.0),  # FAA PHAK conversion-factor table, from memory
    ],
)
def test_pressure_altitude_matches_handbook_conversion_table(altimeter_inhg, correction_ft):
    pa_ft = pressure_altitude_ft(0.0, inhg_to_hpa(altimeter_inhg))
    assert pa_ft == pytest.approx(correction_ft, abs=5)


@pytest.mark.parametrize("qnh_hpa", [950.0, 980.0, 1000.0, 1025.0, 1040.0, 1060.0])
def test_pressure_altitude_correction_is_the_isa_height_of_qnh(qnh_hpa):
    # Source: ambiance (ICAO standard atmosphere): the ISA height of the QNH pressure level.
    reference_ft = float(AmbianceAtmosphere.from_pressure(qnh_hpa * 100.0).H[0]) / M_PER_FT
    assert pressure_altitude_ft(0.0, qnh_hpa) == pytest.approx(reference_ft, abs=2.0)


@pytest.mark.parametrize("altimeter_inhg", [28.92, 29.42, 30.42, 30.92])
def test_one_inch_is_about_1000_ft(altimeter_inhg):
    # Common practice: each inch of mercury below 29.92 adds about 1,000 ft of pressure altitude.
    rule_ft = (29.92 - altimeter_inhg) * 1_000.0
    pa_ft = pressure_altitude_ft(0.0, inhg_to_hpa(altimeter_inhg))
    assert pa_ft == pytest.approx(rule_ft, rel=0.10)


def test_one_hectopascal_is_about_30_ft():
    # Common practice (flight-computer rule): about 27 to 30 ft per hPa near sea level.
    per_hpa_ft = pressure_altitude_ft(0.0, 1012.25) - pressure_altitude_ft(0.0, 1013.25)
    assert 26.0 <= per_hpa_ft <= 31.0


def test_inhg_to_hpa_standard_setting():
    # ICAO / FAA PHAK: 29.92 inHg is the standard setting, 1013.2 hPa.
    assert inhg_to_hpa(29.92) == pytest.approx(1013.2, abs=0.05)


# --- density altitude: rule of thumb and behaviour -------------------------------------------


@pytest.mark.parametrize("pa_ft", [0.0, 2_000.0, 5_000.0, 8_000.0, 10_000.0])
@pytest.mark.parametrize("isa_deviation_c", [-20.0, -10.0, 10.0, 20.0, 25.0])
def test_120ft_per_degree_rule_of_thumb_is_a_fair_approximation(pa_ft, isa_deviation_c):
    # Common practice: DA ~ PA + 120 ft x (OAT - ISA). An approximation, so its own tolerance.
    oat_c = isa_temperature_c(pa_ft) + isa_deviation_c
    exact_ft = density_altitude_ft(pa_ft, oat_c)
    rule_ft = pa_ft + 120.0 * isa_deviation_c
    assert abs(exact_ft - rule_ft) <= max(0.10 * abs(exact_ft - pa_ft), 150.0)


@given(
    pa_ft=st.floats(min_value=-2_000, max_value=20_000),
    oat_c=st.floats(min_value=-50, max_value=50),
    warmer_by=st.floats(min_value=0.5, max_value=10),
)
def test_density_altitude_rises_with_temperature(pa_ft, oat_c, warmer_by):
    # Common practice: hotter air at the same pressure altitude means a higher density altitude.
    assert density_altitude_ft(pa_ft, oat_c + warmer_by) > density_altitude_ft(pa_ft, oat_c)


@given(
    elevation_ft=st.floats(min_value=0, max_value=12_000),
    qnh_hpa=st.floats(min_value=960, max_value=1_040),
    oat_c=st.floats(min_value=-30, max_value=45),
)
def test_lower_pressure_means_higher_density_altitude(elevation_ft, qnh_hpa, oat_c):
    # Common practice: a falling altimeter setting raises pressure and density altitude.
    high = derive_atmosphere(elevation_ft, qnh_hpa + 5.0, oat_c)
    low = derive_atmosphere(elevation_ft, qnh_hpa, oat_c)
    assert low.pressure_altitude_ft > high.pressure_altitude_ft
    assert low.density_altitude_ft > high.density_altitude_ft
    assert low.density_ratio < high.density_ratio


def test_standard_day_at_sea_level():
    # ICAO Doc 7488 definition: 1013.25 hPa and 15 degC at sea level is the standard atmosphere.
    air = derive_atmosphere(0.0, 1013.25, 15.0)
    assert isinstance(air, Atmosphere)
    assert air.pressure_altitude_ft == pytest.approx(0.0, abs=0.01)
    assert air.density_altitude_ft == pytest.approx(0.0, abs=1.0)
    assert air.density_ratio == pytest.approx(1.0, abs=1e-9)
    assert air.isa_temp_c == pytest.approx(15.0)


def test_derive_atmosphere_agrees_with_the_single_functions():
    air = derive_atmosphere(4_500.0, 1005.0, 31.0)
    pa_ft = pressure_altitude_ft(4_500.0, 1005.0)
    assert air.pressure_altitude_ft == pa_ft
    assert air.density_altitude_ft == density_altitude_ft(pa_ft, 31.0)
    assert air.density_ratio == density_ratio(pa_ft, 31.0)
    assert air.isa_temp_c == isa_temperature_c(pa_ft)
    # Common practice: a hot day at a mountain site reads thousands of feet above its elevation.
    assert air.density_altitude_ft > 7_000.0


# --- input that a person mistyped ----------------------------------------------------------


@pytest.mark.parametrize(
    ("elevation_ft", "altimeter_hpa", "oat_c", "mentions"),
    [
        (1_000.0, 29.92, 15.0, "altimeter setting"),  # inHg typed into the hPa field
        (1_000.0, 1_200.0, 15.0, "altimeter setting"),
        (1_000.0, 1013.0, 75.0, "outside air temperature"),  # degF typed as degC
        (1_000.0, 1013.0, -70.0, "outside air temperature"),
        (25_000.0, 1013.0, 15.0, "field elevation"),
        (-2_000.0, 1013.0, 15.0, "field elevation"),
        (math.nan, 1013.0, 15.0, "field elevation"),
    ],
)
def test_out_of_range_input_is_refused_with_a_plain_reason(elevation_ft, altimeter_hpa, oat_c, mentions):
    with pytest.raises(ValueError, match=mentions):
        derive_atmosphere(elevation_ft, altimeter_hpa, oat_c)


def test_pressure_altitude_above_the_troposphere_is_refused():
    with pytest.raises(ValueError, match="pressure altitude"):
        density_altitude_ft(40_000.0, -56.5)


@pytest.mark.parametrize(("hpa", "inhg"), [(1013.25, 29.92), (1000.0, 29.53), (1040.0, 30.71)])
def test_hpa_to_inhg_matches_the_standard_setting_and_reads_back(hpa, inhg):
    # ICAO standard atmosphere: 1013.25 hPa is 29.92 inHg (common practice, the standard altimeter setting);
    # 1000 hPa = 29.53 inHg and 1040 hPa = 30.71 inHg from the FAA/ICAO conversion tables (from memory).
    assert hpa_to_inhg(hpa) == pytest.approx(inhg, abs=0.005)
    assert inhg_to_hpa(hpa_to_inhg(hpa)) == pytest.approx(hpa)
