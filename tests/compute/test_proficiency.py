"""Proficiency per kind (server/compute/proficiency.py) checked against scipy, pandas and the trade's conventions."""
from datetime import date, timedelta

import pandas as pd
import pytest
from scipy.stats import theilslopes

from server.compute.proficiency import (
    AttemptPoint,
    StandardUsed,
    flare_deviation_ft,
    kind_trend,
    metric_trend,
    nr_deviation_pct,
)

DAY0 = date(2026, 9, 1)
STANDARD = StandardUsed(standard_id=None, name="defaults", consecutive_needed=3, threshold=80.0, decay_days=90)


def _point(i: int, *, touchdown_kt: float, within: bool = True, subscore: float = 0.9) -> AttemptPoint:
    return AttemptPoint(
        attempt_id=i, sortie_id=i, flown_on=DAY0 + timedelta(days=i), maneuver="straight_in",
        termination="touchdown",
        values={"touchdown_speed_kt": touchdown_kt, "flare_height_dev_ft": 0.0, "point_error_ft": None,
                "nr_dev_pct": None, "score": 100 * subscore},
        tolerances={"touchdown_speed_kt": 5.0, "flare_height_dev_ft": 10.0, "point_error_ft": None,
                    "nr_dev_pct": None, "score": 100.0},
        flare_height_ft=None, flare_band_ft=None, touchdown_subscore=subscore, flare_subscore=subscore,
        satisfactory=within, within_tolerances=within, standard_id=None,
    )


@pytest.mark.parametrize(("height_ft", "expected"), [(30.0, -10.0), (40.0, 0.0), (55.0, 0.0), (70.0, 15.0)])
def test_flare_deviation_is_the_signed_distance_outside_the_band(height_ft, expected):
    # Common practice: a tolerance band is met anywhere inside it; outside, the miss is measured to the
    # nearer edge (below the band negative: a late flare).
    assert flare_deviation_ft(height_ft, (40.0, 55.0)) == expected
    assert flare_deviation_ft(None, (40.0, 55.0)) is None and flare_deviation_ft(height_ft, None) is None


@pytest.mark.parametrize(("reading_pct", "beyond_pct", "expected"), [(88.0, 2.0, -2.0), (112.0, 2.0, 2.0),
                                                                     (100.0, 0.0, 0.0)])
def test_rotor_rpm_excursion_is_negative_for_a_droop(reading_pct, beyond_pct, expected):
    # Common practice: %NR is relative to normal rotor speed (100 %); below it is a droop, above an overspeed.
    assert nr_deviation_pct(reading_pct, beyond_pct) == expected


def test_metric_slope_and_ewma_match_scipy_and_pandas():
    speeds = [12.0, 11.0, 11.5, 9.0, 8.0, 8.5, 7.0, 6.0]
    trend = metric_trend("touchdown_speed_kt", [_point(i, touchdown_kt=v) for i, v in enumerate(speeds)])
    # scipy's Theil-Sen estimator, over attempt index.
    assert trend.slope_per_attempt == pytest.approx(theilslopes(speeds).slope)
    # pandas' recursive EWMA (adjust=False) with lambda 0.3, started from the series mean as the design says.
    reference = pd.Series([sum(speeds) / len(speeds), *speeds]).ewm(alpha=0.3, adjust=False).mean().tolist()[1:]
    assert trend.ewma == pytest.approx(reference)
    # Falling touchdown speed is an improvement (lower is better), by far more than the steady band.
    assert trend.direction == "improving"


def test_a_run_inside_every_tolerance_meets_the_standard():
    points = [_point(i, touchdown_kt=6.0) for i in range(3)]
    result = kind_trend(maneuver="straight_in", termination="touchdown", points=points, standard=STANDARD,
                        as_of=DAY0 + timedelta(days=5))
    # DESIGN 4.5 (the product's own rule): 3 in a row inside every tolerance with a trend score of at least 80.
    assert (result.inside_run, result.state, result.forecast_attempts) == (3, "at_standard", 0)
    assert result.trend_score == pytest.approx(90.0)
