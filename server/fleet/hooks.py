"""What other areas ask to be told when an aircraft changes type (currency rules may name types).

Called in the same transaction as the change; currency registers its callable here when it is
imported (`server/models.py` imports it). Fleet sits below currency, so it cannot call it itself.
"""
from collections.abc import Callable

from sqlalchemy.orm import Session

from server.fleet.models import Aircraft

AFTER_AIRCRAFT_RETYPED: list[Callable[[Session, Aircraft], None]] = []


def aircraft_retyped(session: Session, aircraft: Aircraft) -> None:
    for hook in AFTER_AIRCRAFT_RETYPED:
        hook(session, aircraft)
