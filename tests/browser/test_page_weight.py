"""The sortie sheet loads light and from this server alone, as a tablet on a weak field signal needs."""
import gzip
from urllib.parse import urlsplit

import pytest

from server.config import PROJECT_ROOT
from server.logbook import service as logbook
from server.logbook.schemas import AttemptFields
from server.people.models import Person
from tests.browser.conftest import sign_in
from tests.browser.fixtures import TABLET
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
        # On the context, so the service worker's own requests (its script, what it keeps) count too.
        fresh.on("requestfinished", lambda request: requests.append(request))
        answer = sheet.goto(f"/sorties/{sortie.id}", wait_until="networkidle")
        assert answer.status == 200
        assert sheet.locator("#attempts article.attempt").count() == 6
        # The first load ends when the sheet is kept for use without signal.
        sheet.wait_for_function("() => document.documentElement.dataset.offlineReady === '1'")
        sheet.wait_for_load_state("networkidle")
        kept = sheet.evaluate("""async () => {
            const urls = [];
            for (const name of await caches.keys()) {
                for (const request of await (await caches.open(name)).keys()) urls.push(request.url);
            }
            return urls;
        }""")
        fetched = {}
        for request in requests:
            fetched.setdefault(request.url, []).append(wire_facts(request))
    finally:
        fresh.close()

    own_host = urlsplit(base_url).netloc
    assert {urlsplit(url).path for url in kept} >= {f"/sorties/{sortie.id}", "/static/app.css", "/static/app.js",
                                                     "/static/outbox.js", "/static/vendor/htmx-2.0.11.min.js"}
    assert [url for url in kept if urlsplit(url).netloc != own_host] == [], "the worker keeps files of other hosts"
    worker_script = [url for url in fetched if urlsplit(url).path == "/sw.js"]
    assert worker_script, "the worker's script was not fetched"
    # Chromium reports no size for a worker's script, and a negative one for what came from the HTTP
    # cache (nothing crossed the wire). The script counts at its gzip size, as the server sends it.
    total = sum(max(0, f["bytes"]) for url, facts in fetched.items() for f in facts if url not in worker_script)
    total += len(gzip.compress((PROJECT_ROOT / "static" / "sw.js").read_bytes()))
    assert 0 < total <= BUDGET_BYTES, f"{total} bytes over the wire, worker and kept files included: {fetched}"
    fetched = {url: facts[0] for url, facts in fetched.items() if url not in worker_script}

    elsewhere = [url for url in fetched if urlsplit(url).netloc != own_host]
    assert elsewhere == [], f"the sheet asked other hosts: {elsewhere}"
    paths = {urlsplit(url).path for url in fetched}
    assert {"/static/app.css", "/static/app.js"} <= paths and any(p.startswith("/static/vendor/htmx") for p in paths)
    assert all(f["asked_for_gzip"] and f["ok"] for f in fetched.values()), [(u, f) for u, f in fetched.items() if not (f["asked_for_gzip"] and f["ok"])]
    uncompressed = [url for url, f in fetched.items() if f["bytes"] > 1024 and f["encoding"] != "gzip"]
    assert uncompressed == [], f"sent without gzip: {uncompressed}"


def wire_facts(request) -> dict:
    """What one request cost: the body as it came over the wire (after compression) and how it came."""
    response = request.response()
    return {"bytes": request.sizes()["responseBodySize"], "encoding": response.header_value("content-encoding"),
            "asked_for_gzip": "gzip" in request.all_headers().get("accept-encoding", ""), "ok": response.ok}
