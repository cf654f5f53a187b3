"""Wind components checked by plain trigonometry and the pilots' clock rule."""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from server.compute.wind import WindComponents, wind_components

directions = st.floats(min_value=0, max_value=360)
speeds = st.floats(min_value=0, max_value=60)


@pytest.mark.parametrize("landing_dir_deg", [0.0, 90.0, 180.0, 270.0, 360.0, 123.0])
def test_wind_down_the_landing_direction_is_all_headwind(landing_dir_deg):
    # Plain trigonometry: cos 0 = 1, sin 0 = 0.
    wind = wind_components(wind_dir_deg=landing_dir_deg, wind_kt=15.0, landing_dir_deg=landing_dir_deg)
    assert wind.headwind_kt == pytest.approx(15.0)
    assert wind.crosswind_kt == pytest.approx(0.0, abs=1e-9)


def test_wind_from_behind_is_a_tailwind():
    # Plain trigonometry: cos 180 = -1.
    wind = wind_components(wind_dir_deg=180.0, wind_kt=8.0, landing_dir_deg=360.0)
    assert wind.headwind_kt == pytest.approx(-8.0)
    assert wind.crosswind_kt == pytest.approx(0.0, abs=1e-9)


def test_wind_at_right_angles_is_all_crosswind_and_from_the_right_is_positive():
    # Plain trigonometry: sin 90 = 1. Landing north, wind from the east comes from the right.
    from_right = wind_components(wind_dir_deg=90.0, wind_kt=12.0, landing_dir_deg=360.0)
    assert from_right.headwind_kt == pytest.approx(0.0, abs=1e-9)
    assert from_right.crosswind_kt == pytest.approx(12.0)
    from_left = wind_components(wind_dir_deg=270.0, wind_kt=12.0, landing_dir_deg=360.0)
    assert from_left.crosswind_kt == pytest.approx(-12.0)


def test_wrap_around_north():
    # Plain trigonometry: landing 350, wind 010 is 20 degrees from the right.
    wind = wind_components(wind_dir_deg=10.0, wind_kt=20.0, landing_dir_deg=350.0)
    assert wind.headwind_kt == pytest.approx(20.0 * math.cos(math.radians(20)))
    assert wind.crosswind_kt == pytest.approx(20.0 * math.sin(math.radians(20)))


@pytest.mark.parametrize(
    ("angle_deg", "clock_fraction"), [(15.0, 0.25), (30.0, 0.5), (45.0, 0.75), (60.0, 1.0)]
)
def test_crosswind_follows_the_clock_rule(angle_deg, clock_fraction):
    # Common practice (clock rule): 15 deg = quarter, 30 = half, 45 = three quarters, 60 = all.
    wind = wind_components(wind_dir_deg=angle_deg, wind_kt=20.0, landing_dir_deg=0.0)
    assert wind.crosswind_kt == pytest.approx(20.0 * clock_fraction, abs=0.15 * 20.0)


def test_gusts_are_kept_apart_from_the_steady_wind():
    wind = wind_components(wind_dir_deg=30.0, wind_kt=10.0, landing_dir_deg=0.0, gust_kt=25.0)
    assert isinstance(wind, WindComponents)
    assert wind.headwind_kt == pytest.approx(10.0 * math.cos(math.radians(30)))
    assert wind.gust_headwind_kt == pytest.approx(25.0 * math.cos(math.radians(30)))
    assert wind.gust_crosswind_kt == pytest.approx(12.5)
    no_gust = wind_components(wind_dir_deg=30.0, wind_kt=10.0, landing_dir_deg=0.0)
    assert no_gust.gust_headwind_kt is None and no_gust.gust_crosswind_kt is None


@given(wind_dir=directions, landing_dir=directions, wind_kt=speeds)
def test_components_add_back_to_the_wind(wind_dir, landing_dir, wind_kt):
    # Plain trigonometry (Pythagoras): head^2 + cross^2 = wind^2.
    wind = wind_components(wind_dir_deg=wind_dir, wind_kt=wind_kt, landing_dir_deg=landing_dir)
    assert math.hypot(wind.headwind_kt, wind.crosswind_kt) == pytest.approx(wind_kt, abs=1e-6)


@given(wind_dir=directions, landing_dir=directions, wind_kt=speeds, turn=st.floats(0, 360))
def test_turning_wind_and_landing_together_changes_nothing(wind_dir, landing_dir, wind_kt, turn):
    # Plain geometry: only the angle between wind and landing direction matters.
    base = wind_components(wind_dir_deg=wind_dir, wind_kt=wind_kt, landing_dir_deg=landing_dir)
    turned = wind_components(
        wind_dir_deg=(wind_dir + turn) % 360, wind_kt=wind_kt, landing_dir_deg=(landing_dir + turn) % 360
    )
    assert turned.headwind_kt == pytest.approx(base.headwind_kt, abs=1e-6)
    assert turned.crosswind_kt == pytest.approx(base.crosswind_kt, abs=1e-6)


@pytest.mark.parametrize(
    ("kwargs", "mentions"),
    [
        ({"wind_dir_deg": 400.0, "wind_kt": 10.0, "landing_dir_deg": 0.0}, "wind direction"),
        ({"wind_dir_deg": 10.0, "wind_kt": 10.0, "landing_dir_deg": -5.0}, "landing direction"),
        ({"wind_dir_deg": 10.0, "wind_kt": -3.0, "landing_dir_deg": 0.0}, "wind speed"),
        ({"wind_dir_deg": 10.0, "wind_kt": 15.0, "landing_dir_deg": 0.0, "gust_kt": 10.0}, "gust"),
    ],
)
def test_impossible_wind_is_refused_with_a_plain_reason(kwargs, mentions):
    with pytest.raises(ValueError, match=mentions):
        wind_components(**kwargs)
