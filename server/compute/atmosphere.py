"""ISA troposphere: pressure altitude, density ratio and density altitude."""

import math
from dataclasses import dataclass

# ICAO Doc 7488 / US Standard Atmosphere 1976, sea level and troposphere.
T0_K = 288.15
LAPSE_K_PER_M = 0.0065
P0_HPA = 1013.25
G0_M_S2 = 9.80665
R_J_KG_K = 287.05287
TROPOPAUSE_M = 11_000.0

FT_PER_M = 1 / 0.3048
HPA_PER_INHG = 33.86389  # 1 inHg (0 degC) = 3386.389 Pa, NIST SP 811
KELVIN_OFFSET = 273.15

# Exponent of the ISA pressure law p/p0 = (T/T0)^(g0 / (R L)).
PRESSURE_EXPONENT = G0_M_S2 / (R_J_KG_K * LAPSE_K_PER_M)

# NOAA pressure-altitude form (National Weather Service).
NOAA_PA_SCALE_FT = 145_366.45
NOAA_PA_EXPONENT = 0.190284

ELEVATION_RANGE_FT = (-1_500.0, 20_000.0)
ALTIMETER_RANGE_HPA = (850.0, 1_100.0)
OAT_RANGE_C = (-60.0, 60.0)
PRESSURE_ALTITUDE_RANGE_FT = (-5_000.0, TROPOPAUSE_M * FT_PER_M)


@dataclass(frozen=True)
class Atmosphere:
    """Air at a site: pressure and density altitude, density ratio and ISA temperature."""

    pressure_altitude_ft: float
    density_altitude_ft: float
    density_ratio: float
    isa_temp_c: float


def _check_range(value: float, bounds: tuple[float, float], what: str, unit: str) -> None:
    low, high = bounds
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        raise ValueError(f"The {what} must be a number.")
    if not low <= value <= high:
        raise ValueError(
            f"The {what} of {value:g} {unit} is outside the range this tool accepts "
            f"({low:g} to {high:g} {unit}); check the value and its unit."
        )


def inhg_to_hpa(inhg: float) -> float:
    """Convert an altimeter setting in inches of mercury to hectopascals."""
    if not isinstance(inhg, (int, float)) or not math.isfinite(inhg):
        raise ValueError("The altimeter setting must be a number.")
    return inhg * HPA_PER_INHG


def hpa_to_inhg(hpa: float) -> float:
    """Convert an altimeter setting in hectopascals to inches of mercury (for showing it as entered)."""
    return hpa / HPA_PER_INHG


def pressure_altitude_ft(elevation_ft: float, altimeter_hpa: float) -> float:
    """Pressure altitude of a field from its elevation and altimeter setting (QNH)."""
    _check_range(elevation_ft, ELEVATION_RANGE_FT, "field elevation", "ft")
    _check_range(altimeter_hpa, ALTIMETER_RANGE_HPA, "altimeter setting", "hPa")
    return elevation_ft + NOAA_PA_SCALE_FT * (1 - (altimeter_hpa / P0_HPA) ** NOAA_PA_EXPONENT)


def _isa_temperature_k(pressure_altitude_ft: float) -> float:
    _check_range(pressure_altitude_ft, PRESSURE_ALTITUDE_RANGE_FT, "pressure altitude", "ft")
    return T0_K - LAPSE_K_PER_M * (pressure_altitude_ft / FT_PER_M)


def isa_temperature_c(pressure_altitude_ft: float) -> float:
    """Standard (ISA) temperature at a pressure altitude in the troposphere."""
    return _isa_temperature_k(pressure_altitude_ft) - KELVIN_OFFSET


def density_ratio(pressure_altitude_ft: float, oat_c: float) -> float:
    """Density ratio sigma = rho / rho0 for the ISA pressure at this altitude and the actual OAT."""
    isa_k = _isa_temperature_k(pressure_altitude_ft)
    _check_range(oat_c, OAT_RANGE_C, "outside air temperature", "degC")
    pressure_ratio = (isa_k / T0_K) ** PRESSURE_EXPONENT
    return pressure_ratio * T0_K / (oat_c + KELVIN_OFFSET)


def density_altitude_ft(pressure_altitude_ft: float, oat_c: float) -> float:
    """Density altitude: the ISA altitude whose density equals the actual density."""
    sigma = density_ratio(pressure_altitude_ft, oat_c)
    # In the ISA troposphere sigma = (T/T0)^(exponent - 1); solve for the altitude.
    temperature_ratio = sigma ** (1 / (PRESSURE_EXPONENT - 1))
    return (T0_K / LAPSE_K_PER_M) * (1 - temperature_ratio) * FT_PER_M


def derive_atmosphere(elevation_ft: float, altimeter_hpa: float, oat_c: float) -> Atmosphere:
    """All the air figures for a site from elevation, altimeter setting (hPa) and OAT."""
    _check_range(oat_c, OAT_RANGE_C, "outside air temperature", "degC")
    pa_ft = pressure_altitude_ft(elevation_ft, altimeter_hpa)
    return Atmosphere(
        pressure_altitude_ft=pa_ft,
        density_altitude_ft=density_altitude_ft(pa_ft, oat_c),
        density_ratio=density_ratio(pa_ft, oat_c),
        isa_temp_c=isa_temperature_c(pa_ft),
    )
