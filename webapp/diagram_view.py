"""The working conditions (system, temperature) and the phase-diagram view."""

from __future__ import annotations

import math

import pandas as pd
from dash import Input, Output, ctx, dcc, html, no_update
from dash.exceptions import PreventUpdate

from phasekit.errors import InputError, PhasekitError
from phasekit.thermo.water import T_MAX_C, T_MIN_C
from webapp import database, database_view, diagram_source, messages
from webapp.figures import diagram_figure
from webapp.style import graph_config
from webapp.systems import get_system, menu_options
from webapp.tables import export_buttons, figure_buttons, from_store, stored, table


def parse_temperature(text, field: str = "temperature") -> float:
    """A temperature typed by the user, within the library's range (°C)."""
    expected = f"a temperature in °C from {T_MIN_C:g} to {T_MAX_C:g}"
    try:
        t = float(str(text).strip().replace(",", ".")) if text is not None else math.nan
    except ValueError:
        raise InputError(field, text, expected) from None
    if not math.isfinite(t) or not T_MIN_C <= t <= T_MAX_C:
        raise InputError(field, text, expected)
    return t


def conditions(inputs: dict) -> html.Div:
    """The strip of working conditions above the views."""
    marks = {int(t): f"{int(t)} °C" for t in range(int(T_MIN_C), int(T_MAX_C) + 1, 25)}
    try:
        t0 = parse_temperature(inputs["temp_c"])
    except InputError:
        t0 = 25.0
    return html.Div([
        html.Div([html.Label("System", htmlFor="system"),
                  dcc.Dropdown(id="system", options=menu_options(), value=inputs["system"], clearable=False,
                               className="pk-dropdown pk-dropdown-wide")], className="pk-cond pk-cond-system"),
        html.Div([html.Label("Temperature", htmlFor="temp-text"),
                  html.Div([
                      html.Div(dcc.Slider(id="temp-slider", min=T_MIN_C, max=T_MAX_C, step=0.5, value=t0, marks=marks,
                                          updatemode="mouseup", allow_direct_input=False), className="pk-slider"),
                      dcc.Input(id="temp-text", value=inputs["temp_c"], type="text", debounce=True, inputMode="decimal",
                                className="pk-field pk-field-short", name="temperature in °C"),
                      html.Span("°C")], className="pk-temp")], className="pk-cond pk-cond-temp"),
        database_view.controls(inputs),
        html.Div(id="temp-msg", className="pk-cond-msg"),
        html.Div(id="db-msg", className="pk-cond-msg", **{"aria-live": "polite"}),
        dcc.Store(id="temp-c", data=t0),
    ], className="pk-conditions")


def layout(inputs: dict) -> html.Div:
    return html.Div([
        html.Div([
            dcc.RadioItems(id="coords", options=[{"label": "triangular", "value": "triangular"},
                                                 {"label": "rectangular", "value": "rectangular"}],
                           value=inputs["coordinates"], inline=True, className="pk-radio"),
            html.Span("rectangular in:", className="pk-hint"),
            dcc.RadioItems(id="basis", options=[{"label": "g per 100 g water", "value": "g_per_100g_water"},
                                                {"label": "mol per kg water", "value": "molality"}],
                           value=inputs["basis"], inline=True, className="pk-radio"),
        ], className="pk-toolbar"),
        html.Div(id="diagram-msg", **{"aria-live": "polite"}),
        dcc.Loading(dcc.Graph(id="diagram-graph", config=graph_config("phasekit-diagram"),
                              style={"height": "560px"}), type="circle", delay_show=150),
        html.Div(id="diagram-db"),
        figure_buttons("diagram-graph"),
        html.Div(id="diagram-points"),
        # static (not re-rendered with the table): a button created again on every diagram would fire the
        # export callback each time and could cancel a download asked for meanwhile
        html.Div(export_buttons("invariant_points"), id="diagram-points-export", style={"display": "none"}),
    ], className="pk-view")


def sync_temperature(slider, text):
    """Callback: slider and typed value follow each other; a bad typed value keeps the last temperature."""
    trig = ctx.triggered_id
    if trig == "temp-slider":
        if slider is None:
            raise PreventUpdate
        t = float(slider)
        return no_update, f"{t:g}", t, None
    try:
        t = parse_temperature(text)
    except InputError as exc:
        return no_update, no_update, no_update, messages.error(str(exc))
    return t, no_update, t, None


def update_diagram(system_key, temp_c, coords, units, brine, path, db=None):
    """Callback: the library's diagram (cached per system, temperature and database) with the brine and its path."""
    system = get_system(system_key)
    notes, result, base, points_view, store = [], None, None, None, {"tables": {}}
    if system.kind != "ternary" and coords == "rectangular":
        notes.append("This projection has one form (Jänecke coordinates); the coordinate choice applies to "
                     "the ternary systems.")
    try:
        model = database.model_for(db)
    except Exception as exc:
        return (no_update, messages.error(messages.describe(exc, "the database")), no_update, no_update, no_update,
                no_update)
    key = database.key_of(db)
    try:
        result = diagram_source.diagram(system.key, float(temp_c), key)
        base = diagram_source.base_figure(system.key, float(temp_c), coords, units, key)
    except diagram_source.DiagramUnavailable as exc:
        notes.append(str(exc))
    except PhasekitError as exc:
        notes.append(f"No diagram at {float(temp_c):g} °C: {exc}. The brine and its path are drawn on empty axes.")
    except Exception as exc:
        notes.append(messages.describe(exc, "the diagram"))
    path_data = None
    if path and path.get("steps"):
        path_data = {"steps": from_store(path["steps"]), "events": from_store(path["events"])}
    title = f"{system.label}, {float(temp_c):g} °C"
    try:
        fig, more = diagram_figure(system, coords, units, base, brine, path_data, title, model=model)
    except Exception as exc:
        return (no_update, messages.error(messages.describe(exc, "drawing the diagram")), no_update, no_update,
                no_update, no_update)
    notes += more
    if result is not None:
        notes += [w for w in getattr(result, "warnings", [])]
        pts = getattr(result, "invariant_points", None)
        if isinstance(pts, pd.DataFrame) and len(pts):
            view = pts.copy()
            view["solids"] = [" + ".join(s) if isinstance(s, tuple | list) else str(s) for s in view["solids"]]
            store["tables"]["invariant_points"] = stored(view)
            cols = [c for c in view.columns if c in ("solids", "kind") or c.endswith("_mass_percent")
                    or c.startswith("jaenecke_") or c == "water_activity"]
            points_view = [html.H3("Invariant points"), table(view[cols], id="diagram-points-table")]
        for name in ("curves", "fields", "tie_lines"):
            df = getattr(result, name, None)
            if isinstance(df, pd.DataFrame) and len(df):
                store["tables"][f"diagram_{name}"] = stored(df.assign(
                    **{c: df[c].map(lambda s: " + ".join(s) if isinstance(s, tuple | list) else s)
                       for c in df.columns if df[c].dtype == object}))
    msg = html.Div([messages.note(n) for n in dict.fromkeys(notes)]) if notes else None
    store["database"] = model.label
    export_style = {} if points_view else {"display": "none"}
    return fig, msg, points_view, store, database.label_line(model, id="diagram-db-label"), export_style


def register(app):
    app.callback(Output("temp-slider", "value"), Output("temp-text", "value"), Output("temp-c", "data"),
                 Output("temp-msg", "children"), Input("temp-slider", "value"), Input("temp-text", "value"),
                 prevent_initial_call=True)(sync_temperature)
    app.callback(Output("diagram-graph", "figure"), Output("diagram-msg", "children"),
                 Output("diagram-points", "children"), Output("res-diagram", "data"), Output("diagram-db", "children"),
                 Output("diagram-points-export", "style"),
                 Input("system", "value"), Input("temp-c", "data"), Input("coords", "value"), Input("basis", "value"),
                 Input("brine", "data"), Input("path-result", "data"), Input("database", "data"))(update_diagram)

