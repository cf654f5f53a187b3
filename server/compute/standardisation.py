"""Instructor standardisation (DESIGN 4.9): an instructor's grades against the computed outcomes.

Each graded attempt is one of three outcomes:
- agree: graded satisfactory and inside every tolerance, or graded unsatisfactory and outside one;
- lenient: graded satisfactory although not inside every tolerance (or the instructor took the controls);
- strict: graded unsatisfactory although inside every tolerance.
An attempt graded without any recorded figure cannot be compared with the figures, so it is counted
apart (`graded_no_figures`) and is not in the three. Percentages are of the compared graded attempts.
"""
import math
import statistics
from collections.abc import Hashable, Iterable, Mapping
from dataclasses import dataclass


AGREE, LENIENT, STRICT = "agree", "lenient", "strict"
OUTCOMES = (AGREE, LENIENT, STRICT)
# Below this many compared graded attempts a figure says more about chance than about the instructor.
ENOUGH_GRADED = 20
CONFIDENCE = 0.95


@dataclass(frozen=True)
class GradedAttempt:
    """What standardisation needs of one attempt."""

    grade: str | None  # "satisfactory", "unsatisfactory" or None
    within_tolerances: bool
    score: float | None  # None when no figure was recorded
    takeover: bool = False


def outcome(attempt: GradedAttempt) -> str | None:
    """agree, lenient or strict; None for an ungraded attempt or one without figures to compare."""
    if attempt.grade not in ("satisfactory", "unsatisfactory") or attempt.score is None:
        return None
    inside = attempt.within_tolerances and not attempt.takeover
    if attempt.grade == "satisfactory":
        return AGREE if inside else LENIENT
    return STRICT if inside else AGREE


def mean_ci95(values: Iterable[float]) -> tuple[float | None, tuple[float, float] | None]:
    """The mean and its two-sided 95 % Student-t interval, mean ± t(0.975, n-1) · s / √n.

    None for the mean with no values, and None for the interval with fewer than two (no spread to
    judge from). Identical values give a zero-width interval.
    """
    data = [float(v) for v in values]
    if not data:
        return None, None
    mean = statistics.fmean(data)
    if len(data) < 2:
        return mean, None
    half = t_critical(len(data) - 1) * statistics.stdev(data) / math.sqrt(len(data))
    return mean, (mean - half, mean + half)


def t_critical(degrees_of_freedom: int, confidence: float = CONFIDENCE) -> float:
    """The two-sided critical value of Student's t."""
    from scipy.stats import t as student_t  # here: scipy.stats costs every process half a second at start
    return float(student_t.ppf(0.5 + confidence / 2, degrees_of_freedom))


@dataclass(frozen=True)
class Tally:
    """The standardisation figures of one group of attempts."""

    attempts: int
    graded: int
    agree: int
    lenient: int
    strict: int
    graded_no_figures: int
    mean_score: float | None
    mean_score_ci95: tuple[float, float] | None
    scored: int

    def pct(self, count: int) -> float | None:
        return round(100 * count / self.graded, 1) if self.graded else None

    @property
    def agreement_pct(self) -> float | None:
        return self.pct(self.agree)

    @property
    def lenient_pct(self) -> float | None:
        return self.pct(self.lenient)

    @property
    def strict_pct(self) -> float | None:
        return self.pct(self.strict)

    @property
    def enough(self) -> bool:
        """At least ENOUGH_GRADED compared graded attempts: enough to judge by."""
        return self.graded >= ENOUGH_GRADED


def tally(attempts: Iterable[GradedAttempt]) -> Tally:
    """Count outcomes and average the scores of a group of attempts."""
    counts = dict.fromkeys(OUTCOMES, 0)
    total = no_figures = 0
    scores: list[float] = []
    for attempt in attempts:
        total += 1
        if attempt.score is not None:
            scores.append(attempt.score)
        kind = outcome(attempt)
        if kind is not None:
            counts[kind] += 1
        elif attempt.grade in ("satisfactory", "unsatisfactory"):
            no_figures += 1
    mean, interval = mean_ci95(scores)
    return Tally(attempts=total, graded=sum(counts.values()), agree=counts[AGREE], lenient=counts[LENIENT],
                 strict=counts[STRICT], graded_no_figures=no_figures, mean_score=mean,
                 mean_score_ci95=interval, scored=len(scores))


def shared_cells(cells_by_instructor: Mapping[Hashable, Iterable[Hashable]]) -> dict[Hashable, set]:
    """Per instructor, the cells (kind of attempt and program level) at least one other instructor also has.

    Comparing an instructor with the others only on those cells keeps a teacher of beginners from
    looking worse for teaching beginners.
    """
    holders: dict[Hashable, set] = {}
    for instructor, cells in cells_by_instructor.items():
        for cell in set(cells):
            holders.setdefault(cell, set()).add(instructor)
    return {instructor: {cell for cell in set(cells) if len(holders[cell]) > 1}
            for instructor, cells in cells_by_instructor.items()}
