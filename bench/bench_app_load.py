"""Bounded load test of the web app on loopback: 200 evaporation callbacks, 10 at a time.

The app is served by waitress (as ``phasekit app`` serves it) on 127.0.0.1 in a background thread;
each request is the Dash callback of the path view (POST /_dash-update-component) for an invented
brine of the demo scenario, with its temperature varied so that most requests compute a new path
rather than hit the cache. Prints the number of errors, the median and the worst latency. Sends
requests to 127.0.0.1 only, and stops by itself.
"""

from __future__ import annotations

import json
import statistics
import sys
import threading
import time
import urllib.error
import urllib.request
import warnings
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

N_REQUESTS = 200
CONCURRENCY = 10
OUTPUTS = ["path-result.data", "path-sentence.children", "path-graph.figure", "path-events.children",
           "path-summary.children", "path-warn.children", "path-msg.children", "path-db.children"]


def _free_port() -> int:
    import socket

    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _payload(brine: dict, temp_c: float) -> bytes:
    inputs = [("brine", "data", brine), ("temp-c", "data", temp_c), ("path-process", "value", "evaporation"),
              ("path-mode", "value", "fractional"), ("cool-start", "value", ""), ("cool-end", "value", ""),
              ("path-scale", "value", "linear"), ("database", "data", {"choice": "embedded"})]
    body = {
        "output": ".." + "...".join(OUTPUTS) + "..",
        "outputs": [{"id": o.split(".")[0], "property": o.split(".")[1]} for o in OUTPUTS],
        "inputs": [{"id": i, "property": p, "value": v} for i, p, v in inputs],
        "changedPropIds": ["temp-c.data"],
        "state": [],
    }
    return json.dumps(body).encode()


def main() -> None:
    import logging

    from waitress.server import create_server

    from webapp import brine_view
    from webapp.app import MAX_REQUEST_BYTES, allowed_hosts, create_app, warm_up
    from webapp.demo import demo_session

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        warm_up()
        b = demo_session()["brine"]
        brine = brine_view.update_brine([r["ion"] for r in b["rows"]], [r["value"] for r in b["rows"]], b["units"],
                                        b["density"], b["balance_on"], b["name"])[0]
    logging.getLogger("waitress.queue").setLevel(logging.ERROR)  # the queue is expected at 10 clients, 4 threads
    app = create_app(allowed_hosts("127.0.0.1"))
    port = _free_port()
    server = create_server(app.server, host="127.0.0.1", port=port, threads=4,
                           max_request_body_size=MAX_REQUEST_BYTES)
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    url = f"http://127.0.0.1:{port}/_dash-update-component"
    temps = [15.0 + (i % 40) * 0.5 for i in range(N_REQUESTS)]  # 40 distinct paths, each asked 5 times

    def one(t: float):
        req = urllib.request.Request(url, data=_payload(brine, t), method="POST",
                                     headers={"Content-Type": "application/json"})
        t0 = time.perf_counter()
        try:
            with urllib.request.urlopen(req, timeout=120) as r:
                body = json.loads(r.read())
                ok = r.status == 200 and "path-sentence" in body.get("response", {})
        except (urllib.error.URLError, OSError, ValueError) as exc:
            return time.perf_counter() - t0, f"{type(exc).__name__}: {exc}"
        return time.perf_counter() - t0, None if ok else "unexpected response"

    t0 = time.perf_counter()
    with ThreadPoolExecutor(max_workers=CONCURRENCY) as pool:
        results = list(pool.map(one, temps))
    wall = time.perf_counter() - t0
    server.close()
    lat = [r[0] for r in results]
    errors = [r[1] for r in results if r[1]]
    print(f"{'app load: evaporation callbacks (10 at a time)':<58s} {N_REQUESTS:>12d} requests")
    print(f"{'app load: errors':<58s} {len(errors):>12d}")
    for e in sorted(set(errors))[:5]:
        print(f"  {e}")
    print(f"{'app load: median latency':<58s} {1000 * statistics.median(lat):>12.4g} ms")
    print(f"{'app load: worst latency':<58s} {1000 * max(lat):>12.4g} ms")
    print(f"{'app load: wall time, throughput':<58s} {wall:>9.3g} s, {N_REQUESTS / wall:.3g} requests/s")


if __name__ == "__main__":
    main()
