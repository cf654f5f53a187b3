"""Positions near a practice site on a local flat plane, good to centimetres over a few kilometres."""
import math

import numpy as np

# WGS 84 ellipsoid (NIMA TR8350.2).
WGS84_A_M = 6378137.0
WGS84_F = 1 / 298.257223563
_E2 = WGS84_F * (2 - WGS84_F)
FT_PER_M = 1 / 0.3048


def radii_m(lat_deg: float) -> tuple[float, float]:
    """Meridional and prime-vertical radii of curvature at a latitude."""
    s = math.sin(math.radians(lat_deg))
    w = math.sqrt(1 - _E2 * s * s)
    return WGS84_A_M * (1 - _E2) / w**3, WGS84_A_M / w


def to_local_m(lat_deg, lon_deg, *, origin_lat_deg: float, origin_lon_deg: float):
    """East and north metres from the origin (arrays or floats)."""
    meridional, prime = radii_m(origin_lat_deg)
    east = np.radians(np.asarray(lon_deg) - origin_lon_deg) * prime * math.cos(math.radians(origin_lat_deg))
    north = np.radians(np.asarray(lat_deg) - origin_lat_deg) * meridional
    return east, north


def bearing_deg(east: float, north: float) -> float:
    """True bearing of a flat vector, 0 to 360."""
    return math.degrees(math.atan2(east, north)) % 360


def signed_angle_deg(angle: float, reference: float) -> float:
    """`angle - reference` wrapped to -180..180 (positive: to the right of the reference)."""
    return (angle - reference + 180) % 360 - 180


def along_landing_direction_ft(*, lat_deg: float, lon_deg: float, aim_lat_deg: float, aim_lon_deg: float,
                               landing_dir_deg: float) -> tuple[float, float]:
    """Distance of a point from the aim point along the landing direction (+ long, - short) and across it
    (+ right), in feet."""
    east, north = to_local_m(lat_deg, lon_deg, origin_lat_deg=aim_lat_deg, origin_lon_deg=aim_lon_deg)
    direction = math.radians(landing_dir_deg)
    along = float(east) * math.sin(direction) + float(north) * math.cos(direction)
    across = float(east) * math.cos(direction) - float(north) * math.sin(direction)
    return along * FT_PER_M, across * FT_PER_M
