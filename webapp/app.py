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


def create_app() -> Dash:
    """The Dash application (not yet serving)."""
    app = Dash(__name__, title=layout.PAGE_TITLE, update_title=None, suppress_callback_exceptions=False)
    # uploads are checked in the browser (2 MB); this refuses anything far larger at the door
    app.server.config["MAX_CONTENT_LENGTH"] = 4 * MAX_UPLOAD_BYTES
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


def run(host: str = "127.0.0.1", port: int = 8050, debug: bool = False, overlays=()) -> None:
    """Serve the app (loopback by default: pass ``host`` to serve on another address).

    ``overlays``: database overlay files offered in the Database menu; a new browser starts with
    them (all together when they do not conflict). A bad overlay raises :class:`InputError` before
    the server starts.
    """
    for note in database.configure(overlays):
        print(f"phasekit app: note: {note}", flush=True)
    if overlays:
        print("phasekit app: databases offered: " + "; ".join(o["label"] for o in database.options()), flush=True)
    print("phasekit app: preparing the model ...", flush=True)
    warm_up()
    print(f"phasekit app: serving on http://{host}:{port}/ (Ctrl+C stops it)", flush=True)
    create_app().run(host=host, port=port, debug=debug)
