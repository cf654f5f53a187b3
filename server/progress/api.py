"""JSON API: a pilot's trends for one maneuver and termination."""
from dataclasses import asdict
from datetime import date
from typing import Literal

from fastapi import APIRouter

from server.deps import DbSession
from server.people.deps import ApiUser
from server.progress import service as progress
from server.progress.schemas import StandardRead, TrendsRead
from server.vocabulary import Maneuver, Termination

router = APIRouter(tags=["progress"])


@router.get("/people/{pilot_id}/trends", response_model=TrendsRead)
def trends(pilot_id: int, maneuver: Maneuver, termination: Termination, db: DbSession, person: ApiUser,
           as_of: date | None = None, source: Literal["all", "measured"] = "all"):
    """Trends of one kind of autorotation: the pilot, their instructors and chief pilots may read them.
    `source=measured` keeps only the figures measured from recorded tracks."""
    progress.viewable_pilot(db, viewer=person, pilot_id=pilot_id)
    result = progress.trends_for(db, pilot_id=pilot_id, maneuver=maneuver, termination=termination, as_of=as_of,
                                 source=source)
    return TrendsRead(
        pilot_id=pilot_id, maneuver=maneuver, termination=termination, as_of=result.as_of,
        attempts=result.attempts, metrics={name: asdict(metric) for name, metric in result.metrics.items()},
        trend_score=result.trend_score, state=result.state, forecast_attempts=result.forecast_attempts,
        standard=StandardRead(**asdict(result.standard)), source=source,
    )
