"""The database chooser in a real headless Chromium: an overlay given at start, an uploaded overlay, a bad
upload, and the choice kept in the browser and in the session file.

The server (conftest.py) offers the test overlay "plus" of tests/conftest.py (invented: sylvite's ln K at
25 °C raised by 0.2); "minus" (lowered by 0.2) and "unknown" (a solid that does not exist) are uploaded. Raising ln K by 0.2 lowers sylvite's saturation index by 0.2 / ln 10 = 0.087 at 25 °C and
leaves every other solid's index as it is.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest
from pkapp import choose, downloaded_text, idle, molality_text, open_tab, shot, upload
from playwright.sync_api import expect

pytestmark = pytest.mark.app

PLUS = "embedded database + overlay test sylvite +0.2"
MINUS = "embedded database + overlay test sylvite -0.2"
SHIFT = 0.2 / math.log(10)


def _si(pg, solid: str) -> float:
    """The saturation index of ``solid`` as shown in the saturation table."""
    text = pg.evaluate("""(solid) => {
        const t = document.querySelector('#sat-table-body');
        const k = [...t.querySelectorAll('thead th')].map(th => th.innerText.trim()).indexOf('SI');
        const row = [...t.querySelectorAll('tbody tr')].find(r => r.cells[0].innerText.trim() === solid);
        return row.cells[k].innerText; }""", solid)
    return float(text)


def _saturation_with(pg, label: str) -> None:
    expect(pg.locator("#sat-db")).to_have_text(f"Database: {label}", timeout=30000)
    idle(pg)


def _choose_embedded(pg) -> None:
    pg.click("#db-choice")
    pg.locator(".dash-dropdown-option").filter(has_text=re.compile(r"^\s*embedded database\s*$")).click()


def test_overlay_given_at_start_changes_every_view_and_is_named(page):
    open_tab(page, "Saturation states")
    _saturation_with(page, "embedded database")
    sylvite, halite = _si(page, "sylvite"), _si(page, "halite")
    choose(page, "db-choice", "overlay test sylvite +0.2")
    _saturation_with(page, PLUS)
    assert _si(page, "sylvite") == pytest.approx(sylvite - SHIFT, abs=0.011)  # shown with 3 significant digits
    assert _si(page, "halite") == halite
    shot(page, "20-database-overlay-saturation")
    for tab, box in (("Phase diagram", "#diagram-db"), ("Evaporation & cooling", "#path-db"),
                     ("Solubility vs temperature", "#poly-db"), ("Pond train", "#pond-db")):
        open_tab(page, tab)
        expect(page.locator(box)).to_have_text(f"Database: {PLUS}", timeout=30000)
    open_tab(page, "Dissolution rate")
    page.click("#leach-pure-water label")
    page.click("#leach-run")
    expect(page.locator("#leach-db")).to_have_text(f"Database: {PLUS}", timeout=30000)
    _choose_embedded(page)
    open_tab(page, "Saturation states")
    _saturation_with(page, "embedded database")
    assert _si(page, "sylvite") == sylvite


@pytest.mark.parametrize("name, data, expected", [
    ("broken.toml", b"[overlay\nname = 'x'\n", "expected a valid TOML overlay file"),
    ("unknown.toml", "unknown", "got 'unobtainite'"),
    ("notes.toml", b"\xff\xfe\x00binary", "not a text file"),
])
def test_bad_overlay_upload_is_explained_and_nothing_is_lost(page, test_overlays, name, data, expected):
    if isinstance(data, str):
        data = Path(test_overlays[data]).read_bytes()
    open_tab(page, "Saturation states")
    _saturation_with(page, "embedded database")
    before = molality_text(page)
    sylvite = _si(page, "sylvite")
    upload(page, "db-upload-file", name, data, "application/toml")
    msg = page.locator("#db-msg")
    expect(msg).to_contain_text(name, timeout=15000)
    expect(msg).to_contain_text(expected)
    expect(msg).to_contain_text("unchanged")
    idle(page)
    assert "Traceback" not in page.content()
    assert molality_text(page) == before  # the brine table is still there, as it was
    expect(page.locator("#brine-name")).to_have_value("SF-01 intake seawater")
    expect(page.locator("#sat-db")).to_have_text("Database: embedded database")
    assert _si(page, "sylvite") == sylvite
    shot(page, f"21-bad-overlay-{name}")


def test_uploaded_overlay_is_used_kept_in_the_browser_and_in_the_session(page, test_overlays):
    open_tab(page, "Saturation states")
    _saturation_with(page, "embedded database")
    sylvite = _si(page, "sylvite")
    upload(page, "db-upload-file", "lab_minus.toml", Path(test_overlays["minus"]).read_bytes(), "application/toml")
    expect(page.locator("#db-msg")).to_contain_text("test sylvite -0.2", timeout=15000)
    _saturation_with(page, MINUS)
    assert _si(page, "sylvite") == pytest.approx(sylvite + SHIFT, abs=0.011)
    # the session file keeps the choice and the overlay's text
    with page.expect_download() as info:
        page.click("#session-save")
    saved = json.loads(downloaded_text(info.value))
    assert saved["database"]["choice"] == "upload"
    assert 'name = "test sylvite -0.2"' in saved["database"]["upload"]["text"]
    # and so does the browser: after a reload the same database is in use
    page.wait_for_function("() => (localStorage.getItem('pk-inputs') || '').includes('test sylvite -0.2')")
    page.reload()
    expect(page.locator("#session-msg")).to_contain_text("restored", timeout=20000)
    open_tab(page, "Saturation states")
    _saturation_with(page, MINUS)
    # the demo scenario goes back to the embedded database; loading the session file brings the overlay back
    page.click("#session-demo")
    _saturation_with(page, "embedded database")
    upload(page, "session-upload", "mine.json", json.dumps(saved).encode(), "application/json")
    expect(page.locator("#session-msg")).to_contain_text("mine.json", timeout=15000)
    _saturation_with(page, MINUS)
    assert _si(page, "sylvite") == pytest.approx(sylvite + SHIFT, abs=0.011)


# ------------------------------------------------------------------------------ without a browser
def test_session_file_keeps_or_explains_the_database_choice(app_url, test_overlays):
    from webapp import database
    from webapp.session import normalise

    text = Path(test_overlays["minus"]).read_text()
    inputs, notes = normalise({"database": {"choice": "upload", "upload": {"filename": "lab.toml", "text": text}}})
    assert inputs["database"]["choice"] == "upload" and inputs["database"]["upload"]["name"] == "test sylvite -0.2"
    assert notes == ["no brine in the file: the demo brine is shown"]
    for saved, expected in (({"choice": "overlay:not given at start"}, "is not available"),
                            ({"choice": "upload", "upload": {"filename": "lab.toml", "text": "[overlay\n"}},
                             "'lab.toml'"),
                            ({"choice": "upload"}, "without its text")):
        inputs, notes = normalise({"brine": {"rows": []}, "database": saved})
        assert inputs["database"] == {"choice": database.EMBEDDED, "upload": None}
        assert any(expected in n for n in notes), (saved, notes)
    # the overlay given at start (conftest.py) is offered, and a saved choice of it is kept
    inputs, notes = normalise({"brine": {"rows": []}, "database": {"choice": "overlay:test sylvite +0.2"}})
    assert inputs["database"]["choice"] == "overlay:test sylvite +0.2" and notes == []


def test_diagram_cache_is_kept_apart_per_database(app_url):
    from webapp import database, diagram_source

    plus = {"choice": "overlay:test sylvite +0.2"}
    database.model_for(plus)
    base = diagram_source.diagram("NaCl-KCl", 25.0, database.key_of(None))
    over = diagram_source.diagram("NaCl-KCl", 25.0, database.key_of(plus))
    k = [d.invariant_points["KCl_molality"].iloc[0] for d in (base, over)]
    assert k[1] > k[0]  # the eutonic brine holds more KCl when sylvite is more soluble
    assert database.key_of({"choice": "upload", "upload": {"text": "a"}}) != \
        database.key_of({"choice": "upload", "upload": {"text": "b"}})
