"""Helpers for the real-browser tests (signing in, axe-core, screenshots, watching for errors); the
fixtures they run on (the live server, chromium, the tablet) are in tests/browser/fixtures.py."""
import os
import tempfile
from pathlib import Path

import pytest

from server.config import PROJECT_ROOT
from tests.support import PASSWORD


def sign_in(page, email: str, password: str = PASSWORD) -> None:
    """Sign in through the real form, as a person on the tablet would."""
    page.goto("/signin")
    page.get_by_label("Email").fill(email)
    page.get_by_label("Password").fill(password)
    page.get_by_role("button", name="Sign in").tap()
    page.wait_for_url("**/")


def watch(page) -> list[str]:
    """Script and console errors as they happen (a blocked script or style shows up here), and every
    content security policy violation in window.cspViolations."""
    errors: list[str] = []

    def on_console(msg):
        if msg.type != "error" or msg.location.get("url", "").endswith("/favicon.ico"):
            return
        if msg.text.startswith("htmx:sendAbort"):
            # htmx logs a request it aborted (hx-sync replacing it, or the page moving on mid-request)
            # as "htmx:afterRequest" then "htmx:sendAbort": nothing a person notices, so neither counts.
            if errors and errors[-1].startswith("htmx:afterRequest"):
                errors.pop()
            return
        errors.append(f"{msg.text} ({msg.location.get('url')})")

    page.on("pageerror", lambda error: errors.append(f"page error: {error}"))
    page.on("console", on_console)
    page.add_init_script("window.cspViolations = [];"
                         "document.addEventListener('securitypolicyviolation',"
                         " e => window.cspViolations.push(e.violatedDirective + ' ' + e.blockedURI));")
    return errors


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
