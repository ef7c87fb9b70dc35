"""The dissolution-rate view: its callback without a browser, and the tab in the browser."""

from __future__ import annotations

import csv
import io
import json

import pytest
from pkapp import downloaded_text, idle, open_tab, shot, type_in
from playwright.sync_api import expect

from webapp import leach_view

pytestmark = pytest.mark.app


def _values(**changed):
    vals = {k: v for k, (_, v) in leach_view.FIELDS.items()}
    vals.update({"time": "120"}, **changed)
    return [vals[k] for k in leach_view.FIELDS]


def test_leach_callback_result_and_bad_input():
    keys = list(leach_view.FIELDS)
    out = leach_view.update_leach(1, ["water"], None, None, *_values())  # no database chosen: the embedded one
    sentence, fig, _summary, _warn, store, db_line, msg, *field_msgs = out
    assert db_line.children[1].children == store["database"] == "embedded database"
    assert sentence.startswith("98 % of the sylvite dissolves in ") and "halite" in sentence
    assert {t["name"] for t in fig["data"] if t.get("showlegend", True)} == {"sylvite", "halite"}
    assert "sylvite_dissolved_fraction" in store["tables"]["leach-history"]["columns"]
    assert msg is None and field_msgs == [None] * len(keys)
    assert leach_view.parse_ore("sylvite=0.3; halite 0.65") == {"sylvite": 0.3, "halite": 0.65}
    # fractions over 1, text, a negative size: message next to the field, previous result kept
    for key, text, expected in (("ore", "sylvite 0.5, halite 0.6", "sum to at most 1"),
                                ("ore-kg", "lots", "a number"), ("d50", "-400", "> 0")):
        out = leach_view.update_leach(1, ["water"], None, None, *_values(**{key: text}))
        assert all(o is leach_view.no_update for o in out[:6])
        msg = out[7 + keys.index(key)]
        assert msg is not None and expected in str(msg) and "previous result is kept" in str(msg)


def test_leach_tab_demo_and_bad_input(page):
    open_tab(page, "Dissolution rate")
    type_in(page, "#leach-time", "120")
    page.click("#leach-run")
    expect(page.locator("#leach-sentence")).to_contain_text("of the sylvite dissolves", timeout=60000)
    idle(page, 60000)
    page.wait_for_selector("#leach-graph .scatterlayer .trace")
    expect(page.locator("#leach-summary-table")).to_contain_text("halite")
    first = page.locator("#leach-sentence").inner_text()
    shot(page, "20-leach-demo")
    with page.expect_download() as dl:
        page.click("[id='" + json.dumps({"fmt": "csv", "table": "leach-history", "type": "export"},
                                        separators=(",", ":")) + "']")
    rows = list(csv.DictReader(io.StringIO(downloaded_text(dl.value))))
    assert rows and "sylvite_dissolved_fraction" in rows[0]
    type_in(page, "#leach-ore", "sylvite 0.5, halite 0.6")
    page.click("#leach-run")
    expect(page.locator("#leach-msg-ore")).to_contain_text("sum to at most 1", timeout=30000)
    expect(page.locator("#leach-msg-ore")).to_contain_text("previous result is kept")
    idle(page)
    assert page.locator("#leach-sentence").inner_text() == first
    assert "Traceback" not in page.content()
    shot(page, "21-leach-bad-ore")
