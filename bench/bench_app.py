"""Benchmark of the web app (issue: the web app).

Targets: server time of the path callback for the demo brine under 300 ms at the library's
default resolution (the callback function timed directly, its cache cleared before each run);
first page load under 2 s (headless Debian Chromium on a loopback server: time to the rendered
page, and, printed for information, to the demo's diagram with its path).
"""

from __future__ import annotations

import sys
import tempfile
import threading
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report  # noqa: E402

CHROMIUM = "/usr/bin/chromium"
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
        "--no-first-run"]


def callbacks():
    from webapp import brine_view, diagram_source, path_view, pond_view, saturation_view
    from webapp.demo import demo_session
    from webapp.diagram_view import update_diagram

    b = demo_session()["brine"]
    ions = [r["ion"] for r in b["rows"]]
    vals = [r["value"] for r in b["rows"]]
    state = brine_view.update_brine(ions, vals, b["units"], b["density"], b["balance_on"], b["name"])[0]

    def path_cold():
        path_view._run.cache_clear()
        return path_view.update_path(state, 25.0, "evaporation", "fractional", "", "", "linear")

    path_cold()
    t = median_time(path_cold, repeat=7)
    report("app: path callback, demo brine, evaporation 25 °C (cold)", 1000 * t, 300, "ms")
    t = median_time(lambda: path_view.update_path(state, 25.0, "evaporation", "fractional", "", "", "linear"),
                    repeat=7, number=5)
    print(f"{'app: path callback, same inputs again (cached path)':<58s} {1000 * t:>12.4g} ms")

    def eq_cold():
        path_view._run.cache_clear()
        return path_view.update_path(state, 25.0, "evaporation", "equilibrium", "", "", "linear")

    print(f"{'app: path callback, equilibrium mode (cold)':<58s} {1000 * median_time(eq_cold, repeat=3):>12.4g} ms")
    t = median_time(lambda: brine_view.update_brine(ions, vals, b["units"], b["density"], b["balance_on"], b["name"]),
                    repeat=7, number=5)
    print(f"{'app: brine callback':<58s} {1000 * t:>12.4g} ms")
    t = median_time(lambda: saturation_view.update_saturation(state, 25.0, "saturation"), repeat=5)
    print(f"{'app: saturation callback':<58s} {1000 * t:>12.4g} ms")
    path = path_view.update_path(state, 25.0, "evaporation", "fractional", "", "", "linear")[0]

    def diagram_cold():
        diagram_source.diagram.cache_clear()
        diagram_source.base_figure.cache_clear()
        return update_diagram("NaCl-MgCl2", 25.0, "triangular", "g_per_100g_water", state, path)

    print(f"{'app: diagram callback, NaCl-MgCl2 25 °C (cold)':<58s} {1000 * median_time(diagram_cold, repeat=3):>12.4g} ms")
    t = median_time(lambda: update_diagram("NaCl-MgCl2", 25.0, "triangular", "g_per_100g_water", state, path), repeat=5)
    print(f"{'app: diagram callback, cached diagram (brine/path redrawn)':<58s} {1000 * t:>12.4g} ms")
    inputs = demo_session()["ponds"]
    cols = [[p[k] for p in inputs] for k in ("name", "temp_c", "end", "value")]
    t = median_time(lambda: pond_view.update_ponds(None, "ponds", state, None, *cols), repeat=3)
    print(f"{'app: pond-train callback, demo train of 4 ponds':<58s} {1000 * t:>12.4g} ms")


def page_load():
    import logging

    from werkzeug.serving import make_server

    from webapp.app import create_app

    if not Path(CHROMIUM).exists():
        print("page load: Debian's chromium not installed; skipped")
        return
    from playwright.sync_api import sync_playwright

    logging.getLogger("werkzeug").setLevel(logging.ERROR)
    app = create_app()
    server = make_server("127.0.0.1", 0, app.server, threaded=True)
    url = f"http://127.0.0.1:{server.server_port}/"
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    painted, rendered, drawn = [], [], []
    try:
        with sync_playwright() as pw, tempfile.TemporaryDirectory() as profile:
            ctx = pw.chromium.launch_persistent_context(profile, executable_path=CHROMIUM, args=ARGS, headless=True)
            for _ in range(5):
                pg = ctx.new_page()
                t0 = time.perf_counter()
                pg.goto(url)
                pg.wait_for_selector("#brine-rows", timeout=60000)
                painted.append(time.perf_counter() - t0)
                pg.wait_for_selector("#brine-molal-table", timeout=60000)
                rendered.append(time.perf_counter() - t0)
                pg.wait_for_selector("#diagram-graph .scatterlayer .trace", timeout=60000)
                drawn.append(time.perf_counter() - t0)
                pg.close()
            ctx.close()
    finally:
        server.shutdown()
    print(f"{'app: first page load, to the page laid out (fields shown)':<58s} {painted[0]:>12.4g} s")
    report("app: first page load, to the rendered page with the demo brine", rendered[0], 2.0, "s")
    print(f"{'app: page load, median of 4 more loads':<58s} {sorted(rendered[1:])[1]:>12.4g} s")
    print(f"{'app: first page load, to the diagram with the path drawn':<58s} {drawn[0]:>12.4g} s")
    print(f"{'app: diagram with path drawn, median of 4 more loads':<58s} {sorted(drawn[1:])[1]:>12.4g} s")


def main():
    quiet()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        from webapp.app import warm_up

        print(f"{'app: warm-up of the model at start (compilation)':<58s} {warm_up():>12.4g} s")
        callbacks()
        page_load()


if __name__ == "__main__":
    main()
