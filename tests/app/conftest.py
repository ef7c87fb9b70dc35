"""Fixtures of the browser tests: the app served on a free loopback port in a background thread,
and a headless Debian Chromium driven by Playwright."""

from __future__ import annotations

import tempfile
import threading
from pathlib import Path

import pytest
from pkapp import ARGS, CHROMIUM, free_port, wait_for, wait_ready


@pytest.fixture(scope="session")
def app_url(test_overlays):
    """The app, served on 127.0.0.1 in a thread (werkzeug), shut down after the session; its Database menu
    offers the test overlay "plus" (invented: sylvite's ln K at 25 °C + 0.2, tests/conftest.py)."""
    import logging

    from werkzeug.serving import make_server

    from webapp import database
    from webapp.app import create_app, warm_up

    logging.getLogger("werkzeug").setLevel(logging.ERROR)
    # one overlay offered in the Database menu, as 'phasekit app --overlay FILE' does; a new browser
    # still starts on the embedded database (use=False), so the other tests see the embedded numbers
    database.configure([test_overlays["plus"]], use=False)
    warm_up()
    app = create_app()
    port = free_port()
    server = make_server("127.0.0.1", port, app.server, threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    url = f"http://127.0.0.1:{port}/"
    wait_for(url)
    yield url
    server.shutdown()
    thread.join(timeout=10)


@pytest.fixture(scope="session")
def browser():
    pw_sync = pytest.importorskip("playwright.sync_api")
    if not Path(CHROMIUM).exists():
        pytest.skip("Debian's chromium is not installed")
    with pw_sync.sync_playwright() as pw:
        with tempfile.TemporaryDirectory(prefix="pk-chromium-") as profile:
            ctx = pw.chromium.launch_persistent_context(profile, executable_path=CHROMIUM, args=ARGS, headless=True,
                                                        accept_downloads=True, viewport={"width": 1400, "height": 1000})
            yield ctx
            ctx.close()


@pytest.fixture()
def page(browser, app_url):
    """A fresh page on the app, with the inputs kept in the browser cleared first (demo scenario)."""
    pg = browser.new_page()
    pg.set_default_timeout(20000)
    pg.goto(app_url + "assets/app.css")  # same origin, no app: clear the inputs kept by earlier tests
    pg.evaluate("window.localStorage.clear()")
    pg.goto(app_url)
    wait_ready(pg)
    yield pg
    pg.close()
