"""The sortie sheet without signal, in a real browser on the tablet: attempts wait on the tablet and are
sent once when the signal returns; a refusal keeps them and says what to do."""
import re

import pytest
from playwright.sync_api import expect
from sqlalchemy import delete, func, select

from server.logbook.models import Attempt
from server.people.models import UserSession
from tests.browser.conftest import sign_in
from tests.browser.test_sortie_sheet_walk import watch_errors
from tests.support import make_sortie

pytestmark = pytest.mark.browser


def attempts_on_server(db, sortie_id: int) -> int:
    db.expire_all()
    return db.scalar(select(func.count()).select_from(Attempt).where(Attempt.sortie_id == sortie_id))


def open_for_offline_use(page, sortie_id: int) -> None:
    """Open the sheet with signal and wait until the worker controls it and the sheet is kept."""
    page.goto(f"/sorties/{sortie_id}")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")
    page.wait_for_function("() => document.documentElement.dataset.offlineReady === '1'")


def log_offline(page, flare_ft: str) -> None:
    form = page.locator("#attempt-form")
    form.locator("label.chip", has_text="Straight-in").tap()
    form.locator("label.chip", has_text="Full touchdown").tap()
    form.get_by_label("Flare begun at").fill(flare_ft)
    waiting = page.locator("#outbox-list li").count()
    form.get_by_role("button", name="Add attempt").tap()
    expect(page.locator("#outbox-list li")).to_have_count(waiting + 1)


def test_three_attempts_logged_offline_survive_a_reload_and_are_sent_once(page, world, db):
    errors = watch_errors(page)
    sortie = make_sortie(db, world, attempts=1)
    sign_in(page, world.instructor.email)
    open_for_offline_use(page, sortie.id)

    page.context.set_offline(True)
    expect(page.locator("#connection")).to_contain_text("No signal")
    for flare in ("80", "85", "90"):
        log_offline(page, flare)
    expect(page.locator("#attempt-form .save-state")).to_contain_text("waiting to send")
    expect(page.locator("#outbox-list")).to_contain_text("Waiting to send")
    expect(page.locator("#outbox-list li").nth(2)).to_contain_text("flare 90 ft")
    expect(page.locator("#attempt-form .form-title")).to_have_text("Log attempt #5")
    assert attempts_on_server(db, sortie.id) == 1

    page.reload()  # no signal: the worker serves the kept sheet, the outbox still holds the entries
    expect(page.get_by_role("heading", name="Sortie sheet")).to_be_visible()
    expect(page.locator("#attempts article.attempt")).to_have_count(1)
    expect(page.locator("#outbox-list li")).to_have_count(3)
    entries = page.evaluate("FlarebookOutbox.all()")
    assert len({entry["key"] for entry in entries}) == 3, "each entry keeps its own Idempotency-Key"

    page.context.set_offline(False)
    expect(page.locator("#attempts article.attempt")).to_have_count(4)
    expect(page.locator("#outbox")).to_be_hidden()
    assert attempts_on_server(db, sortie.id) == 4

    # Sent again by force (a lost answer, a second tablet tab): the keys make the server create nothing.
    results = page.evaluate("entries => Promise.all(entries.map(e => FlarebookOutbox.send(e, null)))", entries)
    assert [r["state"] for r in results] == ["sent"] * 3
    assert attempts_on_server(db, sortie.id) == 4
    expect(page.locator("#attempts article.attempt")).to_have_count(4)
    assert [e for e in errors if "net::ERR_INTERNET_DISCONNECTED" not in e and "Failed to load resource" not in e] == []


def test_entries_survive_an_expired_sign_in_and_are_sent_after_signing_in_again(page, world, db):
    sortie = make_sortie(db, world)
    sign_in(page, world.instructor.email)
    open_for_offline_use(page, sortie.id)
    page.context.set_offline(True)
    for flare in ("80", "85", "90"):
        log_offline(page, flare)

    db.execute(delete(UserSession))  # the sign-in ends while the tablet has no signal
    db.commit()
    page.context.set_offline(False)
    refused = page.locator("#outbox-list li.refused")
    expect(refused).to_have_count(3)
    expect(refused.first).to_contain_text("Your sign-in has ended. Sign in again")
    expect(refused.first.get_by_role("button", name="Remove from this tablet")).to_be_visible()
    expect(refused.first.get_by_role("link", name="Sign in again")).to_have_attribute("href", "/signin")
    assert attempts_on_server(db, sortie.id) == 0

    sign_in(page, world.instructor.email)
    page.goto(f"/sorties/{sortie.id}")  # loading the sheet sends what waits
    expect(page.locator("#attempts article.attempt")).to_have_count(3)
    expect(page.locator("#outbox")).to_be_hidden()
    assert attempts_on_server(db, sortie.id) == 3


def test_an_entry_for_a_sortie_signed_meanwhile_is_kept_with_what_to_do(page, world, db):
    from server.logbook import service as logbook
    from server.people.models import Person

    sortie = make_sortie(db, world, attempts=1)
    sign_in(page, world.instructor.email)
    open_for_offline_use(page, sortie.id)
    page.context.set_offline(True)
    log_offline(page, "88")
    logbook.record_instructor_signature(db, actor=db.get(Person, world.instructor.id), sortie=sortie)
    db.commit()
    page.context.set_offline(False)
    refused = page.locator("#outbox-list li.refused")
    expect(refused).to_contain_text(re.compile("signed meanwhile.*amendment"))
    assert attempts_on_server(db, sortie.id) == 1
    page.once("dialog", lambda dialog: dialog.accept())
    refused.get_by_role("button", name="Remove from this tablet").tap()
    expect(page.locator("#outbox")).to_be_hidden()
