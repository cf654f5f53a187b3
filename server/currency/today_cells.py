"""Today's board cells kept per database and brought up to date from the kept rows written since.

A board made afresh after a change (one signature rewrites one pilot's few rows) would otherwise turn
every kept row into a cell again: 13,474 rows at 2,000 pilots and 12 rules. Instead each process keeps
the cells it made last, per database, day and set of rules, with each row's write time
(`written_at_us`). The next board reads, in one statement, the rows written since shortly before that
read (the margin covers writers still committing then) and the count of every row with a checksum of
their write times. When the kept cells with the new rows give another count or checksum (a row removed,
a writer that committed later than the margin, a clock set back, a backup restored), or the people or
rules are not the ones the cells were made for, the cells are made afresh from every row.
"""
import bisect
import functools
import threading
from collections import OrderedDict
from collections.abc import Callable, Hashable, Sequence
from dataclasses import dataclass
from datetime import date
from weakref import WeakKeyDictionary

from sqlalchemy import bindparam, func, select
from sqlalchemy.engine import Engine
from sqlalchemy.orm import Session

from server.currency import kept
from server.currency.models import KeptStanding

# Each write time enters the checksum modulo this prime, so the sum of millions of rows fits 64 bits.
CHECKSUM_PRIME = 2_147_483_647
# A writer that wrote its rows up to this long before a board read them, and committed after, is still
# read by the next board; a later one (a long import, a writer waiting on locks) is caught by the
# checksum, and every row is read again. A signature writes its rows milliseconds before it commits.
MARGIN_US = 2_000_000
KEPT_PER_DATABASE = 8  # days and sets of rules: the whole board, one rule's column, a day asked for ahead

Key = tuple[int, int]  # (pilot id, rule id)
Make = Callable[[Sequence[tuple]], dict[Key, tuple] | None]  # fact rows -> cells by key; None: evaluate instead


@dataclass(frozen=True, slots=True)
class _Made:
    """The cells made last, with what proves them still whole."""

    people: dict  # the people they were made for
    cells: dict[Key, tuple]  # by key; a row of someone not shown has none
    ordered: list[tuple]  # the same cells, sorted
    stamps: dict[Key, int]  # every row read: its write time modulo CHECKSUM_PRIME
    checksum: int
    read_after_us: int  # the next board reads the rows written after this


_KEPT: "WeakKeyDictionary[Engine, OrderedDict[Hashable, _Made]]" = WeakKeyDictionary()
_LOCK = threading.Lock()


def cells(session: Session, *, as_of: date, rule_ids: Sequence[int], rules_key: Hashable, people: dict,
          make: Make) -> list[tuple] | None:
    """Today's cells of every kept row under these rules, sorted, made by `make` from fact rows
    (FACT_COLUMNS): only the rows written since the last board when what was made then still stands."""
    engine = session.get_bind()
    key = (as_of, rules_key)
    started = kept.written_now_us()
    with _LOCK:
        before = _KEPT.get(engine, {}).get(key)
    made = None
    if before is not None and before.people == people:
        made = _brought_up_to_date(session, before, rule_ids=rule_ids, people=people, make=make, started=started)
    if made is None:
        made = _made_afresh(session, rule_ids=rule_ids, people=people, make=make, started=started)
        if made is None:
            return None
    with _LOCK:
        kept_here = _KEPT.setdefault(engine, OrderedDict())
        kept_here[key] = made
        kept_here.move_to_end(key)
        while len(kept_here) > KEPT_PER_DATABASE:
            kept_here.popitem(last=False)
    return list(made.ordered)


def _made_afresh(session, *, rule_ids, people, make: Make, started: int) -> _Made | None:
    rows = kept.today_rows(session, rule_ids=rule_ids, with_write_times=True)
    found = make([row[:-1] for row in rows])
    if found is None:
        return None
    stamps = {(row[0], row[1]): row[-1] % CHECKSUM_PRIME for row in rows}
    return _Made(people=people, cells=found, ordered=sorted(found.values()), stamps=stamps,
                 checksum=sum(stamps.values()), read_after_us=started - MARGIN_US)


def _brought_up_to_date(session, before: _Made, *, rule_ids, people, make: Make, started: int) -> _Made | None:
    """The cells made before with the rows written since; None when the count or checksum says more moved."""
    found = session.connection().execute(_since_statement(), {"rule_ids": list(rule_ids),
                                                              "after": before.read_after_us}).all()
    count, checksum = found[0][0], int(found[0][1] or 0)
    kept_stamps, wanted = before.stamps, set(rule_ids)
    # Rows read again inside the margin, unchanged since, are already in the cells.
    rows = [row[2:] for row in found if row[2] is not None and row[3] in wanted
            and kept_stamps.get((row[2], row[3])) != row[-1] % CHECKSUM_PRIME]
    if not rows:
        if count == len(kept_stamps) and checksum == before.checksum:
            return _Made(people=people, cells=before.cells, ordered=before.ordered, stamps=kept_stamps,
                         checksum=before.checksum, read_after_us=started - MARGIN_US)
        return None
    new_cells = make([row[:-1] for row in rows])
    if new_cells is None:
        return None
    cells_now, stamps, expected = dict(before.cells), dict(kept_stamps), before.checksum
    for row in rows:
        row_key = (row[0], row[1])
        stamp = row[-1] % CHECKSUM_PRIME
        expected += stamp - stamps.get(row_key, 0)
        stamps[row_key] = stamp
        cells_now.pop(row_key, None)
        if row_key in new_cells:
            cells_now[row_key] = new_cells[row_key]
    if count != len(stamps) or checksum != expected:
        return None
    gone = [before.cells[(row[0], row[1])] for row in rows if (row[0], row[1]) in before.cells]
    ordered = _reordered(before.ordered, gone=gone, added=list(new_cells.values()), every=cells_now)
    return _Made(people=people, cells=cells_now, ordered=ordered, stamps=stamps, checksum=expected,
                 read_after_us=started - MARGIN_US)


def _reordered(ordered: list[tuple], *, gone: list[tuple], added: list[tuple], every: dict) -> list[tuple]:
    """The sorted cells with some gone and some added: each moved in place when they are few (one
    signature's), all sorted again when many are (every row rewritten)."""
    if (len(gone) + len(added)) * 16 > len(ordered):
        return sorted(every.values())
    ordered = list(ordered)
    for cell in gone:  # cells differ in their first five integers: bisect finds each one's place
        del ordered[bisect.bisect_left(ordered, cell)]
    for cell in added:
        bisect.insort(ordered, cell)
    return ordered


@functools.cache
def _since_statement():
    """Every row's count and checksum beside the rows written after `after`, in one statement (one snapshot)."""
    table = KeptStanding.__table__
    in_rules = table.c.rule_id.in_(bindparam("rule_ids", expanding=True))
    every = (select(func.count().label("n"), func.sum(table.c.written_at_us % CHECKSUM_PRIME).label("checksum"))
             .where(in_rules).subquery("every_row"))
    # The rows written since by their write time alone (the caller keeps those of its rules): with the
    # rules too, SQLite chose to read every row through the rules' index.
    return (select(every.c.n, every.c.checksum, *kept.FACT_COLUMNS, KeptStanding.written_at_us)
            .select_from(every.outerjoin(table, table.c.written_at_us > bindparam("after"))))
