"""Standardisation figures (DESIGN 4.9) checked against Student's t tables and scipy."""
import math
import random

import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import stats

from server.compute.standardisation import (
    AGREE,
    ENOUGH_GRADED,
    LENIENT,
    STRICT,
    GradedAttempt,
    mean_ci95,
    outcome,
    shared_cells,
    t_critical,
    tally,
)

# Two-sided 95 % critical values of Student's t (the 0.975 column) as printed in the NIST/SEMATECH
# e-Handbook of Statistical Methods, section 1.3.6.7.2 "Critical Values of the Student's t
# Distribution", to its three decimals (from memory; the same values stand in every statistics
# textbook's t table).
T_TABLE_975 = {1: 12.706, 2: 4.303, 3: 3.182, 4: 2.776, 5: 2.571, 6: 2.447, 7: 2.365, 8: 2.306, 9: 2.262,
               10: 2.228, 15: 2.131, 19: 2.093, 20: 2.086, 29: 2.045, 30: 2.042, 100: 1.984}


@pytest.mark.parametrize(("df", "printed"), sorted(T_TABLE_975.items()))
def test_critical_value_matches_the_printed_t_table(df, printed):
    """NIST/SEMATECH e-Handbook 1.3.6.7.2 (from memory), to the table's three decimals."""
    assert t_critical(df) == pytest.approx(printed, abs=0.0005)


def test_interval_of_a_small_sample_by_hand_from_the_table():
    """Five scores: mean 80, s = sqrt(62.5); the half-width with the table's t(0.975, 4) = 2.776."""
    scores = [70.0, 75.0, 80.0, 85.0, 90.0]  # invented scores, s^2 = (100+25+0+25+100)/4 = 62.5
    mean, (low, high) = mean_ci95(scores)
    half = 2.776 * math.sqrt(62.5) / math.sqrt(5)  # NIST/SEMATECH 1.3.6.7.2 (from memory)
    assert mean == 80.0
    assert low == pytest.approx(80.0 - half, abs=0.01)
    assert high == pytest.approx(80.0 + half, abs=0.01)


@given(st.lists(st.floats(min_value=0, max_value=100, allow_nan=False), min_size=2, max_size=60))
def test_interval_matches_scipy_t_interval(scores):
    """scipy.stats.t.interval with the standard error of the mean (scipy.stats.sem)."""
    mean, interval = mean_ci95(scores)
    sem = stats.sem(scores)
    assert mean == pytest.approx(sum(scores) / len(scores), abs=1e-9)
    if sem == 0 or math.isnan(sem):
        assert interval[0] == pytest.approx(mean) and interval[1] == pytest.approx(mean)
        return
    low, high = stats.t.interval(0.95, len(scores) - 1, loc=float(sum(scores) / len(scores)), scale=sem)
    assert interval[0] == pytest.approx(low, abs=1e-7)
    assert interval[1] == pytest.approx(high, abs=1e-7)


def test_interval_needs_two_scores():
    assert mean_ci95([]) == (None, None)
    assert mean_ci95([72.0]) == (72.0, None)


def test_covers_the_true_mean_about_95_times_in_100():
    """What a 95 % interval means: over many samples of a normal population it holds the mean ~95 %."""
    rng = random.Random(7)
    hits = 0
    trials = 2000
    for _ in range(trials):
        sample = [rng.gauss(75, 10) for _ in range(8)]
        _, (low, high) = mean_ci95(sample)
        hits += low <= 75 <= high
    # Binomial(2000, 0.95): sd = sqrt(2000*0.95*0.05) = 9.7; 4 sd either side.
    assert abs(hits - 1900) < 40


@pytest.mark.parametrize(("grade", "within", "score", "takeover", "expected"), [
    ("satisfactory", True, 90.0, False, AGREE),
    ("satisfactory", False, 60.0, False, LENIENT),
    ("satisfactory", True, 90.0, True, LENIENT),  # took the controls: not a satisfactory attempt
    ("unsatisfactory", True, 95.0, False, STRICT),
    ("unsatisfactory", False, 40.0, False, AGREE),
    ("unsatisfactory", False, 40.0, True, AGREE),
    (None, True, 90.0, False, None),
    ("satisfactory", False, None, False, None),  # nothing recorded to compare the grade with
])
def test_outcome_follows_the_definitions_of_issue_14(grade, within, score, takeover, expected):
    """The definitions of lenient and strict as issue 14 words them (DESIGN 4.9)."""
    assert outcome(GradedAttempt(grade=grade, within_tolerances=within, score=score, takeover=takeover)) == expected


def test_tally_counts_and_percentages():
    attempts = ([GradedAttempt("satisfactory", True, 90.0)] * 6 + [GradedAttempt("satisfactory", False, 55.0)] * 3
                + [GradedAttempt("unsatisfactory", True, 92.0)] * 1 + [GradedAttempt(None, True, 88.0)] * 2
                + [GradedAttempt("satisfactory", False, None)] * 1)
    result = tally(attempts)
    assert (result.attempts, result.graded, result.agree, result.lenient, result.strict) == (13, 10, 6, 3, 1)
    assert result.graded_no_figures == 1
    assert (result.agreement_pct, result.lenient_pct, result.strict_pct) == (60.0, 30.0, 10.0)
    assert result.scored == 12
    assert not result.enough
    assert tally([GradedAttempt("satisfactory", True, 90.0)] * ENOUGH_GRADED).enough


def test_empty_tally_has_no_percentages():
    result = tally([])
    assert result.graded == 0 and result.agreement_pct is None and result.mean_score is None


def test_shared_cells_leave_out_what_only_one_instructor_teaches():
    cells = {1: {("straight_in", "private"), ("turn_180", "private")},
             2: {("straight_in", "private"), ("hovering", "commercial")},
             3: {("turn_180", "private")}}
    assert shared_cells(cells) == {1: {("straight_in", "private"), ("turn_180", "private")},
                                   2: {("straight_in", "private")}, 3: {("turn_180", "private")}}
