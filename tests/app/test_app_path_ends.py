"""The app in a real headless Chromium: why a path ended, a partial path, and solids kept out of
paths and ponds (saved in the session).

Marked ``app``; see conftest.py for the server and the browser.
"""

from __future__ import annotations

import json

import pytest
from pkapp import choose, open_tab, sentence, shot, type_in
from playwright.sync_api import expect

pytestmark = pytest.mark.app


def test_demo_ponds_keep_anhydrite_out_and_harvest_gypsum(page):
    open_tab(page, "Pond train")
    expect(page.locator("#pond-exclude")).to_have_value("anhydrite")
    table = page.locator("#pond-summary-table")
    expect(table).to_contain_text("Sandpiper concentrators", timeout=30000)
    row = table.locator("tr", has_text="Sandpiper concentrators")
    expect(row).to_contain_text("gypsum")
    expect(page.locator("#pond-harvest-table")).not_to_contain_text("anhydrite")
    expect(page.locator("#pond-summary")).to_contain_text("Kept out of every pond: anhydrite")
    shot(page, "20-ponds-gypsum")


def test_path_names_its_end_and_keeps_solids_out(page):
    open_tab(page, "Evaporation & cooling")
    first = sentence(page)
    assert "The path ends at" in first or "stops where the brine leaves" in first
    expect(page.locator("#path-events-table")).to_contain_text("point")
    type_in(page, "#path-exclude", "anhydrite")
    expect(page.locator("#path-sentence")).to_contain_text("Kept out: anhydrite", timeout=30000)
    expect(page.locator("#path-events-table")).not_to_contain_text("anhydrite")
    # the choice is kept with the session
    with page.expect_download() as dl:
        page.click("#session-save")
    saved = json.loads(open(dl.value.path(), encoding="utf-8").read())
    assert saved["path"]["exclude"] == "anhydrite" and saved["ponds_exclude"] == "anhydrite"
    type_in(page, "#path-exclude", "kryptonite")
    expect(page.locator("#path-msg")).to_contain_text("kryptonite", timeout=30000)


def test_partial_path_is_drawn_with_a_clear_sentence(page):
    open_tab(page, "Evaporation & cooling")
    first = sentence(page)
    choose(page, "brine-units", "mol/kg")
    page.click("summary:has-text('Paste a row')")
    page.fill("#brine-paste", "Mg\tCa\tCl\n2\t1\t6")
    page.click("#brine-paste-go")
    expect(page.locator("#path-sentence")).not_to_have_text(first, timeout=30000)
    expect(page.locator("#path-sentence")).to_contain_text("leaves the database's validity", timeout=30000)
    page.wait_for_selector("#path-graph .scatterlayer .trace")
    shot(page, "21-partial-path")


def test_conversion_cycle_keeps_solids_out(page):
    open_tab(page, "Conversion cycle")
    expect(page.locator("#conv-sentence")).to_contain_text("harvested hot", timeout=60000)
    type_in(page, "#conv-exclude", "sylvite")
    page.click("#conv-run")
    expect(page.locator("#conv-sentence")).to_contain_text("Kept out: sylvite", timeout=60000)
    type_in(page, "#conv-exclude", "halite")
    page.click("#conv-run")
    expect(page.locator("#conv-msg")).to_contain_text("Solids kept out", timeout=60000)
