"""Bad input in the browser: a visible message next to the field, no traceback, the previous result kept."""

from __future__ import annotations

import pytest
from pkapp import choose, diagram_title, idle, molality_text, open_tab, pid, sentence, shot, type_in, upload
from playwright.sync_api import expect

pytestmark = pytest.mark.app

TRACEBACK = "Traceback"


def _no_traceback(pg):
    assert TRACEBACK not in pg.content()


BAD_BRINE = [
    (pid("val", 0), "abc", "got 'abc'", "10850"),
    (pid("val", 2), "-5", "a finite number >= 0", "1295"),
    (pid("ion", 1), "Br", "'Br'", "K"),
    (pid("val", 0), "900000", "dissolved solids below 80 %", "10850"),
]


def test_bad_brine_values_are_shown_and_previous_result_kept(page):
    """Text in a number field, a negative value, an unknown ion, a brine far out of range."""
    before = molality_text(page)
    open_tab(page, "Evaporation & cooling")
    first = sentence(page)
    for selector, text, expected, good in BAD_BRINE:
        type_in(page, selector, text)
        expect(page.locator("#brine-msg")).to_contain_text(expected, timeout=15000)
        expect(page.locator("#brine-msg")).to_contain_text("previous result is kept")
        idle(page)
        assert molality_text(page) == before
        assert page.locator("#path-sentence").inner_text() == first
        expect(page.locator(selector)).to_have_value(text)  # what was typed is not lost
        _no_traceback(page)
        shot(page, f"10-bad-brine-{text}")
        type_in(page, selector, good)
        expect(page.locator("#brine-msg")).to_be_empty(timeout=15000)


def _opacity(pg, selector):
    return float(pg.evaluate(f"() => getComputedStyle(document.querySelector('{selector}')).opacity"))


def test_stale_results_are_greyed_out_while_an_input_error_shows(page):
    """Issue 17: no result computed for earlier inputs may look current next to an error."""
    open_tab(page, "Evaporation & cooling")
    sentence(page)
    assert _opacity(page, "#path-sentence") == 1.0
    type_in(page, pid("val", 0), "abc")
    expect(page.locator("#brine-msg")).to_contain_text("greyed out", timeout=15000)
    assert _opacity(page, "#path-sentence") < 0.5
    assert _opacity(page, "#brine-molal-table") < 0.5
    shot(page, "10-stale-greyed")
    type_in(page, pid("val", 0), "10850")
    expect(page.locator("#brine-msg")).to_be_empty(timeout=15000)
    idle(page)
    assert _opacity(page, "#path-sentence") == 1.0


def test_bad_density_is_shown_next_to_it(page):
    choose(page, "brine-units", "mg/L")
    expect(page.locator("#brine-molal-table")).not_to_contain_text("0.48915", timeout=15000)
    idle(page)
    before = molality_text(page)
    type_in(page, "#brine-density", "1.2x")
    expect(page.locator("#density-msg")).to_contain_text("density: got '1.2x'")
    idle(page)
    assert molality_text(page) == before
    _no_traceback(page)


def test_bad_temperature_is_shown_and_diagram_kept(page):
    page.wait_for_selector("#diagram-graph .scatterlayer .trace")
    title = diagram_title(page)
    type_in(page, "#temp-text", "warm")
    expect(page.locator("#temp-msg")).to_contain_text("temperature: got 'warm'")
    type_in(page, "#temp-text", "-40")
    expect(page.locator("#temp-msg")).to_contain_text("from 0 to 150")
    assert diagram_title(page) == title
    _no_traceback(page)


def test_bad_cooling_temperature(page):
    open_tab(page, "Evaporation & cooling")
    first = sentence(page)
    page.click("#path-process label:has-text('cooling')")
    expect(page.locator("#path-sentence")).not_to_have_text(first, timeout=30000)
    idle(page)
    cooled = page.locator("#path-sentence").inner_text()
    type_in(page, "#cool-end", "90")
    expect(page.locator("#path-msg")).to_contain_text("cooling to: got '90'")
    idle(page)
    assert page.locator("#path-sentence").inner_text() == cooled
    _no_traceback(page)


BAD_UPLOADS = [
    ("lab.csv", b"sample,Na,Br,Cl\nA,100,5,154\n", "column 'Br' holds numbers but is not a species"),
    ("lab.xlsx", b"this is not a workbook", "not a readable XLSX table"),
    ("lab.csv", b"\x00\xff\xfe\x00garbage", "not a readable CSV table"),
    ("big.csv", b"Na,Cl\n" + b"1,1\n" * (800 * 1024), "larger than the limit of 2 MB"),
    ("notes.pdf", b"%PDF-1.4", "expected a .csv or .xlsx file"),
]


def test_bad_uploads_are_shown_and_analyses_kept(page):
    """An unknown ion column, a malformed file (two kinds), an oversized file, a file of another type."""
    before = page.locator("#analyses-pick").inner_text()
    for name, data, expected in BAD_UPLOADS:
        upload(page, "analyses-upload", name, data)
        expect(page.locator("#upload-msg")).to_contain_text(expected, timeout=15000)
        assert page.locator("#analyses-pick").inner_text() == before
        _no_traceback(page)


def test_bad_session_file_keeps_inputs(page):
    type_in(page, "#brine-name", "Do not lose me")
    upload(page, "session-upload", "broken.json", b"{not json", "application/json")
    expect(page.locator("#session-msg")).to_contain_text("not valid JSON")
    upload(page, "session-upload", "other.json", b'{"hello": 1}', "application/json")
    expect(page.locator("#session-msg")).to_contain_text("not a phasekit session")
    expect(page.locator("#brine-name")).to_have_value("Do not lose me")
    _no_traceback(page)


def test_bad_pond_input(page):
    open_tab(page, "Pond train")
    expect(page.locator("#pond-summary-table")).to_contain_text("Curlew bittern ponds", timeout=30000)
    before = page.locator("#pond-summary-table").inner_text()
    type_in(page, pid("pond-temp", 1), "hot")
    expect(page.locator("#pond-msg")).to_contain_text("pond 2 (Sandpiper concentrators) temperature: got 'hot'")
    type_in(page, pid("pond-temp", 1), "30")
    type_in(page, pid("pond-value", 2), "-1")
    expect(page.locator("#pond-msg")).to_contain_text("concentration factor: got '-1'")
    idle(page)
    assert page.locator("#pond-summary-table").inner_text() == before
    _no_traceback(page)


def test_unbalanced_brine_is_not_balanced_silently(page):
    open_tab(page, "Evaporation & cooling")
    first = sentence(page)
    page.click("#balance-undo")
    expect(page.locator("#balance-state")).to_contain_text("Not balanced")
    expect(page.locator("#path-msg")).to_contain_text("not electrically neutral", timeout=15000)
    idle(page)
    assert page.locator("#path-sentence").inner_text() == first
    page.click("#balance-go")
    expect(page.locator("#balance-state")).to_contain_text("Balanced on Cl")
    expect(page.locator("#path-msg")).to_be_empty(timeout=15000)
