"""Real-browser fixtures for every test that drives a page: the app served by uvicorn on a free local
port, Debian's chromium driven by Playwright, and a 1024x768 touch tablet as every test's browser context.

tests/conftest.py imports them, so page tests in any area's folder have them without importing them;
tests/browser/conftest.py keeps the helpers those tests call.
"""
import os
import shutil
import socket
import threading
import time
from pathlib import Path

import pytest
import uvicorn

from server.config import PROJECT_ROOT

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
