"""Real-browser fixtures: the app served by uvicorn on a free local port, Debian's chromium driven by
Playwright, and a 1024x768 touch tablet as every test's browser context."""
import os
import shutil
import socket
import tempfile
import threading
import time
from pathlib import Path

import pytest
import uvicorn

from server.config import PROJECT_ROOT
from tests.support import PASSWORD

CHROMIUM_CANDIDATES = ("/usr/lib/chromium/chromium", "/usr/bin/chromium")
AXE_PATH = PROJECT_ROOT / ".cache" / "npm" / "node_modules" / "axe-core" / "axe.min.js"
# The machine has no network: keep Chromium from calling home at start (update checks, sync, QUIC probes).
CHROMIUM_FLAGS = ["--disable-background-networking", "--disable-component-update", "--disable-sync",
                  "--no-first-run", "--disable-quic", "--disable-gpu"]
TABLET = {"viewport": {"width": 1024, "height": 768}, "has_touch": True, "is_mobile": True,
          "device_scale_factor": 1, "locale": "en-GB"}


def _missing(what: str) -> None:
    """CI installs everything (tests/run.sh), so a missing piece fails there and skips elsewhere."""
    if os.environ.get("CI"):
        pytest.fail(f"{what} is missing; tests/run.sh installs it")
    pytest.skip(f"{what} is missing; run tests/run.sh to install it")


@pytest.fixture(scope="session")
def chromium_path() -> str:
    for candidate in CHROMIUM_CANDIDATES:
        if Path(candidate).is_file() or shutil.which(candidate):
            return candidate
    _missing("Debian's chromium")


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args, chromium_path):
    """pytest-playwright has no option for the browser's path, so the launch arguments carry it."""
    return {**browser_type_launch_args, "executable_path": chromium_path, "args": CHROMIUM_FLAGS}


@pytest.fixture(scope="session")
def live_server(app):
    """The test app served by uvicorn in a background thread, on a port the OS picked."""
    sock = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
    sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
    sock.bind(("127.0.0.1", 0))
    port = sock.getsockname()[1]
    config = uvicorn.Config(app, lifespan="off", log_level="warning", ws="none", http="h11", access_log=False)
    server = uvicorn.Server(config)
    thread = threading.Thread(target=server.run, kwargs={"sockets": [sock]}, daemon=True, name="live-server")
    thread.start()
    deadline = time.monotonic() + 15
    while not server.started:
        if not thread.is_alive() or time.monotonic() > deadline:
            raise RuntimeError("the live server did not start")
        time.sleep(0.02)
    yield f"http://127.0.0.1:{port}"
    server.should_exit = True
    thread.join(timeout=10)
    sock.close()


@pytest.fixture(scope="session")
def base_url(live_server) -> str:
    return live_server


@pytest.fixture(scope="session")
def browser_context_args(browser_context_args):
    """Every page opens on a 1024x768 touch tablet (pointer: coarse, .tap() works)."""
    return {**browser_context_args, **TABLET}


@pytest.fixture
def axe_path() -> Path:
    if not AXE_PATH.is_file():
        _missing("axe-core (npm)")
    return AXE_PATH


def sign_in(page, email: str, password: str = PASSWORD) -> None:
    """Sign in through the real form, as a person on the tablet would."""
    page.goto("/signin")
    page.get_by_label("Email").fill(email)
    page.get_by_label("Password").fill(password)
    page.get_by_role("button", name="Sign in").tap()
    page.wait_for_url("**/")


def axe_violations(page, axe_path: Path) -> list[str]:
    """Run axe-core on the page as it stands; one readable line per violation and element."""
    page.add_script_tag(path=str(axe_path))
    found = page.evaluate("""async () => {
        const result = await axe.run(document, {resultTypes: ["violations"]});
        return result.violations.map(v => ({id: v.id, help: v.help, impact: v.impact,
            nodes: v.nodes.map(n => n.target.join(" ") + ": " + n.failureSummary.replace(/\\s+/g, " "))}));
    }""")
    return [f"{v['id']} ({v['impact']}): {v['help']} at {node}" for v in found for node in v["nodes"]]


SCREENSHOTS = PROJECT_ROOT / "tests" / "browser" / "screenshots"


def screenshot(page, name: str) -> Path:
    """Save the whole page as the 1024 px tablet shows it, for a reviewer to look at without running the app.

    Kept in the repository (README: "Screenshots"); each run overwrites the file of the same name.
    """
    # The PostgreSQL pass runs beside the SQLite one (tests/run.sh): only one of them keeps the pages.
    kept = not os.environ.get("FLAREBOOK_TEST_DATABASE_URL")
    folder = SCREENSHOTS if kept else Path(tempfile.gettempdir()) / "flarebook-screenshots-postgresql"
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{name}.png"
    page.screenshot(path=str(path), full_page=True, animations="disabled")
    return path


def fits_the_width(page) -> bool:
    """Nothing runs off the right edge of the 1024 px tablet."""
    return page.evaluate("document.documentElement.scrollWidth <= window.innerWidth")


def nav_on_one_line(page) -> bool:
    """Every link of the main navigation sits on the same line as the first."""
    return page.evaluate("""() => {
        const links = [...document.querySelectorAll('.topbar nav a, .topbar .signout > *')];
        const top = links[0].getBoundingClientRect().top;
        return links.every(a => Math.abs(a.getBoundingClientRect().top - top) < 12);
    }""")


@pytest.fixture
def chief_program(app, world):
    """A one-stage syllabus made through the API, as a chief pilot's script would."""
    from fastapi.testclient import TestClient

    from server.people import service as people
    from server.people.models import Person

    with app.state.sessions() as session:
        token = people.issue_token(session, person=session.get(Person, world.chief.id))
        session.commit()
    client = TestClient(app, headers={"Authorization": f"Bearer {token}"})
    made = client.post("/api/v1/programs", json={"name": "Private syllabus (walk)", "stages": [
        {"name": "Stage one", "lessons": [{"name": "First autorotations", "requirements": [
            {"maneuver": "straight_in", "termination": "power_recovery", "attempts_needed": 2}]}]}]})
    assert made.status_code == 201, made.text
    return made.json()
