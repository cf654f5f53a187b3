"""The signed-record check of stage checks: each one as stored against the stage_check entry the audit
chain recorded when its checker signed it with their password."""
from collections.abc import Iterator

from sqlalchemy import select
from sqlalchemy.orm import Session

from server.records.models import AuditEvent
from server.records.proof import SignedProblem, differences
from server.training.models import StageCheck

SIGNED_FIELDS = ("stage_id", "passed", "remarks")


def check_signed_stage_checks(session: Session) -> Iterator[SignedProblem]:
    """Stage checks whose stage, result, remarks or checker differ from what the chain recorded."""
    checks: dict[int, list[StageCheck]] = {}
    for check in session.scalars(select(StageCheck).order_by(StageCheck.enrolment_id, StageCheck.id)):
        checks.setdefault(check.enrolment_id, []).append(check)
    for enrolment_id, rows in checks.items():
        entries = list(session.scalars(select(AuditEvent).where(
            AuditEvent.entity == "enrolment", AuditEvent.entity_id == str(enrolment_id),
            AuditEvent.action == "stage_check").order_by(AuditEvent.seq)))
        for index, check in enumerate(rows):
            record = f"stage check {check.id} (enrolment {enrolment_id})"
            if index >= len(entries):
                yield SignedProblem(record, None, "has no stage_check entry in the audit chain")
                continue
            entry = entries[index]
            if entry.actor_id != check.checker_id:
                yield SignedProblem(record, None, f"names checker {check.checker_id}; the chain recorded "
                                                  f"{entry.actor_id} (seq {entry.seq})")
            now = {name: getattr(check, name) for name in SIGNED_FIELDS}
            signed = {name: (entry.after or {}).get(name) for name in SIGNED_FIELDS}
            for what in differences(signed, now):
                yield SignedProblem(record, None, f"changed after it was signed (chain seq {entry.seq}): {what}")
