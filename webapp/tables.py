"""Plain HTML tables (read-only) and the export buttons under each table."""

from __future__ import annotations

import math

import pandas as pd
from dash import html


def fmt(x, digits: int = 4) -> str:
    """A number with ``digits`` significant figures (text and None as they are)."""
    if x is None:
        return ""
    if isinstance(x, bool) or not isinstance(x, int | float):
        return str(x)
    if isinstance(x, float) and not math.isfinite(x):
        return "—"
    if x == 0:
        return "0"
    if abs(x) >= 10 ** digits or abs(x) < 1e-3:
        return f"{x:.{digits - 1}e}"
    return f"{x:.{digits}g}"


def table(df: pd.DataFrame, headers: dict | None = None, digits: dict | None = None, id=None,
          row_class=None) -> html.Table:
    """An HTML table of a DataFrame (index not shown: reset it first if it carries data)."""
    headers = headers or {}
    digits = digits or {}
    head = html.Thead(html.Tr([html.Th(headers.get(c, c)) for c in df.columns]))
    rows = []
    for i, rec in enumerate(df.to_dict("records")):
        cells = [html.Td(fmt(rec[c], digits.get(c, 4))) for c in df.columns]
        rows.append(html.Tr(cells, className=row_class(rec) if row_class else None, **{"data-row": str(i)}))
    kwargs = {"id": id} if id else {}
    return html.Table([head, html.Tbody(rows)], className="pk-table", **kwargs)


def export_buttons(name: str, label: str = "Download table") -> html.Div:
    """CSV and XLSX buttons for the table ``name`` (handled by webapp.export_view)."""
    return html.Div([
        html.Span(label + ":", className="pk-export-label"),
        html.Button("CSV", id={"type": "export", "table": name, "fmt": "csv"}, className="pk-btn pk-btn-small"),
        html.Button("XLSX", id={"type": "export", "table": name, "fmt": "xlsx"}, className="pk-btn pk-btn-small"),
    ], className="pk-export")


def figure_buttons(graph_id: str) -> html.Div:
    """PNG and SVG buttons for a figure (plotly's own image export, in the browser)."""
    return html.Div([
        html.Span("Download figure:", className="pk-export-label"),
        html.Button("PNG", id={"type": "figexport", "graph": graph_id, "fmt": "png"}, className="pk-btn pk-btn-small"),
        html.Button("SVG", id={"type": "figexport", "graph": graph_id, "fmt": "svg"}, className="pk-btn pk-btn-small"),
    ], className="pk-export")


def stored(df: pd.DataFrame) -> dict:
    """A DataFrame as JSON-ready data for a dcc.Store (restored by :func:`from_store`)."""
    clean = df.astype(object).where(pd.notna(df), None)
    return {"columns": [str(c) for c in df.columns], "data": clean.values.tolist()}


def from_store(item: dict) -> pd.DataFrame:
    """The DataFrame saved by :func:`stored`."""
    return pd.DataFrame(item["data"], columns=item["columns"])
