"""Which sorties count: the latest signed version of each record.

A draft never counts; a signed sortie whose amendment is still a draft keeps counting until the
amendment is signed, and then only the amendment counts (an amendment can only be made of a signed
version, so "signed and not superseded by a signed version" is exactly "the latest signed version",
and no flight is counted twice). Trends, lesson requirements, currency and the safety digest all
count by this one rule.
"""
from sqlalchemy import and_, exists
from sqlalchemy.orm import aliased

from server.logbook.models import Sortie


def counted_sorties_clause():
    """Sorties whose attempts count: signed, and not superseded by a signed newer version."""
    newer = aliased(Sortie)
    superseded_by_signed = exists().where(and_(newer.supersedes_id == Sortie.id, newer.state == "signed"))
    return and_(Sortie.state == "signed", ~superseded_by_signed)
