"""Security headers and the content security policy, as a browser would receive them.

Anchor: OWASP ASVS 5.0 level 2, chapter V3 (web front-end security: CSP, nosniff, referrer policy,
framing) and V14 (data protection: no caching of sensitive answers); the CSP grammar of W3C CSP Level 3.
"""
import json
from html.parser import HTMLParser
from urllib.parse import urlsplit

import pytest

from tests.support import make_sortie


def policy(answer) -> dict[str, str]:
    """The CSP header as directive -> value."""
    directives = {}
    for part in answer.headers["content-security-policy"].split(";"):
        name, _, value = part.strip().partition(" ")
        directives[name] = value
    return directives


class PageParts(HTMLParser):
    """The scripts, styles and htmx config of a page."""

    def __init__(self):
        super().__init__()
        self.scripts: list[dict] = []
        self.inline_styles = 0
        self.style_attributes = 0
        self.event_handlers: list[str] = []
        self.htmx_config: dict | None = None
        self._in_script = False

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "script":
            self.scripts.append(attrs)
        if tag == "style":
            self.inline_styles += 1
        if "style" in attrs:
            self.style_attributes += 1
        self.event_handlers += [name for name in attrs if name.startswith("on")]
        if tag == "meta" and attrs.get("name") == "htmx-config":
            self.htmx_config = json.loads(attrs["content"])


def parts(html: str) -> PageParts:
    parser = PageParts()
    parser.feed(html)
    return parser


@pytest.fixture
def sheet_url(db, world):
    sortie = make_sortie(db, world, attempts=2)
    return f"/sorties/{sortie.id}"


def test_every_page_sends_a_strict_policy_with_a_fresh_nonce(chief_client, sheet_url):
    nonces = set()
    for url in ("/", "/sorties", "/sorties/new", sheet_url, "/signin"):
        answer = chief_client.get(url)
        assert answer.status_code == 200, url
        csp = policy(answer)
        assert csp["object-src"] == "'none'" and csp["base-uri"] == "'none'"
        assert csp["frame-ancestors"] == "'none'"
        assert "'unsafe-inline'" not in csp["script-src"] and "'unsafe-eval'" not in csp["script-src"]
        assert "'unsafe-inline'" not in csp["style-src"]
        nonce = csp["script-src"].split("'nonce-")[1].split("'")[0]
        assert len(nonce) >= 22  # at least 128 bits, base64
        nonces.add(nonce)
        page = parts(answer.text)
        # Every script is a file from /static carrying this answer's nonce: nothing inline.
        assert page.scripts, url
        for script in page.scripts:
            src = urlsplit(script.get("src", ""))
            assert src.netloc in ("", "testserver") and src.path.startswith("/static/"), (url, script)
            assert script.get("nonce") == nonce, (url, script)
        assert page.inline_styles == 0 and page.style_attributes == 0, url
        assert page.event_handlers == [], url
    assert len(nonces) == 5, "each answer gets its own nonce"


def test_htmx_may_not_evaluate_code_or_inject_styles(chief_client):
    # htmx 2 documentation, configuration: allowEval, allowScriptTags, includeIndicatorStyles.
    config = parts(chief_client.get("/").text).htmx_config
    assert config["allowEval"] is False
    assert config["allowScriptTags"] is False
    assert config["includeIndicatorStyles"] is False


def test_fragments_carry_no_inline_script_or_style(instructor_client, sheet_url, db):
    sheet = instructor_client.get(sheet_url)
    attempt_id = sheet.text.split('id="attempt-')[1].split('"')[0]
    for url in (f"/attempts/{attempt_id}", f"/attempts/{attempt_id}/edit"):
        answer = instructor_client.get(url, headers={"HX-Request": "true"})
        assert answer.status_code == 200
        page = parts(answer.text)
        assert page.scripts == [] and page.inline_styles == 0 and page.style_attributes == 0
        assert answer.headers["cache-control"] == "no-store"


@pytest.mark.parametrize("url", ["/signin", "/api/v1/me", "/static/app.css", "/no-such-page"])
def test_common_headers_on_every_kind_of_answer(anonymous, url):
    answer = anonymous.get(url)
    assert answer.headers["x-content-type-options"] == "nosniff"
    assert answer.headers["referrer-policy"] == "no-referrer"
    assert answer.headers["x-frame-options"] == "DENY"
    assert "frame-ancestors 'none'" in answer.headers["content-security-policy"]


def test_records_and_api_answers_are_not_cached(instructor_client, sheet_url):
    sortie_id = sheet_url.rsplit("/", 1)[1]
    for url in (sheet_url, f"/api/v1/sorties/{sortie_id}", "/api/v1/me", "/sorties"):
        assert instructor_client.get(url).headers["cache-control"] == "no-store", url


def test_static_files_may_be_cached(anonymous):
    assert anonymous.get("/static/app.css").headers.get("cache-control") != "no-store"


def test_strict_transport_security_only_over_https(app):
    from fastapi.testclient import TestClient

    plain = TestClient(app, base_url="http://testserver").get("/signin")
    secure = TestClient(app, base_url="https://testserver").get("/signin")
    assert "strict-transport-security" not in plain.headers
    assert int(secure.headers["strict-transport-security"].split("max-age=")[1]) >= 31536000


def test_api_documentation_allows_only_its_own_start_up_script(anonymous):
    import base64
    import hashlib
    import re

    answer = anonymous.get("/docs")
    assert answer.status_code == 200
    csp = policy(answer)
    inline = re.findall(r"<script>(.*?)</script>", answer.text, re.DOTALL)
    assert inline, "FastAPI's documentation page starts Swagger UI with an inline script"
    for script in inline:
        digest = base64.b64encode(hashlib.sha256(script.encode()).digest()).decode()
        assert f"'sha256-{digest}'" in csp["script-src"]
    assert "'unsafe-inline'" not in csp["script-src"]
    assert csp["object-src"] == "'none'" and csp["frame-ancestors"] == "'none'"
