"""Attempt scoring checked against the rules of DESIGN 4.4 and their properties."""

import dataclasses

import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from server.compute.scoring import (
    DEFAULT_WEIGHTS,
    Flag,
    Observation,
    Part,
    Score,
    Tolerances,
    TypeLimits,
    score_attempt,
)

# A helicopter type for the tests only (invented figures, plausible for a light helicopter).
LIMITS = TypeLimits(
    nr_power_off_min_pct=90.0,
    nr_power_off_max_pct=110.0,
    autorotation_kias=65.0,
    touchdown_speed_max_kt=10.0,
    hv_avoid=[[(0.0, 30.0), (25.0, 30.0), (40.0, 150.0), (25.0, 450.0), (0.0, 450.0)]],
)
BAND = (80.0, 120.0)
DEFAULTS = Tolerances()

# Every metric recorded and inside its tolerance.
GOOD = Observation(
    entry_height_ft=700.0,
    entry_kias=70.0,
    descent_kias=66.0,
    nr_low_pct=95.0,
    nr_high_pct=105.0,
    flare_height_ft=100.0,
    touchdown_speed_kt=4.0,
    point_error_ft=-60.0,
    heading_error_deg=3.0,
)
METRIC_FIELDS = {
    "touchdown_speed": ("touchdown_speed_kt",),
    "flare_height": ("flare_height_ft",),
    "rotor_rpm": ("nr_low_pct", "nr_high_pct"),
    "airspeed": ("descent_kias",),
    "touchdown_point": ("point_error_ft",),
    "heading": ("heading_error_deg",),
}


def score(observation=GOOD, limits=LIMITS, tolerances=DEFAULTS, band=BAND) -> Score:
    return score_attempt(
        observation=observation, limits=limits, tolerances=tolerances, flare_band_ft=band
    )


def codes(result: Score) -> list[str]:
    return [flag.code for flag in result.flags]


def test_default_weights_are_those_of_the_design():
    # DESIGN 4.4: touchdown speed 0.30, flare 0.25, RPM 0.20, airspeed 0.10, point 0.10, heading 0.05.
    assert list(DEFAULT_WEIGHTS.items()) == [
        ("touchdown_speed", 0.30),
        ("flare_height", 0.25),
        ("rotor_rpm", 0.20),
        ("airspeed", 0.10),
        ("touchdown_point", 0.10),
        ("heading", 0.05),
    ]
    assert sum(DEFAULT_WEIGHTS.values()) == pytest.approx(1.0)


def test_default_tolerances_are_those_of_the_practical_test_standards():
    # DESIGN 4.4, from memory of the FAA practical test standards: +-5 kt, 200 ft, +-10 degrees.
    assert DEFAULTS.airspeed_kt == 5.0
    assert DEFAULTS.touchdown_point_ft == 200.0
    assert DEFAULTS.heading_deg == 10.0
    assert DEFAULTS.touchdown_speed_max_kt is None  # falls back to the type's maximum


def test_attempt_inside_every_tolerance_scores_100_and_is_satisfactory():
    # DESIGN 4.4: no deviation beyond tolerance, every sub-score 1.
    result = score()
    assert result.score == 100.0
    assert result.within_all_tolerances and result.satisfactory
    assert result.flags == []
    assert list(result.parts) == list(DEFAULT_WEIGHTS)  # every part shown, in the design's order


def test_worked_example_from_the_design_formula():
    # DESIGN 4.4 applied by hand:
    #   touchdown 12 kt vs max 10: e 2, tol 10, sub 0.8;
    #   flare 70 ft vs band 80..120: e 10, tol 20 (half the band), sub 0.5;
    #   NR 95..105 inside 90..110: sub 1;  airspeed 75 vs 65 +-5: e 5, sub 0;
    #   point +250 ft vs 200: e 50, sub 0.75;  heading 4 deg: sub 1.
    #   100 x (0.3x0.8 + 0.25x0.5 + 0.2x1 + 0.1x0 + 0.1x0.75 + 0.05x1) = 69.0
    observation = dataclasses.replace(
        GOOD,
        touchdown_speed_kt=12.0,
        flare_height_ft=70.0,
        descent_kias=75.0,
        point_error_ft=250.0,
        heading_error_deg=4.0,
    )
    result = score(observation)
    assert result.score == 69.0
    touchdown, flare = result.parts["touchdown_speed"], result.parts["flare_height"]
    assert isinstance(touchdown, Part)
    assert (touchdown.value, touchdown.tolerance, touchdown.deviation) == (12.0, 10.0, 2.0)
    assert (touchdown.subscore, touchdown.weight) == pytest.approx((0.8, 0.3))
    assert (flare.value, flare.tolerance, flare.deviation) == (70.0, 20.0, 10.0)
    assert (flare.subscore, flare.weight) == pytest.approx((0.5, 0.25))
    assert result.parts["airspeed"].subscore == 0.0
    assert result.parts["touchdown_point"].deviation == 50.0
    assert not result.within_all_tolerances and not result.satisfactory
    assert codes(result) == ["low_flare", "fast_touchdown"]  # the flare began 10 ft below the band


@pytest.mark.parametrize(
    ("descent_kias", "subscore"),
    [(65.0, 1.0), (70.0, 1.0), (60.0, 1.0), (72.5, 0.5), (57.5, 0.5), (75.0, 0.0), (90.0, 0.0)],
)
def test_airspeed_part_follows_the_design_formula(descent_kias, subscore):
    # DESIGN 4.4: e = max(0, |v - target| - tol), sub-score max(0, 1 - e / tol); target 65, tol 5.
    part = score(dataclasses.replace(GOOD, descent_kias=descent_kias)).parts["airspeed"]
    assert part.subscore == pytest.approx(subscore)
    assert part.tolerance == 5.0


@pytest.mark.parametrize(
    ("flare_height_ft", "deviation"), [(80.0, 0.0), (120.0, 0.0), (130.0, 10.0), (50.0, 30.0)]
)
def test_flare_part_measures_distance_outside_the_band(flare_height_ft, deviation):
    # DESIGN 4.4: flare inside the expected band; e = distance outside it, tol = half the band width.
    part = score(dataclasses.replace(GOOD, flare_height_ft=flare_height_ft)).parts["flare_height"]
    assert part.deviation == pytest.approx(deviation)
    assert part.subscore == pytest.approx(max(0.0, 1.0 - deviation / 20.0))


def test_rotor_rpm_uses_the_worse_reading():
    # DESIGN 4.4: RPM part from the reading further outside the power-off limits.
    result = score(dataclasses.replace(GOOD, nr_low_pct=88.0, nr_high_pct=109.0))
    part = result.parts["rotor_rpm"]
    assert part.value == 88.0 and part.deviation == pytest.approx(2.0) and part.tolerance == 10.0


def test_rpm_outside_limits_caps_the_score_with_a_plain_message():
    # DESIGN 4.4: RPM outside the power-off limits caps the score at 50 and raises a flag.
    result = score(dataclasses.replace(GOOD, nr_low_pct=86.0))
    assert result.score <= 50.0
    assert result.flags[0] == Flag(
        "nr_limits", "Rotor RPM 86% was below the power-off limit of 90%: score capped at 50."
    )
    over = score(dataclasses.replace(GOOD, nr_high_pct=112.5))
    assert "112.5% was above the power-off limit of 110%" in over.flags[0].message


def test_takeover_makes_the_attempt_unsatisfactory():
    # DESIGN 4.4: the instructor taking the controls is unsatisfactory, whatever the figures.
    result = score(dataclasses.replace(GOOD, takeover=True, grade="satisfactory"))
    assert not result.satisfactory
    assert "takeover" in codes(result)
    assert result.score == 100.0  # the figures themselves were fine; the verdict is not


def test_instructor_grade_decides_when_given():
    # DESIGN 3 (instructor grade): the instructor's judgement stands over the figures.
    assert not score(dataclasses.replace(GOOD, grade="unsatisfactory")).satisfactory
    outside = dataclasses.replace(GOOD, point_error_ft=400.0)
    assert not score(outside).satisfactory
    assert score(dataclasses.replace(outside, grade="satisfactory")).satisfactory


def test_entry_in_the_avoid_region_raises_a_caution():
    # DESIGN 4.4 / 4.7: entry point inside the type's height-velocity avoid region.
    inside = score(dataclasses.replace(GOOD, entry_kias=15.0, entry_height_ft=300.0))
    assert "hv_avoid" in codes(inside)
    assert "15 KIAS and 300 ft AGL" in inside.flags[0].message
    assert inside.satisfactory  # a caution, not a failure
    assert "hv_avoid" not in codes(score())


def test_school_touchdown_maximum_replaces_the_types():
    # DESIGN 3 (standard): a school's touchdown-speed maximum overrides the type's.
    strict = Tolerances(touchdown_speed_max_kt=3.0)
    result = score(tolerances=strict)
    assert result.parts["touchdown_speed"].tolerance == 3.0
    assert result.parts["touchdown_speed"].deviation == pytest.approx(1.0)
    assert "fast_touchdown" in codes(result)
    assert "the maximum of 3 kt" in result.flags[-1].message


@pytest.mark.parametrize(("termination", "flagged"),
                         [("touchdown", True), ("to_hover", True), (None, True), ("power_recovery", False)])
def test_only_an_arrival_at_the_ground_or_a_hover_is_flagged_as_a_fast_touchdown(termination, flagged):
    # Common practice: a power recovery ends in flight, so its groundspeed is no touchdown; the
    # figure still scores against the maximum (DESIGN 4.4), only the safety flag is withheld.
    fast = dataclasses.replace(GOOD, touchdown_speed_kt=15.0, termination=termination)
    result = score(fast)
    assert ("fast_touchdown" in codes(result)) is flagged
    assert result.parts["touchdown_speed"].deviation == pytest.approx(15.0 - LIMITS.touchdown_speed_max_kt)


def test_nothing_recorded_gives_no_score_and_no_verdict_from_figures():
    result = score(Observation())
    assert result.score is None and result.parts == {}
    assert not result.within_all_tolerances and not result.satisfactory
    assert score(Observation(grade="satisfactory")).satisfactory


def test_heading_error_past_north_reads_the_short_way_round():
    # Plain geometry: a heading error of 355 degrees is 5 degrees the other way.
    result = score(dataclasses.replace(GOOD, heading_error_deg=355.0))
    assert result.parts["heading"].deviation == 0.0


@pytest.mark.parametrize(
    ("kwargs", "mentions"),
    [
        ({"grade": "excellent"}, "grade"),
        ({"touchdown_speed_kt": -2.0}, "touchdown speed"),
        ({"flare_height_ft": float("nan")}, "flare height"),
    ],
)
def test_impossible_observations_are_refused_with_a_plain_reason(kwargs, mentions):
    with pytest.raises(ValueError, match=mentions):
        Observation(**kwargs)


def test_unknown_weight_names_are_refused():
    with pytest.raises(ValueError, match="Unknown metric"):
        Tolerances(weights={"style": 1.0})


# --- properties ------------------------------------------------------------------------------

optional = lambda strategy: st.none() | strategy  # noqa: E731
observations = st.builds(
    Observation,
    entry_height_ft=optional(st.floats(0, 2_000)),
    entry_kias=optional(st.floats(0, 120)),
    descent_kias=optional(st.floats(0, 120)),
    nr_low_pct=optional(st.floats(60, 130)),
    nr_high_pct=optional(st.floats(60, 130)),
    flare_height_ft=optional(st.floats(0, 400)),
    touchdown_speed_kt=optional(st.floats(0, 40)),
    point_error_ft=optional(st.floats(-2_000, 2_000)),
    heading_error_deg=optional(st.floats(-180, 180)),
    takeover=st.booleans(),
    grade=st.sampled_from([None, "satisfactory", "unsatisfactory"]),
)


@given(observation=observations)
def test_score_stays_between_0_and_100(observation):
    # DESIGN 4.4: score 0 to 100.
    result = score(observation)
    assert result.score is None or 0.0 <= result.score <= 100.0
    assert all(0.0 <= part.subscore <= 1.0 for part in result.parts.values())


@given(observation=observations)
def test_weights_of_recorded_metrics_sum_to_one(observation):
    # DESIGN 4.4: a metric not recorded drops out and the rest are re-weighted.
    result = score(observation)
    recorded = [
        name
        for name, fields in METRIC_FIELDS.items()
        if any(getattr(observation, field) is not None for field in fields)
    ]
    assert list(result.parts) == recorded
    if recorded:
        assert sum(part.weight for part in result.parts.values()) == pytest.approx(1.0)
        for name, part in result.parts.items():
            share = DEFAULT_WEIGHTS[name] / sum(DEFAULT_WEIGHTS[n] for n in recorded)
            assert part.weight == pytest.approx(share)


@given(observation=observations)
def test_rpm_cap_holds(observation):
    # DESIGN 4.4: any reading outside the power-off limits caps the score at 50, with a flag.
    readings = [nr for nr in (observation.nr_low_pct, observation.nr_high_pct) if nr is not None]
    outside = any(nr < 90.0 or nr > 110.0 for nr in readings)
    result = score(observation)
    assert ("nr_limits" in codes(result)) is outside
    if outside:
        assert result.score <= 50.0


@given(observation=observations)
def test_takeover_is_never_satisfactory(observation):
    # DESIGN 4.4: the instructor taking the controls makes the attempt unsatisfactory.
    result = score(dataclasses.replace(observation, takeover=True))
    assert not result.satisfactory
    assert "takeover" in codes(result)


@given(
    observation=observations,
    field_and_direction=st.sampled_from(
        [
            ("touchdown_speed_kt", 1),
            ("flare_height_ft", 1),
            ("flare_height_ft", -1),
            ("nr_low_pct", -1),
            ("nr_high_pct", 1),
            ("descent_kias", 1),
            ("descent_kias", -1),
            ("point_error_ft", 1),
            ("point_error_ft", -1),
            ("heading_error_deg", 1),
        ]
    ),
    step=st.floats(0.1, 200),
)
def test_score_never_rises_as_a_deviation_grows(observation, field_and_direction, step):
    # DESIGN 4.4: sub-score max(0, 1 - e / tol) falls as e grows; so must the total.
    field, direction = field_and_direction
    # Start from a value on the far side of target so that moving further only adds deviation.
    start = {
        "touchdown_speed_kt": 10.0,
        "flare_height_ft": 120.0 if direction > 0 else 80.0,
        "nr_low_pct": 90.0,
        "nr_high_pct": 110.0,
        "descent_kias": 65.0,
        "point_error_ft": 0.0,
        "heading_error_deg": 0.0,
    }[field]
    near = dataclasses.replace(observation, **{field: start})
    far_value = start + direction * step
    if field == "heading_error_deg":
        far_value = min(180.0, far_value)
    assume(far_value >= 0)
    far = dataclasses.replace(observation, **{field: far_value})
    near_score, far_score = score(near).score, score(far).score
    assert far_score <= near_score


@pytest.mark.parametrize(("flare_height_ft", "flagged"), [(68.0, True), (79.0, True), (80.0, False), (130.0, False)])
def test_a_flare_begun_below_the_band_raises_a_flag(flare_height_ft, flagged):
    # Common practice: a flare begun low leaves less height to stop the descent, so it is flagged as well
    # as scored; a flare begun high costs score only. The band here is 80 to 120 ft.
    result = score(dataclasses.replace(GOOD, flare_height_ft=flare_height_ft))
    assert ("low_flare" in codes(result)) is flagged
    if flagged:
        low = next(flag for flag in result.flags if flag.code == "low_flare")
        assert f"{80 - flare_height_ft:g} ft below the expected band of 80–120 ft" in low.message
