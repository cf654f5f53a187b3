"""Plausibility warnings: typing slips are caught, ordinary figures pass untouched."""
import pytest

from server.compute.plausibility import attempt_warnings, weight_warnings

# Every figure below is invented for the test; the thresholds are common practice (see the module).
REFERENCE_LB = 1450


@pytest.mark.parametrize("weight_lb", [1000, 1300, 1450, 1600, 1660])
def test_ordinary_take_off_weights_pass(weight_lb):
    assert weight_warnings(weight_lb=weight_lb, reference_weight_lb=REFERENCE_LB) == []


@pytest.mark.parametrize(("weight_lb", "side"), [
    (420, "below"),    # 1420 with its first digit lost: the issue's own example
    (644, "below"),    # 1,420 lb is 644 kg (1 lb = 0.45359237 kg exactly): kilograms typed as pounds
    (14200, "above"),  # a digit too many
])
def test_slips_of_the_finger_are_warned_about(weight_lb, side):
    [warning] = weight_warnings(weight_lb=weight_lb, reference_weight_lb=REFERENCE_LB)
    assert f"far {side}" in warning and "1,450 lb" in warning


def test_no_weight_or_no_reference_says_nothing():
    assert weight_warnings(weight_lb=None, reference_weight_lb=REFERENCE_LB) == []
    assert weight_warnings(weight_lb=400, reference_weight_lb=None) == []


def test_a_flare_above_the_entry_contradicts_it():
    # Common practice: the flare comes at the end of the descent, below the entry height.
    [warning] = attempt_warnings(maneuver="straight_in", entry_height_ft=60, entry_kias=65, flare_height_ft=90)
    assert "above the entry height of 60 ft" in warning
    assert attempt_warnings(maneuver="straight_in", entry_height_ft=700, entry_kias=65, flare_height_ft=90) == []


def test_a_hovering_autorotation_from_height_or_speed_is_questioned():
    # Common practice: a hovering autorotation starts from a low hover with almost no airspeed.
    assert attempt_warnings(maneuver="hovering", entry_height_ft=3, entry_kias=0, flare_height_ft=None) == []
    warnings = attempt_warnings(maneuver="hovering", entry_height_ft=500, entry_kias=60, flare_height_ft=None)
    assert len(warnings) == 2
    assert attempt_warnings(maneuver="straight_in", entry_height_ft=500, entry_kias=60, flare_height_ft=None) == []
