"""Helpers of the browser tests: selectors of the app's fields and small actions."""

from __future__ import annotations

import socket
import time
import urllib.request
from pathlib import Path

from playwright.sync_api import expect

CHROMIUM = "/usr/bin/chromium"
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
        "--no-first-run"]
ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts" / "app"


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def wait_for(url: str, timeout: float = 60.0) -> None:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        try:
            with urllib.request.urlopen(url, timeout=2) as r:
                if r.status == 200:
                    return
        except OSError:
            time.sleep(0.1)
    raise RuntimeError(f"the app did not answer at {url}")


def wait_ready(pg) -> None:
    """Until the demo brine's path sentence is shown."""
    pg.wait_for_selector("#brine-molal-table", timeout=30000)


def shot(pg, name: str) -> Path:
    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    path = ARTIFACTS / f"{name}.png"
    pg.screenshot(path=str(path), full_page=True)
    return path


def pid(kind: str, row: int) -> str:
    """CSS selector of a cell of the brine table (kind "ion" or "val") or of the pond table
    ("pond-name", "pond-temp", "pond-value"), by row (0 = first)."""
    table = "#pond-rows" if kind.startswith("pond") else "#brine-rows"
    cls = {"ion": "pk-cell-ion", "val": "pk-cell-val", "pond-name": "pk-cell-name", "pond-temp": "pk-cell-temp",
           "pond-value": "pk-cell-value"}[kind]
    return f"{table} > .pk-row:nth-child({row + 1}) input.{cls}, {table} > .pk-row:nth-child({row + 1}) .{cls} input"


def type_in(pg, selector: str, text: str) -> None:
    """Replace a field's text and commit it (the app's fields update on Enter or leaving the field)."""
    pg.fill(selector, text)
    pg.press(selector, "Enter")


def open_tab(pg, label: str) -> None:
    pg.click(f".tab:has-text('{label}')")


def choose(pg, dropdown_id: str, option_text: str) -> None:
    pg.click(f"#{dropdown_id}")
    pg.click(f".dash-dropdown-option:has-text('{option_text}')")


def idle(pg, timeout: float = 30000) -> None:
    """Until no callback of the page is running (Dash marks the components it is updating)."""
    pg.wait_for_timeout(150)
    pg.wait_for_function("() => !document.querySelector('[data-dash-is-loading=\"true\"]')", timeout=timeout)


def sentence(pg) -> str:
    """The path's sentence, once the path is drawn."""
    loc = pg.locator("#path-sentence")
    expect(loc).to_contain_text("first", timeout=30000)
    idle(pg)
    return loc.inner_text()


def diagram_title(pg) -> str:
    return pg.evaluate("() => { const g = document.querySelector('#diagram-graph .js-plotly-plot');"
                       " return g && g.layout && g.layout.title ? (g.layout.title.text || '') : ''; }")


def molality_text(pg) -> str:
    return pg.locator("#brine-molal-table").inner_text()


def downloaded_text(download) -> str:
    with open(download.path(), encoding="utf-8") as f:
        return f.read()


def upload(pg, upload_id: str, name: str, data: bytes, mime: str = "text/csv") -> None:
    pg.set_input_files(f"#{upload_id} input[type=file]", files=[{"name": name, "mimeType": mime, "buffer": data}])
