"""Browser fixtures: Debian's chromium driven by Playwright, and a local web server under a sub-path.

Without /usr/bin/chromium the browser tests skip locally but fail when CI is set: CI must not
silently skip them.
"""
from __future__ import annotations

import functools
import http.server
import os
import threading
from pathlib import Path

import pytest

CHROMIUM = Path("/usr/bin/chromium")
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
        "--no-first-run", "--disable-sync"]
SUB_PATH = "/intranet/fleet/"


@pytest.fixture(scope="session")
def browser():
    if not CHROMIUM.exists():
        message = f"{CHROMIUM} is missing: apt-get install chromium"
        if os.environ.get("CI"):
            pytest.fail(message)
        pytest.skip(message)
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        chromium = playwright.chromium.launch(executable_path=str(CHROMIUM), args=ARGS)
        yield chromium
        chromium.close()


class Watched:
    """A page plus every console error and uncaught exception it produced."""

    def __init__(self, page):
        self.page = page
        self.errors: list[str] = []
        page.on("console", lambda msg: self.errors.append(f"console {msg.type}: {msg.text} at {msg.location}")
                if msg.type == "error" else None)
        page.on("pageerror", lambda exc: self.errors.append(f"page error: {exc}"))
        page.on("requestfailed", self._request_failed)
        page.on("response", lambda res: self.errors.append(f"HTTP {res.status}: {res.url}")
                if res.status >= 400 else None)

    def _request_failed(self, request) -> None:
        # A request the browser cancels because the page navigated away (a favicon still loading
        # when a test clicks on) ends as net::ERR_ABORTED: not a fault of the site. Anything else is.
        if request.failure != "net::ERR_ABORTED":
            self.errors.append(f"request failed: {request.url} ({request.failure})")


@pytest.fixture
def page(browser):
    context = browser.new_context(viewport={"width": 1280, "height": 900})
    watched = Watched(context.new_page())
    yield watched
    context.close()


class SubPathHandler(http.server.SimpleHTTPRequestHandler):
    """Serves the site only under SUB_PATH, as an intranet server would; anything else is 404."""

    def translate_path(self, path):
        clean = path.split("?", 1)[0].split("#", 1)[0]
        if not clean.startswith(SUB_PATH):
            return str(Path(self.directory) / "__outside_sub_path__")
        return super().translate_path("/" + clean[len(SUB_PATH):])

    def log_message(self, format, *args):  # keep test output quiet
        pass


@pytest.fixture(scope="session")
def sub_path_url(demo_site):
    handler = functools.partial(SubPathHandler, directory=str(demo_site))
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), handler)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.server_address[1]}{SUB_PATH}"
    server.shutdown()
    server.server_close()
