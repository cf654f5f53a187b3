"""Tampering with the audit chain shows, and `flarebook audit verify` names the first bad entry.

Anchors: the hash chain of DESIGN section 3 ("chained by hash so that tampering shows"); FAA AC 120-78A
(electronic records must show any change after signing); the head kept outside the database so that
cutting entries off the end shows too.
"""
import json
import shutil
import sqlite3

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from server.cli import main
from server.db import make_engine, make_session_factory
from server.records import audit
from tests.records.conftest import FileSchool, drop_audit_guards

FIELDS = ("at", "actor_id", "action", "entity", "entity_id", "before", "after", "reason", "prev_hash", "hash")


@pytest.fixture(scope="module")
def chain_file(migrated_file, tmp_path_factory):
    """A school with a signed sortie: people, a sortie, attempts, a signature, a token; and its head."""
    path = tmp_path_factory.mktemp("chain") / "chain.sqlite3"
    shutil.copy(migrated_file, path)
    school = FileSchool(path)
    school.signed_sortie(attempts=3)
    with school.sessions() as session:
        head = audit.current_head(session)
    school.engine.dispose()
    assert head.seq >= 10
    return path, head


def _changed(field: str, value):
    """A different value of the same kind, as someone editing the table by hand would write."""
    if field == "actor_id":
        return 999 if value != 999 else 998
    if field in ("before", "after"):
        data = (json.loads(value) if value else None) or {}
        return json.dumps({**data, "touchdown_speed_kt": 99})
    if field in ("hash", "prev_hash"):
        return ("1" if value[0] != "1" else "2") + value[1:]
    if field == "at":
        return value.replace("2026", "2025", 1) if "2026" in value else value[:-1] + ("1" if value[-1] != "1" else "2")
    return (value or "") + "x"


def tamper(path, kind: str, a: int, b: int, field: str) -> int:
    """Change the stored chain by hand; return the seq of the first entry that no longer holds."""
    connection = sqlite3.connect(path)
    with connection:
        drop_audit_guards(connection)
        if kind == "edit":
            (value,) = connection.execute(f"SELECT {field} FROM audit_events WHERE seq = ?", (a,)).fetchone()
            connection.execute(f"UPDATE audit_events SET {field} = ? WHERE seq = ?", (_changed(field, value), a))
            first_bad = a
        elif kind == "delete":
            connection.execute("DELETE FROM audit_events WHERE seq = ?", (a,))
            first_bad = a
        elif kind == "reorder":
            low, high = min(a, b), max(a, b)
            connection.execute("UPDATE audit_events SET seq = -1 WHERE seq = ?", (low,))
            connection.execute("UPDATE audit_events SET seq = ? WHERE seq = ?", (low, high))
            connection.execute("UPDATE audit_events SET seq = ? WHERE seq = -1", (high,))
            first_bad = low
        else:  # truncate: keep entries 1..a
            connection.execute("DELETE FROM audit_events WHERE seq > ?", (a,))
            first_bad = a + 1
    connection.close()
    return first_bad


def verify_file(path, head):
    engine = make_engine(f"sqlite:///{path}")
    try:
        with make_session_factory(engine)() as session:
            return audit.verify(session, head)
    finally:
        engine.dispose()


def test_the_untouched_chain_verifies_against_its_head(chain_file):
    path, head = chain_file
    report = verify_file(path, head)
    assert report.ok and report.entries == head.seq and report.head == head


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_any_edit_delete_reorder_or_truncation_is_named(chain_file, tmp_path, data):
    path, head = chain_file
    kind = data.draw(st.sampled_from(["edit", "delete", "reorder", "truncate"]), label="kind")
    if kind == "reorder":
        a = data.draw(st.integers(1, head.seq - 1), label="a")
        b = data.draw(st.integers(a + 1, head.seq), label="b")
    elif kind == "truncate":
        a, b = data.draw(st.integers(0, head.seq - 1), label="keep"), 0
    else:
        a, b = data.draw(st.integers(1, head.seq), label="seq"), 0
    field = data.draw(st.sampled_from(FIELDS), label="field") if kind == "edit" else ""
    copy = tmp_path / f"tampered-{kind}-{a}-{b}-{field}.sqlite3"
    shutil.copy(path, copy)
    first_bad = tamper(copy, kind, a, b, field)
    report = verify_file(copy, head)
    assert report.problem is not None, f"{kind} {a} {b} {field} went unnoticed"
    assert report.problem.seq == first_bad
    copy.unlink()


def test_cutting_entries_off_the_end_shows_only_against_the_exported_head(chain_file, tmp_path):
    path, head = chain_file
    copy = tmp_path / "cut.sqlite3"
    shutil.copy(path, copy)
    tamper(copy, "truncate", head.seq - 2, 0, "")
    # The shortened chain is consistent in itself: this is why the head is kept outside the database.
    assert verify_file(copy, None).ok
    problem = verify_file(copy, head).problem
    assert problem.seq == head.seq - 1 and "exported head" in problem.what


def test_a_chain_rewritten_from_an_entry_on_shows_against_the_exported_head(chain_file, tmp_path):
    """Someone who edits entry 4 and recomputes every hash after it leaves a self-consistent chain."""
    path, head = chain_file
    copy = tmp_path / "rewritten.sqlite3"
    shutil.copy(path, copy)
    with sqlite3.connect(copy) as connection:
        drop_audit_guards(connection)
    engine = make_engine(f"sqlite:///{copy}")
    with make_session_factory(engine)() as session:
        rows = session.scalars(audit.select(audit.AuditEvent).order_by(audit.AuditEvent.seq)).all()
        previous = rows[2].hash
        for row in rows[3:]:
            if row.seq == 4:
                row.reason = "quietly changed"
            row.prev_hash = previous
            row.hash = audit.row_hash(row)
            previous = row.hash
        session.commit()
    engine.dispose()
    assert verify_file(copy, None).ok
    problem = verify_file(copy, head).problem
    assert problem.seq == head.seq and "exported head" in problem.what


def test_the_command_line_names_the_first_bad_entry_and_exits_non_zero(chain_file, tmp_path, use_database, capsys):
    path, head = chain_file
    copy = tmp_path / "cli.sqlite3"
    shutil.copy(path, copy)
    use_database(f"sqlite:///{copy}")
    head_file = tmp_path / "head.json"
    assert main(["audit", "head", "--output", str(head_file)]) == 0
    assert json.loads(head_file.read_text()) == {"seq": head.seq, "hash": head.hash}
    assert main(["audit", "verify", "--head", str(head_file)]) == 0
    assert f"{head.seq} entries" in capsys.readouterr().out

    tamper(copy, "edit", 5, 0, "after")
    assert main(["audit", "verify"]) == 1
    err = capsys.readouterr().err
    assert err.startswith("flarebook: ") and "audit entry seq 5" in err and "does not match its hash" in err
    assert len(err.strip().splitlines()) == 1

    shutil.copy(path, copy)
    tamper(copy, "truncate", 6, 0, "")
    # Without the head the walk itself holds, but the signature whose sign entry was cut off shows.
    assert main(["audit", "verify"]) == 1
    assert "has no sign entry in the audit chain" in capsys.readouterr().err
    assert main(["audit", "verify", "--head", str(head_file)]) == 1
    assert "audit entry seq 7" in capsys.readouterr().err


def test_a_head_file_that_is_not_one_is_refused(tmp_path, chain_file, use_database, capsys):
    path, _ = chain_file
    use_database(f"sqlite:///{path}")
    bogus = tmp_path / "bogus.json"
    bogus.write_text("not json")
    assert main(["audit", "verify", "--head", str(bogus)]) == 1
    assert "not an exported audit head" in capsys.readouterr().err
