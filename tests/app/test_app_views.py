"""The app in a real headless Chromium: the demo, the views, downloads and the session.

Marked ``app``; see conftest.py for the server (loopback, background thread) and the browser.
"""

from __future__ import annotations

import csv
import io
import json
import re

import pytest
from pkapp import choose, diagram_title, downloaded_text, idle, open_tab, pid, sentence, shot, type_in, upload
from playwright.sync_api import expect

pytestmark = pytest.mark.app


def test_demo_loads_with_cautions_and_first_solid(page):
    expect(page.locator("#cautions")).to_contain_text("laboratory tests")
    expect(page.locator("#cautions")).to_contain_text("Hot brines and crystallizers")
    expect(page.locator("#cautions")).to_contain_text("Pond dikes")
    expect(page.locator("#brine-name")).to_have_value("SF-01 intake seawater")
    expect(page.locator("#balance-state")).to_contain_text("Balanced on Cl")
    page.wait_for_selector("#diagram-graph .scatterlayer .trace")
    shot(page, "01-demo-diagram")
    open_tab(page, "Evaporation & cooling")
    text = sentence(page)
    assert re.search(r"comes out first, at a concentration factor of [\d.]+ \([\d.]+ % of the water evaporated\)", text)
    page.wait_for_selector("#path-events-table")
    shot(page, "02-demo-path")


def test_change_system_and_temperature(page):
    choose(page, "system", "NaCl – KCl – water")
    expect(page.locator("#diagram-graph")).to_contain_text("NaCl–KCl–H2O", timeout=30000)
    type_in(page, "#temp-text", "50")
    page.wait_for_function("() => { const g = document.querySelector('#diagram-graph .js-plotly-plot');"
                           " return g && g.layout && /50/.test(g.layout.title.text); }", timeout=30000)
    assert "NaCl–KCl–H2O" in diagram_title(page)
    # the slider follows the typed value, and the typed value follows the slider
    thumb = page.locator("#temp-slider [role=slider]")
    expect(thumb).to_have_attribute("aria-valuenow", "50")
    thumb.focus()
    page.keyboard.press("ArrowRight")
    expect(page.locator("#temp-text")).to_have_value("50.5", timeout=15000)
    page.click("#coords label:has-text('rectangular')")
    page.wait_for_function("() => { const g = document.querySelector('#diagram-graph .js-plotly-plot');"
                           " return g && g.layout && g.layout.xaxis && /g per 100 g water/.test("
                           "(g.layout.xaxis.title || {}).text || ''); }", timeout=30000)
    shot(page, "03-nacl-kcl-50c-rectangular")


def test_enter_brine_and_run_evaporation(page):
    open_tab(page, "Evaporation & cooling")
    first = sentence(page)
    # a brine typed in g/L: a halite-saturated NaCl–KCl brine
    choose(page, "brine-units", "g/L")
    type_in(page, "#brine-density", "1.20")
    page.click("summary:has-text('Paste a row')")
    page.fill("#brine-paste", "Na\tK\tCl\n105\t12\t170")
    page.click("#brine-paste-go")
    expect(page.locator("#paste-msg")).to_contain_text("3 values taken")
    expect(page.locator("#brine-molal-table")).not_to_contain_text("Mg", timeout=15000)
    expect(page.locator("#path-sentence")).not_to_have_text(first, timeout=30000)
    text = sentence(page)
    assert "halite" in text.lower() or "sylvite" in text.lower()
    shot(page, "04-typed-brine-path")


def test_cooling_path_states_temperature(page):
    open_tab(page, "Evaporation & cooling")
    sentence(page)
    choose(page, "analyses-pick", "SF-04 bittern")
    page.click("#analyses-use")
    expect(page.locator("#brine-name")).to_have_value("SF-04 bittern")
    page.click("#path-process label:has-text('cooling')")
    expect(page.locator("#path-sentence")).to_contain_text("cooling", timeout=30000)
    idle(page)
    text = page.locator("#path-sentence").inner_text()
    assert "cooling" in text.lower() or "already saturated" in text.lower() or "No solid" in text
    shot(page, "05-bittern-cooling")


def test_download_events_csv(page):
    open_tab(page, "Evaporation & cooling")
    text = sentence(page)
    solid = text.split(" comes out first")[0].strip().lower()
    with page.expect_download() as info:
        page.click("[id='" + json.dumps({"fmt": "csv", "table": "events", "type": "export"}, separators=(",", ":"))
                   + "']")
    rows = list(csv.DictReader(io.StringIO(downloaded_text(info.value))))
    assert rows and {"solid", "event", "concentration_factor", "water_removed_fraction", "temp_c"} <= set(rows[0])
    appears = [r for r in rows if r["event"] == "appears"]
    assert appears[0]["solid"] == solid
    cf = float(re.search(r"concentration factor of ([\d.]+)", text).group(1))
    assert float(appears[0]["concentration_factor"]) == pytest.approx(cf, rel=5e-3)
    with page.expect_download() as info:
        page.click("[id='" + json.dumps({"fmt": "xlsx", "table": "events", "type": "export"}, separators=(",", ":"))
                   + "']")
    with open(info.value.path(), "rb") as f:
        assert f.read(2) == b"PK"  # an XLSX is a zip file


def test_figure_download_svg(page):
    page.wait_for_selector("#diagram-graph .scatterlayer .trace")
    with page.expect_download() as info:
        page.click("[id='" + json.dumps({"fmt": "svg", "graph": "diagram-graph", "type": "figexport"},
                                        separators=(",", ":")) + "']")
    assert "<svg" in downloaded_text(info.value)[:500]


def test_session_save_and_load_round_trip(page):
    type_in(page, "#brine-name", "Test pond 7 sample")
    type_in(page, "#temp-text", "35")
    type_in(page, pid("val", 0), "11000")
    expect(page.locator("#brine-molal-table")).not_to_contain_text("0.48915", timeout=15000)
    with page.expect_download() as info:
        page.click("#session-save")
    saved = json.loads(downloaded_text(info.value))
    assert saved["format"] == "phasekit-session"
    assert saved["brine"]["name"] == "Test pond 7 sample" and saved["temp_c"] == "35"
    assert saved["brine"]["rows"][0] == {"ion": "Na", "value": "11000"}
    page.click("#session-demo")
    expect(page.locator("#brine-name")).to_have_value("SF-01 intake seawater", timeout=15000)
    expect(page.locator("#temp-text")).to_have_value("25")
    upload(page, "session-upload", "mine.json", json.dumps(saved).encode(), "application/json")
    expect(page.locator("#brine-name")).to_have_value("Test pond 7 sample", timeout=15000)
    expect(page.locator("#temp-text")).to_have_value("35")
    expect(page.locator(pid("val", 0))).to_have_value("11000")
    expect(page.locator("#session-msg")).to_contain_text("mine.json")


def test_inputs_survive_a_reload(page):
    type_in(page, "#brine-name", "Kept after reload")
    type_in(page, pid("val", 1), "450")
    page.wait_for_function("() => (localStorage.getItem('pk-inputs') || '').includes('Kept after reload')"
                           " && localStorage.getItem('pk-inputs').includes('450')")
    page.reload()
    expect(page.locator("#brine-name")).to_have_value("Kept after reload", timeout=20000)
    expect(page.locator(pid("val", 1))).to_have_value("450")
    expect(page.locator("#session-msg")).to_contain_text("restored")


def test_saturation_polytherm_and_pond_views(page):
    open_tab(page, "Saturation states")
    expect(page.locator("#sat-table-body")).to_contain_text("halite", timeout=30000)
    expect(page.locator("#sat-table-body")).to_contain_text("undersaturated")
    shot(page, "06-saturation")
    choose(page, "system", "NaCl – Na2SO4 – water")
    open_tab(page, "Solubility vs temperature")
    expect(page.locator("#poly-transitions-table")).to_contain_text("mirabilite", timeout=30000)
    expect(page.locator("#poly-transitions-table")).to_contain_text("thenardite")
    shot(page, "07-polytherm")
    open_tab(page, "Pond train")
    expect(page.locator("#pond-summary-table")).to_contain_text("Long Rill crystallizers", timeout=30000)
    expect(page.locator("#pond-harvest-table")).to_contain_text("halite")
    expect(page.locator("#pond-outflow-table")).to_contain_text("Curlew bittern ponds")
    shot(page, "08-pond-train")


def test_upload_table_of_analyses_and_pick_one(page):
    data = (b"sample,Na,K,Mg,Ca,Cl,SO4,density\n"
            b"Marsh A,30000,1100,3600,1100,54000,7600,1.07\n"
            b"Marsh B,60000,2230,7120,730,108100,11350,1.143\n")
    upload(page, "analyses-upload", "lab.csv", data)
    expect(page.locator("#upload-msg")).to_contain_text("2 analyses read")
    choose(page, "analyses-pick", "Marsh B")
    page.click("#analyses-use")
    expect(page.locator("#brine-name")).to_have_value("Marsh B")
    expect(page.locator(pid("val", 0))).to_have_value("60000")
    expect(page.locator("#brine-molal-table")).not_to_contain_text("0.48915", timeout=15000)
