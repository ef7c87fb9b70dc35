"""The page: header with the session buttons, the working conditions, the brine panel beside the
views (tabs), the stores, and the cautions in the footer."""

from __future__ import annotations

from dash import dcc, html

from webapp import (
    brine_view,
    conversion_view,
    diagram_view,
    leach_view,
    path_view,
    polytherm_view,
    pond_view,
    saturation_view,
    session_view,
)
from webapp.demo import demo_session

CAUTIONS = [
    [html.B("Estimates. "), "Every number here is an estimate from a thermodynamic model and its parameter "
     "database. Confirm it by laboratory tests on the real brine before you size, buy or operate anything; read "
     "the validity warnings shown with the results."],
    [html.B("Hot brines and crystallizers "), "scald, and concentrated brines are corrosive. Crystallizers, "
     "evaporators, heaters and pressure equipment are designed, operated and inspected under local codes and by "
     "qualified people."],
    [html.B("Nitrates are oxidizers. "), "Dry KNO3 and NaNO3, and nitrate crusts on hot surfaces, feed fires with "
     "organic matter, fuels or reducing agents; store and handle them under the local rules for oxidizing "
     "substances."],
    [html.B("Pond dikes, liners and brine discharge "), "are governed by local codes, permits and licensed "
     "engineering practice (geotechnical design of dikes, leakage control, discharge limits); this app does not "
     "replace any of them."],
]

TABS = [
    ("diagram", "Phase diagram", diagram_view),
    ("saturation", "Saturation states", saturation_view),
    ("path", "Evaporation & cooling", path_view),
    ("polytherm", "Solubility vs temperature", polytherm_view),
    ("ponds", "Pond train", pond_view),
    ("conversion", "Conversion cycle", conversion_view),
    ("leach", "Dissolution rate", leach_view),
]

# the words under the name in the header, also the page title (webapp.app)
SUBTITLE = "salt crystallization from brines"
PAGE_TITLE = f"phasekit — {SUBTITLE}"


def build() -> html.Div:
    """The page, filled with the demo inputs (replaced on load by the inputs kept in the browser)."""
    inputs = demo_session()
    return html.Div([
        html.Header([
            html.Div([html.H1(["phasekit ", html.Span(SUBTITLE, className="pk-sub")])]),
            session_view.header_controls(),
        ], className="pk-header"),
        html.Div(id="session-msg", **{"aria-live": "polite"}),
        diagram_view.conditions(inputs),
        html.Main([
            brine_view.layout(inputs),
            html.Div(dcc.Tabs(id="views", value="diagram", children=[
                dcc.Tab(label=label, value=key, children=module.layout(inputs), id=f"tab-{key}")
                for key, label, module in TABS]), className="pk-tabs-wrap"),
        ], className="pk-main"),
        html.Footer([html.B("Cautions"), html.Ul([html.Li(c) for c in CAUTIONS])], className="pk-footer",
                    id="cautions"),
        # stores: the inputs (kept in this browser) and the results of each view
        dcc.Store(id=session_view.STORE_ID, storage_type="local"),
        dcc.Store(id="boot", data=1),
        dcc.Store(id="restore-request"),
        dcc.Store(id="balance-on", data=inputs["brine"]["balance_on"]),
        dcc.Store(id="analyses", data=inputs["analyses"]),
        dcc.Store(id="brine"),
        dcc.Store(id="path-result"),
        dcc.Store(id="res-sat"), dcc.Store(id="res-diagram"), dcc.Store(id="res-poly"), dcc.Store(id="res-ponds"),
        dcc.Store(id="res-leach"), dcc.Store(id="res-conv"),
        dcc.Store(id="figure-export-done"),
        dcc.Download(id="table-download"),
    ], className="pk-page")
