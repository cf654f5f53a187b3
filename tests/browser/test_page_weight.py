"""The sortie sheet loads light and from this server alone, as a tablet on a weak field signal needs."""
from urllib.parse import urlsplit

import pytest

from server.logbook import service as logbook
from server.logbook.schemas import AttemptFields
from server.people.models import Person
from tests.browser.conftest import TABLET, sign_in
from tests.support import make_sortie

pytestmark = pytest.mark.browser

BUDGET_BYTES = 60 * 1024  # issue 2: at most 60 KB gzip-compressed for the whole first load


def test_first_load_of_a_full_sortie_sheet_is_small_and_stays_on_this_server(browser, base_url, page, world, db):
    # A busy draft: six attempts (the most the demo flies), one flagged, the add form and signing open.
    sortie = make_sortie(db, world, attempts=5, metar="METAR ZZZZ 201020Z 27012G20KT 9999 FEW030 22/10 Q1008",
                         remarks="Gusty at the far end; a long day of touchdowns.")
    logbook.add_attempt(db, actor=db.get(Person, world.instructor.id), sortie=sortie, data=AttemptFields(
        maneuver="turn_180", termination="touchdown", nr_low_pct=85, nr_high_pct=104, flare_height_ft=60,
        touchdown_speed_kt=9, takeover=True, remarks="Took the controls as rotor RPM decayed."))
    db.commit()
    sign_in(page, world.instructor.email)
    # A new context has an empty cache, so every file the sheet needs is fetched again.
    fresh = browser.new_context(base_url=base_url, storage_state=page.context.storage_state(), **TABLET)
    try:
        sheet = fresh.new_page()
        requests = []
        sheet.on("requestfinished", lambda request: requests.append(request))
        answer = sheet.goto(f"/sorties/{sortie.id}", wait_until="networkidle")
        assert answer.status == 200
        assert sheet.locator("#attempts article.attempt").count() == 6
        fetched = {request.url: wire_facts(request) for request in requests}
    finally:
        fresh.close()

    own_host = urlsplit(base_url).netloc
    elsewhere = [url for url in fetched if urlsplit(url).netloc != own_host]
    assert elsewhere == [], f"the sheet asked other hosts: {elsewhere}"
    paths = {urlsplit(url).path for url in fetched}
    assert {"/static/app.css", "/static/app.js"} <= paths and any(p.startswith("/static/vendor/htmx") for p in paths)
    assert all(f["asked_for_gzip"] and f["ok"] for f in fetched.values()), fetched
    uncompressed = [url for url, f in fetched.items() if f["bytes"] > 1024 and f["encoding"] != "gzip"]
    assert uncompressed == [], f"sent without gzip: {uncompressed}"
    total = sum(f["bytes"] for f in fetched.values())
    assert 0 < total <= BUDGET_BYTES, f"{total} bytes over the wire: {fetched}"


def wire_facts(request) -> dict:
    """What one request cost: the body as it came over the wire (after compression) and how it came."""
    response = request.response()
    return {"bytes": request.sizes()["responseBodySize"], "encoding": response.header_value("content-encoding"),
            "asked_for_gzip": "gzip" in request.all_headers().get("accept-encoding", ""), "ok": response.ok}
