"""Figures the server derives from what was entered: conditions, wind, flare band, score."""

from server.compute.atmosphere import derive_atmosphere, inhg_to_hpa
from server.compute.flare import expected_flare_band_ft
from server.compute.metar import MetarError, parse_metar
from server.compute.scoring import Observation, Tolerances, TypeLimits, score_attempt
from server.compute.wind import wind_components
from server.fleet.models import HelicopterType
from server.logbook.models import Attempt, Sortie
from server.logbook.schemas import ConditionsRead, ConditionsRequest
from server.training.models import Standard

OBSERVED_FIELDS = (
    "entry_height_ft", "entry_kias", "descent_kias", "nr_low_pct", "nr_high_pct", "flare_height_ft",
    "touchdown_speed_kt", "point_error_ft", "heading_error_deg",
)


def conditions(request: ConditionsRequest) -> ConditionsRead:
    """Pressure and density altitude and wind components; a METAR fills what it carries."""
    fields = request.model_dump()
    filled: list[str] = []
    message = None
    if request.metar and request.metar.strip():
        try:
            report = parse_metar(request.metar)
        except MetarError as error:
            message = str(error)
        else:
            for name in ("wind_dir_deg", "wind_kt", "gust_kt", "oat_c", "altimeter_hpa"):
                value = getattr(report, name)
                if value is not None:
                    fields[name] = value
                    filled.append(name)
            if "altimeter_hpa" in filled:
                fields["altimeter_inhg"] = None
    altimeter_hpa = fields["altimeter_hpa"]
    if altimeter_hpa is None and fields["altimeter_inhg"] is not None:
        altimeter_hpa = inhg_to_hpa(fields["altimeter_inhg"])
    out = ConditionsRead(
        pressure_altitude_ft=None, density_altitude_ft=None, density_ratio=None, isa_temp_c=None,
        headwind_kt=None, crosswind_kt=None, oat_c=fields["oat_c"], altimeter_hpa=altimeter_hpa,
        wind_dir_deg=fields["wind_dir_deg"], wind_kt=fields["wind_kt"], gust_kt=fields["gust_kt"],
        filled_from_metar=filled, message=message,
    )
    if fields["elevation_ft"] is not None and altimeter_hpa is not None and fields["oat_c"] is not None:
        try:
            atmosphere = derive_atmosphere(fields["elevation_ft"], altimeter_hpa, fields["oat_c"])
        except ValueError as error:  # e.g. a METAR's altimeter setting outside the accepted range
            out.message = str(error)
        else:
            out.pressure_altitude_ft = round(atmosphere.pressure_altitude_ft)
            out.density_altitude_ft = round(atmosphere.density_altitude_ft)
            out.density_ratio = round(atmosphere.density_ratio, 4)
            out.isa_temp_c = round(atmosphere.isa_temp_c, 1)
    if (fields["wind_dir_deg"] is not None and fields["wind_kt"] is not None
            and fields["landing_dir_deg"] is not None):
        wind = wind_components(wind_dir_deg=fields["wind_dir_deg"], wind_kt=fields["wind_kt"],
                               landing_dir_deg=fields["landing_dir_deg"], gust_kt=fields["gust_kt"])
        out.headwind_kt = round(wind.headwind_kt, 1)
        out.crosswind_kt = round(wind.crosswind_kt, 1)
        if wind.gust_headwind_kt is not None:
            out.gust_headwind_kt = round(wind.gust_headwind_kt, 1)
    return out


def apply_conditions(sortie: Sortie) -> None:
    """Recompute a sortie's pressure and density altitude from its site and conditions."""
    result = conditions(ConditionsRequest(
        elevation_ft=sortie.site.elevation_ft, altimeter_hpa=sortie.altimeter_hpa, oat_c=sortie.oat_c,
    ))
    sortie.pressure_altitude_ft = result.pressure_altitude_ft
    sortie.density_altitude_ft = result.density_altitude_ft
    sortie.density_ratio = result.density_ratio


def type_limits(helicopter: HelicopterType) -> TypeLimits:
    return TypeLimits(
        nr_power_off_min_pct=helicopter.nr_power_off_min_pct,
        nr_power_off_max_pct=helicopter.nr_power_off_max_pct,
        autorotation_kias=helicopter.autorotation_kias,
        touchdown_speed_max_kt=helicopter.touchdown_speed_max_kt,
        hv_avoid=[[tuple(point) for point in polygon] for polygon in helicopter.hv_avoid or []],
    )


def tolerances(standard: Standard | None) -> Tolerances:
    """The standard's tolerances, or the defaults where the school has set none."""
    if standard is None:
        return Tolerances()
    defaults = Tolerances()
    weights = dict(defaults.weights)
    weights.update(standard.weights or {})
    return Tolerances(
        airspeed_kt=standard.airspeed_tol_kt,
        touchdown_speed_max_kt=standard.touchdown_speed_max_kt,
        touchdown_point_ft=standard.touchdown_point_ft,
        heading_deg=standard.heading_tol_deg,
        weights=weights,
    )


def score(attempt: Attempt, sortie: Sortie, standard: Standard | None) -> None:
    """Derive wind, expected flare band and score for an attempt, and keep them on the row."""
    helicopter = sortie.aircraft.type
    band = expected_flare_band_ft(
        baseline_low_ft=helicopter.flare_band_low_ft, baseline_high_ft=helicopter.flare_band_high_ft,
        weight_lb=sortie.takeoff_weight_lb, reference_weight_lb=helicopter.reference_weight_lb,
        density_ratio=sortie.density_ratio,
    )
    # Floats, as the columns read back: the signed content hash must not change when the row is reloaded.
    attempt.flare_band_low_ft, attempt.flare_band_high_ft = float(round(band[0])), float(round(band[1]))
    attempt.headwind_kt = attempt.crosswind_kt = None
    if sortie.wind_dir_deg is not None and sortie.wind_kt is not None and attempt.landing_dir_deg is not None:
        wind = wind_components(wind_dir_deg=sortie.wind_dir_deg, wind_kt=sortie.wind_kt,
                               landing_dir_deg=attempt.landing_dir_deg, gust_kt=sortie.gust_kt)
        attempt.headwind_kt, attempt.crosswind_kt = round(wind.headwind_kt, 1), round(wind.crosswind_kt, 1)
    observation = Observation(
        **{name: getattr(attempt, name) for name in OBSERVED_FIELDS},
        takeover=attempt.takeover, grade=attempt.grade, termination=attempt.termination,
    )
    result = score_attempt(observation=observation, limits=type_limits(helicopter),
                           tolerances=tolerances(standard),
                           flare_band_ft=(attempt.flare_band_low_ft, attempt.flare_band_high_ft))
    attempt.standard_id = standard.id if standard else None
    attempt.score = result.score
    # Part and Flag hold plain numbers and words: a copy of their fields is what asdict's deep copy gave,
    # at a fifth of the cost (an import scores ten thousand attempts).
    attempt.parts = {key: dict(vars(part)) for key, part in result.parts.items()}
    attempt.flags = [dict(vars(flag)) for flag in result.flags]
    attempt.satisfactory = result.satisfactory
    attempt.within_tolerances = result.within_all_tolerances
