"""The phasekit web app (Dash): interactive phase diagrams and crystallization paths.

It calls the library for every number and holds no thermodynamics of its own. Start it with
``phasekit app`` (loopback, port 8050) or :func:`run`.
"""

from __future__ import annotations

import time
import warnings

from dash import Dash

from webapp import (
    brine_view,
    conversion_view,
    database,
    database_view,
    diagram_view,
    export,
    layout,
    leach_view,
    path_view,
    polytherm_view,
    pond_view,
    saturation_view,
    session_view,
)
from webapp.uploads import MAX_UPLOAD_BYTES

#: largest request body accepted by the server, for every callback: an upload of MAX_UPLOAD_BYTES
#: travels base64-encoded (4/3 of its size) inside the callback's JSON, with the page's other inputs
MAX_REQUEST_BYTES = 3 * MAX_UPLOAD_BYTES
#: host names a browser may use to reach the app on loopback (others are refused: DNS rebinding)
LOOPBACK_HOSTS = ("127.0.0.1", "localhost", "::1", "[::1]")


def allowed_hosts(host: str = "127.0.0.1", extra=()) -> tuple[str, ...]:
    """The Host header names the server answers: loopback names, the bound address, and ``extra``."""
    names = list(LOOPBACK_HOSTS)
    if host and host not in ("0.0.0.0", "::"):
        names.append(host)
    names.extend(extra)
    return tuple(dict.fromkeys(n.lower() for n in names))


def _host_name(header: str) -> str:
    h = (header or "").strip().lower()
    if h.startswith("["):  # [::1]:8050
        return h[: h.find("]") + 1] if "]" in h else h
    return h.rsplit(":", 1)[0] if h.count(":") == 1 else h


def guard(server, hosts) -> None:
    """Refuse, on the server and for every request, an unknown Host header (400) and a body above
    :data:`MAX_REQUEST_BYTES` (413), before Dash reads it."""
    from flask import abort, request

    server.config["MAX_CONTENT_LENGTH"] = MAX_REQUEST_BYTES
    allowed = set(hosts)

    @server.before_request
    def _check_request():
        if _host_name(request.headers.get("Host", "")) not in allowed:
            abort(400, description="unknown Host header: open the app at the address it printed on start")
        length = request.content_length
        if length is not None and length > MAX_REQUEST_BYTES:
            abort(413)


def create_app(hosts=None) -> Dash:
    """The Dash application (not yet serving), answering requests for ``hosts`` (default: loopback names)."""
    app = Dash(__name__, title=layout.PAGE_TITLE, update_title=None, suppress_callback_exceptions=False)
    # uploads are checked in the browser (2 MB); the server refuses larger requests for every callback
    guard(app.server, hosts or allowed_hosts())
    app.layout = layout.build
    for view in (brine_view, database_view, diagram_view, saturation_view, path_view, polytherm_view, pond_view,
                 conversion_view, leach_view, session_view, export):
        view.register(app)
    return app


def warm_up() -> float:
    """Compile the model's kernels and fill the caches the first page needs (the demo brine's path
    and the demo system's diagram, with the database a new browser starts with) before the first
    request; seconds taken."""
    from webapp import diagram_source
    from webapp.demo import demo_session

    t0 = time.perf_counter()
    demo = demo_session()
    b = demo["brine"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        raw, brine = brine_view.build_brine(b["rows"], b["units"], b["density"], b["balance_on"])
        db = database.initial()
        database.model_for(db).saturation(brine, 25.0)
        path_view.run_path(brine.molalities, "evaporation", "fractional", 25.0, db=db)
        try:
            diagram_source.base_figure(demo["system"], float(demo["temp_c"]), demo.get("coordinates", "triangular"),
                                       demo.get("basis", "g_per_100g_water"), database.key_of(db))
        except Exception:  # a warm-up must never stop the server; the page reports any error itself
            pass
    return time.perf_counter() - t0


def run(host: str = "127.0.0.1", port: int = 8050, debug: bool = False, overlays=(), allow_hosts=(),
        threads: int = 4) -> None:
    """Serve the app with the waitress WSGI server (loopback by default: pass ``host`` to serve on
    another address, and name in ``allow_hosts`` the host names browsers will use to reach it).

    ``overlays``: database overlay files offered in the Database menu; a new browser starts with
    them (all together when they do not conflict). A bad overlay raises :class:`InputError` before
    the server starts. ``debug=True`` uses Flask's development server instead (never on a network).
    """
    for note in database.configure(overlays):
        print(f"phasekit app: note: {note}", flush=True)
    if overlays:
        print("phasekit app: databases offered: " + "; ".join(o["label"] for o in database.options()), flush=True)
    print("phasekit app: preparing the model ...", flush=True)
    warm_up()
    app = create_app(allowed_hosts(host, allow_hosts))
    print(f"phasekit app: serving on http://{host}:{port}/ (Ctrl+C stops it)", flush=True)
    if debug:
        app.run(host=host, port=port, debug=True)
        return
    from waitress import serve

    serve(app.server, host=host, port=port, threads=threads, max_request_body_size=MAX_REQUEST_BYTES,
          channel_timeout=120, connection_limit=100, ident="phasekit")
