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


def safe_name(text: str) -> str:
    """A file-name-safe version of a label."""
    return re.sub(r"[^A-Za-z0-9._-]+", "_", str(text)).strip("_") or "table"


def xlsx_bytes(df: pd.DataFrame, sheet: str, about: dict) -> bytes:
    """An XLSX workbook: the table, and a sheet 'about' with its context and the cautions."""
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as xl:
        df.to_excel(xl, sheet_name=sheet[:31], index=False)
        rows = [(k, v) for k, v in about.items()] + [("caution", line) for line in CAUTION_LINES]
        pd.DataFrame(rows, columns=["item", "value"]).to_excel(xl, sheet_name="about", index=False)
    return buf.getvalue()


def export_table(_clicks, sat, diagram, path, poly, ponds, brine, temp_c, leach=None):
    """Callback: send the table whose button was pressed."""
    trig = ctx.triggered_id
    if not isinstance(trig, dict) or not (ctx.triggered and ctx.triggered[0].get("value")):
        raise PreventUpdate
    tables, databases = {}, {}
    for store in (sat, diagram, path, poly, ponds, leach):
        for name, item in (store or {}).get("tables", {}).items():
            tables[name] = item
            databases[name] = (store or {}).get("database", "")
    item = tables.get(trig["table"])
    if item is None:
        raise PreventUpdate
    df = from_store(item)
    base = safe_name(f"phasekit_{trig['table']}_{(brine or {}).get('name', 'brine')}")
    if trig["fmt"] == "csv":
        return dcc.send_data_frame(df.to_csv, base + ".csv", index=False)
    about = {"table": trig["table"], "brine": (brine or {}).get("name", ""), "temperature (°C)": temp_c,
             "database": databases.get(trig["table"], ""), "phasekit": pk.__version__}
    return dcc.send_bytes(xlsx_bytes(df, trig["table"], about), base + ".xlsx")


def register(app):
    app.callback(Output("table-download", "data"), Input({"type": "export", "table": ALL, "fmt": ALL}, "n_clicks"),
                 State("res-sat", "data"), State("res-diagram", "data"), State("path-result", "data"),
                 State("res-poly", "data"), State("res-ponds", "data"), State("brine", "data"), State("temp-c", "data"),
                 State("res-leach", "data"),
                 prevent_initial_call=True)(export_table)
    app.clientside_callback(ClientsideFunction("phasekit", "downloadFigure"), Output("figure-export-done", "data"),
                            Input({"type": "figexport", "graph": ALL, "fmt": ALL}, "n_clicks"),
                            prevent_initial_call=True)
