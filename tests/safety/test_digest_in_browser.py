"""The safety digest in a real browser: the date filter swaps the tables in place through htmx, and
the content security policy blocks nothing the page needs.

Anchor: W3C CSP Level 3 (a blocked script or style raises a `securitypolicyviolation` event and a
console error); htmx 2 documentation (hx-get, hx-target, hx-push-url).
"""
from datetime import UTC, datetime

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import sign_in, watch
from tests.safety.test_digest import FAST, LOW_RPM, flown

pytestmark = pytest.mark.browser


def test_the_chief_filters_the_digest_without_a_reload_and_nothing_is_blocked(page, db, world):
    flown(db, world, [LOW_RPM, FAST], when=datetime(2026, 11, 5, 9, tzinfo=UTC))
    flown(db, world, [FAST], when=datetime(2026, 10, 5, 9, tzinfo=UTC))
    errors = watch(page)
    sign_in(page, world.chief.email)
    page.get_by_role("link", name="Safety digest").click()
    page.wait_for_url("**/safety")
    page.evaluate("window.sameDocument = true")
    page.get_by_label("From", exact=True).fill("2026-11-01")
    page.get_by_label("To", exact=True).fill("2026-11-30")
    page.get_by_role("button", name="Show").click()
    expect(page.locator("#digest .period strong")).to_have_text("2")
    assert page.evaluate("window.sameDocument === true"), "the filter reloaded the whole page"
    page.wait_for_url("**/safety?date_from=2026-11-01&date_to=2026-11-30")  # the filtered view has its own address
    page.locator("#digest a", has_text="50.0").first.click()
    page.wait_for_url("**/safety/attempts?**")
    expect(page.locator("table.list tbody tr")).to_have_count(1)
    assert page.evaluate("window.cspViolations") == []
    assert errors == []
    # The policy is in force: an injected inline script does not run, and the browser says why.
    page.evaluate("""() => { const s = document.createElement('script');
        s.textContent = 'window.injected = true'; document.body.appendChild(s); }""")
    page.wait_for_function("window.cspViolations.length > 0")
    assert page.evaluate("window.injected") is None
    assert page.evaluate("window.cspViolations")[0].startswith("script-src")
