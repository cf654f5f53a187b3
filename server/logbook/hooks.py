"""What other areas ask to be told when sorties are signed, called in the signing transaction.

The logbook sits below currency (DEVELOPERS.md, layers), so it cannot call the readiness board's
kept state itself: currency registers its callable here when it is imported (`server/models.py`
imports it, so the app, the command line, the demo and the tests all have it). Each callable
takes the session and the sorties just signed; an amendment's signed version names its
predecessor by `supersedes_id`.
"""
from collections.abc import Callable, Sequence

from sqlalchemy.orm import Session

from server.logbook.models import Sortie

AFTER_SIGNING: list[Callable[[Session, Sequence[Sortie]], None]] = []


def sorties_signed(session: Session, sorties: Sequence[Sortie]) -> None:
    for hook in AFTER_SIGNING:
        hook(session, sorties)
