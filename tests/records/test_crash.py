"""A server killed with SIGKILL at random moments loses nothing it answered 2xx for.

Anchors: SQLite docs "Atomic Commit In SQLite" and "Write-Ahead Logging" (with synchronous=FULL a
committed transaction survives a crash); DEVELOPERS.md: the request's transaction commits before the
answer is sent, so a 2xx answer means the change is on disk.
"""
import os
import random
import signal
import socket
import sqlite3
import subprocess
import sys
import threading
import time
import uuid

import httpx
import pytest

from server.config import PROJECT_ROOT
from server.db import make_engine, make_session_factory
from server.records import audit
from tests.support import PASSWORD

ROUNDS = 10
ATTEMPT = {"maneuver": "straight_in", "termination": "touchdown", "flare_height_ft": 88, "touchdown_speed_kt": 3}


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class Launcher:
    """A process that imported the app once and forks a uvicorn server per round (forking_server.py)."""

    def __init__(self, url: str):
        env = {**os.environ, "FLAREBOOK_DATABASE_URL": url}
        self.process = subprocess.Popen(
            [sys.executable, "-m", "tests.records.forking_server"], cwd=PROJECT_ROOT, env=env, text=True,
            stdin=subprocess.PIPE, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL,
        )

    def start(self, port: int) -> int:
        self.process.stdin.write(f"{port}\n")
        self.process.stdin.flush()
        return int(self.process.stdout.readline())

    def close(self) -> None:
        self.process.stdin.close()
        self.process.wait(timeout=20)
        self.process.stdout.close()


def alive(pid: int) -> bool:
    """True while the process runs; a killed one is gone or a zombie."""
    try:
        with open(f"/proc/{pid}/stat") as stat:
            return stat.read().rsplit(")", 1)[1].split()[0] != "Z"
    except FileNotFoundError:
        return False


def kill(pid: int) -> None:
    os.kill(pid, signal.SIGKILL)
    deadline = time.monotonic() + 10
    while alive(pid):
        assert time.monotonic() < deadline, "the server outlived SIGKILL"
        time.sleep(0.01)


def wait_until_up(base: str, token: str, pid: int) -> None:
    deadline = time.monotonic() + 30
    while time.monotonic() < deadline:
        assert alive(pid), "the server stopped on its own"
        try:
            if httpx.get(f"{base}/api/v1/me", headers={"Authorization": f"Bearer {token}"}, timeout=1).status_code == 200:
                return
        except httpx.TransportError:
            time.sleep(0.05)
    raise AssertionError("the server did not start")


class Writer(threading.Thread):
    """Starts sorties, logs attempts and signs, noting everything the server answered 2xx for."""

    def __init__(self, base: str, token: str, world, done: dict):
        super().__init__(daemon=True)
        self.base, self.token, self.world, self.done = base, token, world, done
        self.error: AssertionError | None = None

    def run(self):
        headers = {"Authorization": f"Bearer {self.token}"}
        with httpx.Client(base_url=self.base, headers=headers, timeout=5) as client:
            try:
                while True:
                    self.one_sortie(client)
            except httpx.TransportError:
                return  # the server is gone
            except AssertionError as error:
                self.error = error

    def one_sortie(self, client):
        body = {"flown_at": "2026-11-23T10:00:00Z", "aircraft_id": self.world.aircraft.id,
                "pilot_id": self.world.student.id, "site_id": self.world.site.id, "oat_c": 11}
        answer = client.post("/api/v1/sorties", json=body, headers={"Idempotency-Key": str(uuid.uuid4())})
        assert answer.status_code == 201, answer.text
        sortie_id = answer.json()["id"]
        self.done["sorties"].add(sortie_id)
        for _ in range(2):
            answer = client.post(f"/api/v1/sorties/{sortie_id}/attempts", json=ATTEMPT)
            assert answer.status_code == 201, answer.text
            self.done["attempts"].add(answer.json()["id"])
        answer = client.post(f"/api/v1/sorties/{sortie_id}/sign", json={"password": PASSWORD})
        assert answer.status_code == 200, answer.text
        self.done["signed"].add(sortie_id)


def check_survivors(path, done: dict) -> None:
    connection = sqlite3.connect(path)
    try:
        assert connection.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
        sorties = {r[0] for r in connection.execute("SELECT id FROM sorties")}
        attempts = {r[0] for r in connection.execute("SELECT id FROM attempts")}
        signed = {r[0] for r in connection.execute(
            "SELECT s.id FROM sorties s JOIN signatures g ON g.sortie_id = s.id WHERE s.state = 'signed'")}
    finally:
        connection.close()
    assert done["sorties"] <= sorties
    assert done["attempts"] <= attempts
    assert done["signed"] <= signed


@pytest.mark.skipif(sys.platform == "win32", reason="SIGKILL")
def test_killing_the_server_loses_no_answered_write(file_school):
    seed = random.randrange(1 << 30)
    rng = random.Random(seed)
    done = {"sorties": set(), "attempts": set(), "signed": set()}
    school = file_school
    school.engine.dispose()
    launcher = Launcher(school.url)
    try:
        for round_number in range(ROUNDS):
            port = free_port()
            base = f"http://127.0.0.1:{port}"
            pid = launcher.start(port)
            writers = []
            try:
                wait_until_up(base, school.token, pid)
                writers = [Writer(base, school.token, school.world, done) for _ in range(3)]
                answered = len(done["attempts"])
                for w in writers:
                    w.start()
                # Kill at a random moment once writing is under way (a loaded machine starts slowly).
                deadline = time.monotonic() + 15
                while len(done["attempts"]) == answered and time.monotonic() < deadline:
                    time.sleep(0.01)
                time.sleep(rng.uniform(0.0, 0.8))
            finally:
                kill(pid)
            for w in writers:
                w.join(timeout=10)
                assert not w.is_alive() and w.error is None, w.error
            check_round(school, done, round_number, seed)
    finally:
        launcher.close()
    assert len(done["attempts"]) > 10, "too few writes were answered to test anything"


def check_round(school, done: dict, round_number: int, seed: int) -> None:
    check_survivors(school.path, done)
    engine = make_engine(school.url)
    with make_session_factory(engine)() as session:
        report = audit.verify(session)
    engine.dispose()
    assert report.ok, f"round {round_number} (seed {seed}): {report.problem}"
