"""Downloads: every table as CSV or XLSX; figures are exported in the browser by plotly itself
(PNG/SVG buttons under each figure, and the camera button of the mode bar)."""

from __future__ import annotations

import io
import re

import pandas as pd
from dash import ALL, ClientsideFunction, Input, Output, State, ctx, dcc
from dash.exceptions import PreventUpdate

import phasekit as pk
from webapp.tables import from_store

CAUTION_LINES = [
    "Estimates from a thermodynamic model and its parameter database (phasekit "
    f"{pk.__version__}); confirm them by laboratory tests on the real brine before you size, buy or operate anything.",
    "Hot brines and crystallizers scald; crystallizers, evaporators and heaters are designed and operated under "
    "local codes by qualified people.",
    "Pond dikes, liners and brine discharge are governed by local codes, permits and licensed engineering practice.",
]
#: added to the exports of results with nitrates (the conversion cycle)
NITRATE_CAUTION = ("Nitrates are oxidizers: dry KNO3 and NaNO3, and nitrate crusts on hot surfaces, feed fires with "
                   "organic matter, fuels or reducing agents; store and handle them under the local rules for oxidizing "
                   "substances.")


def safe_name(text: str) -> str:
    """A file-name-safe version of a label."""
    return re.sub(r"[^A-Za-z0-9._-]+", "_", str(text)).strip("_") or "table"


def xlsx_bytes(df: pd.DataFrame, sheet: str, about: dict, cautions=()) -> bytes:
    """An XLSX workbook: the table, and a sheet 'about' with its context and the cautions (``cautions``:
    lines added to the common ones)."""
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as xl:
        df.to_excel(xl, sheet_name=sheet[:31], index=False)
        rows = [(k, v) for k, v in about.items()] + [("caution", line) for line in [*CAUTION_LINES, *cautions]]
        pd.DataFrame(rows, columns=["item", "value"]).to_excel(xl, sheet_name="about", index=False)
    return buf.getvalue()


def export_table(_clicks, sat, diagram, path, poly, ponds, brine, temp_c, leach=None, conv=None):
    """Callback: send the table whose button was pressed.

    A view whose result does not depend on the brine panel (the conversion cycle) puts its own context in
    its store: ``"about"`` (items of the XLSX sheet 'about', instead of the brine and the temperature),
    ``"file"`` (the file name's stem instead of the brine's name) and ``"nitrates"`` (adds the oxidizer caution).
    """
    trig = ctx.triggered_id
    if not isinstance(trig, dict) or not (ctx.triggered and ctx.triggered[0].get("value")):
        raise PreventUpdate
    tables, owners = {}, {}
    for store in (sat, diagram, path, poly, ponds, leach, conv):
        for name, item in (store or {}).get("tables", {}).items():
            tables[name] = item
            owners[name] = store
    item = tables.get(trig["table"])
    if item is None:
        raise PreventUpdate
    owner = owners[trig["table"]]
    df = from_store(item)
    stem = owner.get("file") or (brine or {}).get("name", "brine")
    base = safe_name(f"phasekit_{trig['table']}_{stem}")
    if trig["fmt"] == "csv":
        return dcc.send_data_frame(df.to_csv, base + ".csv", index=False)
    context = owner.get("about") or {"brine": (brine or {}).get("name", ""), "temperature (°C)": temp_c}
    about = {"table": trig["table"], **context, "database": owner.get("database", ""), "phasekit": pk.__version__}
    cautions = [NITRATE_CAUTION] if owner.get("nitrates") else []
    return dcc.send_bytes(xlsx_bytes(df, trig["table"], about, cautions), base + ".xlsx")


def register(app):
    app.callback(Output("table-download", "data"), Input({"type": "export", "table": ALL, "fmt": ALL}, "n_clicks"),
                 State("res-sat", "data"), State("res-diagram", "data"), State("path-result", "data"),
                 State("res-poly", "data"), State("res-ponds", "data"), State("brine", "data"), State("temp-c", "data"),
                 State("res-leach", "data"), State("res-conv", "data"),
                 prevent_initial_call=True)(export_table)
    app.clientside_callback(ClientsideFunction("phasekit", "downloadFigure"), Output("figure-export-done", "data"),
                            Input({"type": "figexport", "graph": ALL, "fmt": ALL}, "n_clicks"),
                            prevent_initial_call=True)
