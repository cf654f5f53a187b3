"""Signed records re-checked against their signatures and against the audit chain.

Records is the bottom layer and knows no area, so each kind of signed record brings its own check
(a function from a session to the problems it finds); the command line hands the list to
`audit verify`, `backup` and `restore` (server/signed_records.py holds it). A check recomputes the
canonical content of every signed version and compares it with the signature's stored hash and with
what the chain recorded when it was signed, and says what differs.
"""
from collections.abc import Callable, Iterable
from dataclasses import dataclass

from sqlalchemy.orm import Session


@dataclass(frozen=True)
class SignedProblem:
    """One signed version that does not hold, and what differs."""

    record: str  # e.g. "sortie 12"
    version: int | None
    what: str

    def __str__(self) -> str:
        version = f" version {self.version}" if self.version is not None else ""
        return f"{self.record}{version}: {self.what}"


RecordCheck = Callable[[Session], Iterable[SignedProblem]]


def check_signed(session: Session, checks: Iterable[RecordCheck]) -> list[SignedProblem]:
    """Every problem every check finds, in the order found."""
    return [problem for check in checks for problem in check(session)]


def differences(signed: dict, now: dict, *, prefix: str = "") -> list[str]:
    """Fields of a canonical record that differ between when it was signed and now, in words."""
    out = []
    for key in sorted(set(signed) | set(now)):
        if key == "attempts":
            continue
        if signed.get(key) != now.get(key):
            out.append(f"{prefix}{key} is {_shown(now.get(key))} now, {_shown(signed.get(key))} when signed")
    return out


def _shown(value) -> str:
    return "missing" if value is None else repr(value)
