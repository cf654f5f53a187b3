"""axe-core finds no accessibility violations on the progress file and the program setup page."""
import pytest

from server.people.models import Person
from server.training import programs
from server.training.program_schemas import ProgramWrite
from tests.browser.conftest import axe_violations, sign_in
from tests.progress.helpers import GOOD, POOR, fly, recently
from tests.training.test_programs import SYLLABUS

pytestmark = pytest.mark.browser


@pytest.fixture
def page(new_context):
    """axe-core is injected as a script, which the app's content security policy would rightly block."""
    return new_context(bypass_csp=True).new_page()


def test_progress_file_with_charts(page, world, db, axe_path):
    fly(db, world, [POOR, GOOD, GOOD, GOOD, GOOD | {"maneuver": "turn_180"}], start=recently())
    sign_in(page, world.student.email)
    page.goto(f"/people/{world.student.id}/progress")
    assert page.locator("figure.chart svg").count() == 2
    assert axe_violations(page, axe_path) == []


def test_program_setup_page(page, world, db, axe_path):
    program = programs.create_program(db, actor=db.get(Person, world.chief.id), data=ProgramWrite(**SYLLABUS))
    db.commit()
    sign_in(page, world.chief.email)
    page.goto(f"/programs/{program.id}")
    assert axe_violations(page, axe_path) == []
