"""The benchmark scripts' own logic: reading wrk's report, and refusing figures from a busy machine."""
import re
import sys

import pytest

from tests.benchmarks import machine
from tests.benchmarks.bench_attempt_load import parse_wrk

# A report as wrk 4.1 (Debian package) prints it with --latency; the thread statistics' "+/- Stdev"
# column of the latency row ends in 50% (71.50%), as it did when the benchmark crashed.
WRK_REPORT = """\
Running 10s test @ http://127.0.0.1:41057
  2 threads and 32 connections
  Thread Stats   Avg      Stdev     Max   +/- Stdev
    Latency   412.35ms   88.17ms 596.02ms   71.50%
    Req/Sec    40.12     18.33    90.00     66.67%
  Latency Distribution
     50%  401.27ms
     75%  455.10ms
     90%  520.44ms
     99%  596.02ms
  771 requests in 10.02s, 612.04KB read
  Non-2xx or 3xx responses: 3
Requests/sec:     76.95
Transfer/sec:     61.08KB
"""


def old_parse_p50(output: str) -> float:
    """The pattern the benchmark used before: any "50%" in the report."""
    text = re.search(r"50%\s+(\S+)", output).group(1)
    value, unit = re.match(r"([\d.]+)(us|ms|s)", text).groups()
    return float(value)


def test_the_old_pattern_takes_the_stdev_column_for_the_median():
    with pytest.raises(AttributeError):  # it read "Req/Sec" as a latency
        old_parse_p50(WRK_REPORT)


def test_percentiles_come_from_the_latency_distribution_only():
    figures = parse_wrk(WRK_REPORT)
    assert figures["p50_ms"] == pytest.approx(401.27)
    assert figures["p99_ms"] == pytest.approx(596.02)
    assert figures["rps"] == pytest.approx(76.95)
    assert figures["requests"] == 771
    assert figures["non_2xx"] == 3
    assert figures["socket_errors"] == 0


def test_units_of_the_distribution_are_converted_to_milliseconds():
    report = WRK_REPORT.replace("401.27ms", "850.00us").replace("596.02ms\n  771", "1.20s\n  771")
    figures = parse_wrk(report)
    assert figures["p50_ms"] == pytest.approx(0.85)
    assert figures["p99_ms"] == pytest.approx(1200.0)


def test_a_report_without_the_distribution_is_refused_not_misread():
    without = WRK_REPORT.split("  Latency Distribution")[0] + "Requests/sec:     76.95\n"
    with pytest.raises(ValueError, match="latency distribution"):
        parse_wrk(without)


@pytest.fixture
def printed(capsys, monkeypatch):
    """What the test prints; sys.stdout as it was is put back afterwards (check may wrap it)."""
    monkeypatch.setattr(sys, "stdout", sys.stdout)
    return lambda: capsys.readouterr().out


def test_a_busy_machine_gives_no_figures_without_busy_ok(printed):
    busy = machine.Machine(load=(1.3, 0.9, 0.5), cores=2)
    with pytest.raises(SystemExit, match="busy"):
        machine.check(False, busy)
    assert "load average 1.30 0.90 0.50 on 2 cores" in printed()


def test_the_limit_scales_with_the_cores():
    assert not machine.Machine(load=(1.0, 1.0, 1.0), cores=2).busy
    assert machine.Machine(load=(1.01, 0.0, 0.0), cores=2).busy
    assert not machine.Machine(load=(1.9, 0.0, 0.0), cores=4).busy


def test_with_busy_ok_every_line_printed_after_is_marked(printed):
    machine.check(True, machine.Machine(load=(3.5, 2.0, 1.0), cores=2))
    print("attempt  300 req/s")
    print("  attempts / bare = 0.71", end="")
    print("; errors: 0")
    lines = printed().splitlines()
    assert lines[0].startswith("load average 3.50")
    assert lines[1:] == [machine.BUSY_MARK + "attempt  300 req/s",
                         machine.BUSY_MARK + "  attempts / bare = 0.71; errors: 0"]


def test_an_idle_machine_prints_figures_unmarked(printed):
    machine.check(False, machine.Machine(load=(0.4, 0.3, 0.2), cores=2))
    print("bare  500 req/s")
    assert printed().splitlines()[1] == "bare  500 req/s"


def test_distribution_lines_with_trailing_spaces_are_read():
    """wrk pads some lines; the smoke run on a busy machine met a report the first fix could not read."""
    padded = WRK_REPORT.replace("401.27ms\n", "401.27ms  \n").replace("596.02ms\n  771", "596.02ms \n  771")
    figures = parse_wrk(padded)
    assert (figures["p50_ms"], figures["p99_ms"]) == (pytest.approx(401.27), pytest.approx(596.02))
