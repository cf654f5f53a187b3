"""Trends (DESIGN 4.5) checked against the NIST/SEMATECH e-Handbook, pandas and scipy."""

from datetime import date, timedelta

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.stats import theilslopes

from server.compute.trends import (
    AttemptSummary,
    direction,
    ewma,
    ewma_chart,
    forecast_attempts,
    proficiency_state,
    theil_sen_slope,
    trend_score,
)

# NIST/SEMATECH e-Handbook of Statistical Methods, section 6.3.2.4 "EWMA Control Charts", worked
# example: 20 observations, lambda = 0.3, EWMA_0 = target = 50, s = 2.0539, k = 3. The page's text
# (found with the search tool) confirms the set-up and the limit formula UCL/LCL = EWMA_0 ± k*s_ewma
# with s_ewma^2 = lambda/(2-lambda)*s^2; the data, the printed EWMA column and the limits 52.5884 and
# 47.4115 are from memory, and agree with public transcriptions of that page.
NIST_DATA = [52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5,
             49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1]
NIST_EWMA = [50.60, 49.52, 50.56, 50.18, 50.16, 49.21, 49.75, 49.85, 50.26, 50.33,
             50.11, 49.36, 49.52, 50.05, 49.38, 49.92, 50.73, 51.23, 51.94, 51.99]
NIST_UCL, NIST_LCL = 52.5884, 47.4115

finite = st.floats(min_value=-1e4, max_value=1e4, allow_nan=False, allow_infinity=False)


def test_ewma_matches_nist_handbook_example():
    """NIST/SEMATECH e-Handbook 6.3.2.4: the printed EWMA column, to its 2 decimals."""
    got = ewma(NIST_DATA, lam=0.3, start=50.0)
    assert got == pytest.approx(NIST_EWMA, abs=0.005 + 1e-9)


def test_ewma_chart_limits_match_nist_handbook_example():
    """NIST/SEMATECH e-Handbook 6.3.2.4: steady-state limits 52.5884/47.4115, every point inside."""
    chart = ewma_chart(NIST_DATA, lam=0.3, L=3.0, center=50.0, sigma=2.0539)
    # By t = 20 the exact limits equal the steady state to 1e-6; the page rounds sqrt(.3/1.7) to .4201.
    assert chart.ucl[-1] == pytest.approx(NIST_UCL, abs=1e-3)
    assert chart.lcl[-1] == pytest.approx(NIST_LCL, abs=1e-3)
    assert chart.ewma == pytest.approx(NIST_EWMA, abs=0.005 + 1e-9)
    assert all(lo < z < hi for z, lo, hi in zip(chart.ewma, chart.lcl, chart.ucl))


def test_ewma_chart_first_limit_is_lambda_sigma():
    """Var(EWMA_1) = lam^2 sigma^2 exactly (the recursion's first step; NIST 6.3.2.4 formula at t=1)."""
    chart = ewma_chart(NIST_DATA, lam=0.3, L=3.0, center=50.0, sigma=2.0539)
    assert chart.ucl[0] == pytest.approx(50.0 + 3.0 * 0.3 * 2.0539)
    assert chart.lcl[0] == pytest.approx(50.0 - 3.0 * 0.3 * 2.0539)
    # The limits widen towards the steady state, never past it.
    widths = [hi - lo for hi, lo in zip(chart.ucl, chart.lcl)]
    assert widths == sorted(widths)


def test_ewma_chart_limit_widths_match_pandas_weights():
    """The limit half-width is L*sigma*sqrt(sum of squared EWMA weights); weights taken from pandas ewm."""
    lam, sigma, n = 0.3, 1.7, 12
    chart = ewma_chart(list(range(n)), lam=lam, L=3.0, center=0.0, sigma=sigma)
    for t in range(1, n + 1):
        # Weight of observation i in EWMA_t: pandas' response to a unit impulse at i (start value 0).
        weights = []
        for i in range(1, t + 1):
            impulse = pd.Series([0.0] * (t + 1))
            impulse[i] = 1.0
            weights.append(impulse.ewm(alpha=lam, adjust=False).mean().iloc[-1])
        expected = 3.0 * sigma * np.sqrt(np.sum(np.square(weights)))
        assert chart.ucl[t - 1] == pytest.approx(expected, rel=1e-9)


def test_ewma_chart_defaults_to_mean_and_sample_sd():
    """Defaults: centre = mean, sigma = sample standard deviation (numpy std with ddof=1)."""
    chart = ewma_chart(NIST_DATA)
    assert chart.center == pytest.approx(np.mean(NIST_DATA))
    assert chart.sigma == pytest.approx(np.std(NIST_DATA, ddof=1))
    assert chart.ewma[0] == pytest.approx(0.3 * 52.0 + 0.7 * np.mean(NIST_DATA))


def test_ewma_default_start_is_series_mean():
    """NIST 6.3.2.4: EWMA_0 is the mean of the historical data (here, the series itself)."""
    values = [4.0, 8.0]
    assert ewma(values) == pytest.approx([0.3 * 4 + 0.7 * 6, 0.3 * 8 + 0.7 * (0.3 * 4 + 0.7 * 6)])


@settings(max_examples=200, deadline=None)
@given(st.lists(finite, min_size=1, max_size=60), st.floats(min_value=0.01, max_value=1.0))
def test_ewma_matches_pandas_ewm(values, lam):
    """pandas Series.ewm(alpha=lam, adjust=False).mean() starts from the first value."""
    expected = pd.Series(values).ewm(alpha=lam, adjust=False).mean().tolist()
    assert ewma(values, lam=lam, start=values[0]) == pytest.approx(expected, rel=1e-9, abs=1e-6)


def test_theil_sen_hand_case():
    """Median of pairwise slopes, worked by hand, and scipy.stats.theilslopes agrees.

    values 1, 3, 2, 5 at attempts 0..3; pairwise slopes:
    (0,1) 2, (0,2) 0.5, (0,3) 4/3, (1,2) -1, (1,3) 1, (2,3) 3
    sorted -1, 0.5, 1, 4/3, 2, 3 -> median (1 + 4/3) / 2 = 7/6.
    """
    assert theil_sen_slope([1, 3, 2, 5]) == pytest.approx(7 / 6)
    assert theilslopes([1, 3, 2, 5], [0, 1, 2, 3]).slope == pytest.approx(7 / 6)


def test_theil_sen_ignores_one_wild_attempt():
    """Theil-Sen's breakdown point (about 29%): one outlier does not move a clean line's slope."""
    values = [20.0 - 0.5 * i for i in range(10)]
    values[4] = 80.0
    assert theil_sen_slope(values) == pytest.approx(-0.5)


@settings(max_examples=150, deadline=None)
@given(st.integers(2, 45).flatmap(lambda n: st.lists(finite, min_size=n, max_size=n)))
def test_theil_sen_matches_scipy_over_last_20(values):
    """scipy.stats.theilslopes on the last 20 attempts (DESIGN 4.5 window)."""
    recent = values[-20:]
    expected = theilslopes(recent, np.arange(len(recent))).slope
    assert theil_sen_slope(values) == pytest.approx(expected, rel=1e-9, abs=1e-9)


def test_theil_sen_uses_only_last_20():
    """Ten early attempts rising steeply, then twenty falling: only the fall counts (DESIGN 4.5)."""
    rng = np.random.default_rng(7)
    early = list(np.arange(10) * 5.0)
    late = list(30.0 - 0.8 * np.arange(20) + rng.normal(0, 0.3, 20))
    values = early + late
    assert theil_sen_slope(values) == pytest.approx(theilslopes(late, np.arange(20)).slope)
    assert theil_sen_slope(values) != pytest.approx(theilslopes(values, np.arange(30)).slope)
    assert theil_sen_slope(values) < 0


def test_theil_sen_needs_two_values():
    """A slope needs two points (definition)."""
    assert theil_sen_slope([]) is None
    assert theil_sen_slope([3.0]) is None


@pytest.mark.parametrize(
    ("slope", "n", "lower_is_better", "expected"),
    [
        (-0.4, 8, True, "improving"),  # touchdown speed falling
        (0.4, 8, True, "degrading"),
        (0.4, 8, False, "improving"),  # score rising
        (-0.4, 8, False, "degrading"),
        (0.05, 8, True, "steady"),
        (-0.1, 8, False, "steady"),  # on the band's edge counts as steady
        (-2.0, 4, True, "too_few"),  # under 5 attempts (DESIGN 4.5)
        (None, 9, True, "too_few"),
    ],
)
def test_direction(slope, n, lower_is_better, expected):
    """DESIGN 4.5 definition: improving, steady, degrading, or too few (under 5 attempts)."""
    assert direction(slope, n, lower_is_better=lower_is_better, steady_band=0.1) == expected


def test_trend_score_hand_case():
    """EWMA (lam 0.3, from the first attempt) of per-attempt means, worked by hand.

    means: (0.4+0.6)/2 = 0.5, then 0.9 (flare missing), attempt 3 skipped, then (1.0+0.8)/2 = 0.9
    EWMA: 0.5 -> 0.3*0.9 + 0.7*0.5 = 0.62 -> 0.3*0.9 + 0.7*0.62 = 0.704 -> 70.4
    """
    assert trend_score([0.4, 0.9, None, 1.0], [0.6, None, None, 0.8]) == pytest.approx(70.4)


def test_trend_score_none_without_subscores():
    """No recorded sub-score, no trend score (DESIGN 4.5: missing values are left out, not guessed)."""
    assert trend_score([], []) is None
    assert trend_score([None, None], [None, None]) is None


subscore = st.one_of(st.none(), st.floats(min_value=0.0, max_value=1.0))


@settings(max_examples=150, deadline=None)
@given(st.lists(st.tuples(subscore, subscore), min_size=1, max_size=40))
def test_trend_score_matches_pandas(pairs):
    """pandas: row mean skipping NaN, then ewm(alpha=0.3, adjust=False, ignore_na=True), times 100."""
    frame = pd.DataFrame(pairs, columns=["touchdown", "flare"], dtype=float)
    means = frame.mean(axis=1, skipna=True)
    got = trend_score([p[0] for p in pairs], [p[1] for p in pairs])
    if means.isna().all():
        assert got is None
        return
    expected = 100.0 * means.ewm(alpha=0.3, adjust=False, ignore_na=True).mean().dropna().iloc[-1]
    assert got == pytest.approx(expected, rel=1e-9, abs=1e-9)
    assert 0.0 <= got <= 100.0


AS_OF = date(2026, 6, 30)


def _attempt(days_ago, within=True, satisfactory=True, touchdown=0.95, flare=0.9):
    return AttemptSummary(
        flown_on=AS_OF - timedelta(days=days_ago),
        within_all_tolerances=within,
        satisfactory=satisfactory,
        touchdown_subscore=touchdown,
        flare_subscore=flare,
    )


def _state(attempts, **overrides):
    rules = {"as_of": AS_OF, "consecutive_needed": 3, "threshold": 80.0, "decay_days": 60}
    return proficiency_state(attempts, **(rules | overrides))


def test_state_not_started_without_attempts():
    """DESIGN 4.5/5 status words: no attempts is 'not started'."""
    assert _state([]) == "not_started"


def test_state_at_standard_after_three_good_touchdowns():
    """Last 3 inside every tolerance and trend >= 80 (EWMA from 0.925, all means 0.925 -> 92.5)."""
    attempts = [_attempt(20, within=False, touchdown=0.5, flare=0.4)] + [_attempt(d) for d in (10, 5, 1)]
    # Trend by hand: 45 -> 0.3*92.5 + 0.7*45 = 59.25 -> 69.225 -> 76.2075: under 80 after 3 good.
    assert _state(attempts) == "practising"
    attempts.append(_attempt(0))  # 0.3*92.5 + 0.7*76.2075 = 81.095 >= 80
    assert _state(attempts) == "at_standard"


def test_state_needs_the_trend_score_too():
    """Inside tolerance but weak sub-scores (trend 60 < 80) is still practising (DESIGN 4.5)."""
    attempts = [_attempt(d, touchdown=0.6, flare=0.6) for d in (9, 6, 3, 1)]
    assert _state(attempts) == "practising"
    assert _state(attempts, threshold=55.0) == "at_standard"


def test_state_last_attempt_outside_tolerance_is_practising():
    """One attempt outside tolerance breaks the consecutive run (DESIGN 4.5)."""
    attempts = [_attempt(d) for d in (12, 9, 6, 3)] + [_attempt(1, within=False)]
    assert _state(attempts) == "practising"


def test_state_rusty_after_decay_window():
    """At standard once, no satisfactory attempt within the 60-day decay window: rusty (DESIGN 4.5)."""
    attempts = [_attempt(d) for d in (100, 95, 90, 85)]
    assert _state(attempts, as_of=AS_OF - timedelta(days=85 - 60)) == "at_standard"  # 60 days: still in
    assert _state(attempts, as_of=AS_OF - timedelta(days=85 - 61)) == "rusty"  # 61 days: out
    assert _state(attempts) == "rusty"
    # A later unsatisfactory attempt does not freshen it.
    assert _state(attempts + [_attempt(2, within=False, satisfactory=False)]) == "rusty"


def test_state_practising_when_never_at_standard_and_stale():
    """Never at standard: old attempts leave the pilot practising, not rusty (DESIGN 4.5)."""
    attempts = [_attempt(d, within=False) for d in (300, 200, 150)]
    assert _state(attempts) == "practising"


def test_state_ignores_attempts_after_as_of():
    """The as-of date sees only attempts flown by then."""
    attempts = [_attempt(d) for d in (12, 9, 6, 3)]
    assert _state(attempts, as_of=AS_OF - timedelta(days=20)) == "not_started"


@pytest.mark.parametrize(
    ("current", "slope", "threshold", "expected"),
    [
        (70.0, 2.5, 80.0, 4),  # 70 + 4 * 2.5 = 80 exactly: 4 attempts (hand)
        (70.0, 3.0, 80.0, 4),  # 10 / 3 = 3.33 -> 4 (hand)
        (85.0, 1.0, 80.0, 0),  # already there
        (80.0, None, 80.0, 0),
        (70.0, 0.0, 80.0, None),  # not improving
        (70.0, -1.0, 80.0, None),
        (None, 2.0, 80.0, None),
    ],
)
def test_forecast_attempts(current, slope, threshold, expected):
    """Linear projection at the current slope, counted in whole attempts (worked by hand)."""
    assert forecast_attempts(current, slope, threshold) == expected
