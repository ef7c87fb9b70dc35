"""The crystallization-path view: evaporation or cooling of the brine, the sequence chart, the
events table and the sentence naming the first solid."""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pandas as pd
from dash import Input, Output, dcc, html, no_update

import phasekit as pk
from phasekit.errors import InputError, PhasekitError
from webapp import database, messages
from webapp.diagram_view import parse_temperature
from webapp.figures import sequence_figure
from webapp.style import graph_config
from webapp.tables import export_buttons, figure_buttons, stored, table

Y_TITLE = "g per kg of initial brine"


def layout(inputs: dict) -> html.Div:
    p = inputs["path"]
    return html.Div([
        html.Div([
            html.Div([html.Label("Process"),
                      dcc.RadioItems(id="path-process", value=p["process"], inline=True, className="pk-radio",
                                     options=[{"label": "evaporation at the working temperature", "value": "evaporation"},
                                              {"label": "cooling (no evaporation)", "value": "cooling"}])]),
            html.Div([html.Label("Solids"),
                      dcc.RadioItems(id="path-mode", value=p["mode"], inline=True, className="pk-radio",
                                     options=[{"label": "harvested as they form (fractional)", "value": "fractional"},
                                              {"label": "left with the brine (equilibrium)", "value": "equilibrium"}])]),
            html.Div([html.Label("Cooling from", htmlFor="cool-start"),
                      dcc.Input(id="cool-start", value=p["start_c"], type="text", debounce=True, inputMode="decimal",
                                className="pk-field pk-field-short"),
                      html.Label("to", htmlFor="cool-end"),
                      dcc.Input(id="cool-end", value=p["end_c"], type="text", debounce=True, inputMode="decimal",
                                className="pk-field pk-field-short"), html.Span("°C")],
                     className="pk-inline", id="cool-fields"),
            html.Div([html.Label("Solids kept out", htmlFor="path-exclude",
                                 title="solids that do not form on the time scale of your process (comma separated)"),
                      dcc.Input(id="path-exclude", value=p.get("exclude", ""), type="text", debounce=True,
                                placeholder="e.g. anhydrite, polyhalite", className="pk-field")],
                     className="pk-inline"),
            html.Div([html.Label("Mass axis"),
                      dcc.RadioItems(id="path-scale", value=p.get("scale", "linear"), inline=True, className="pk-radio",
                                     options=[{"label": "linear", "value": "linear"},
                                              {"label": "logarithmic (minor solids)", "value": "log"}])]),
        ], className="pk-toolbar pk-toolbar-wrap"),
        html.Div(id="path-msg", **{"aria-live": "polite"}),
        dcc.Loading([
            html.P(id="path-sentence", className="pk-sentence"),
            html.Div(id="path-db"),
            dcc.Graph(id="path-graph", config=graph_config("phasekit-sequence"), style={"height": "420px"}),
        ], type="circle", delay_show=150),
        figure_buttons("path-graph"),
        html.Div(id="path-warn"),
        html.Div([html.H3("Phase changes"), html.Div(id="path-events"), export_buttons("events")]),
        html.Div([html.H3("Solids formed"), html.Div(id="path-summary"), export_buttons("summary")]),
        html.Div([html.H3("Every step"), html.P("The brine and the solids at every step of the path: download it.",
                                                className="pk-hint"), export_buttons("steps")]),
    ], className="pk-view")


@lru_cache(maxsize=32)
def _run(key: tuple, process: str, mode: str, temp_c: float, start_c: float, end_c: float, db_key: tuple,
         exclude: tuple = ()):
    brine = pk.Brine(dict(key))
    model = database.model_by_key(db_key)
    if process == "evaporation":
        return pk.evaporate(brine, temp_c=temp_c, mode=mode, model=model, exclude=list(exclude))
    return pk.cool(brine, start_c=start_c, end_c=end_c, mode=mode, model=model, exclude=list(exclude))


def parse_exclude(text, model=None, field: str = "solids kept out") -> tuple:
    """Canonical names of the solids typed in a 'solids kept out' field (comma separated)."""
    from phasekit.equilibrium.common import excluded_solids

    model = model if model is not None else database.model_for(None)
    items = [x for x in str(text or "").replace("+", ",").split(",") if x.strip()]
    try:
        return tuple(excluded_solids(model, items))
    except InputError as exc:
        raise InputError(field, exc.value, exc.expected) from None


def run_path(molalities: dict, process: str, mode: str, temp_c: float, start_c=None, end_c=None, db=None,
             exclude=()):
    """The library's path for this brine with the database ``db`` (cached for identical inputs)."""
    database.model_for(db)
    key = tuple(sorted((k, float(v)) for k, v in molalities.items()))
    return _run(key, process, mode, float(temp_c), start_c, end_c, database.key_of(db), tuple(exclude))


def end_sentence(res) -> str:
    """Why the path ended, in one sentence (a partial path says so first)."""
    cf = float(res.steps["concentration_factor"].iloc[-1])
    where = f"concentration factor {cf:.3g}, {float(res.steps['temp_c'].iloc[-1]):.3g} °C"
    if res.stop_reason == "failure":
        return (f"The path stopped before its end: the solver failed ({where}); what is shown is the part "
                f"computed up to there. {res.end_point}")
    if res.stop_reason == "validity limit":
        return (f"The path stops where the brine leaves the database's validity ({where}); what is shown is the "
                f"part the model can answer for. {res.end_point}")
    return f" The path ends at: {res.end_point} ({where})."


def first_solid_sentence(res, process: str, start_c=None) -> str:
    """One plain sentence: the first solid and where it comes out."""
    first = res.first_solid
    if first is None:
        return f"No solid comes out along this path (it ends at: {res.end_point})."
    solid = first["solid"]
    if process == "evaporation":
        if first["water_removed_fraction"] <= 1e-9:
            return (f"The brine is already saturated with {solid} at the start: {solid} comes out at once "
                    f"(concentration factor 1, {first['temp_c']:g} °C).")
        return (f"{solid.capitalize()} comes out first, at a concentration factor of "
                f"{first['concentration_factor']:.3g} ({100 * first['water_removed_fraction']:.1f} % of the water "
                f"evaporated), at {first['temp_c']:g} °C.")
    if start_c is not None and abs(first["temp_c"] - start_c) < 1e-6:
        return f"The brine is already saturated with {solid} at {start_c:g} °C, the start of the cooling."
    return f"{solid.capitalize()} comes out first, at {first['temp_c']:.1f} °C (cooling from {start_c:g} °C)."


def masses(res) -> pd.DataFrame:
    """Mass of each solid (g per kg of initial brine) at every step, from the library's amounts."""
    out = pd.DataFrame(index=res.precipitated.index)
    for solid in res.precipitated.columns:
        out[solid] = res.precipitated[solid] * res.solid_masses.get(solid, np.nan) / res.initial_solution_mass_kg
    return out


def _events_view(ev: pd.DataFrame) -> pd.DataFrame:
    return pd.DataFrame({"solid": ev["solid"], "event": ev["event"], "point": ev["point"],
                         "concentration factor": ev["concentration_factor"],
                         "water evaporated (%)": 100 * ev["water_removed_fraction"],
                         "temperature (°C)": ev["temp_c"]})


def update_path(brine, temp_c, process, mode, start_text, end_text, scale="linear", db=None, exclude_text=""):
    """Callback: run the path with the database chosen and draw it (the previous result is kept on any error)."""
    keep = (no_update,) * 6
    if not brine:
        return (*keep, messages.note("Enter a brine analysis to see its path."), no_update)
    start = end = None
    try:
        if process == "cooling":
            start = parse_temperature(start_text, "cooling from")
            end = parse_temperature(end_text, "cooling to")
            if end >= start:
                raise InputError("cooling to", end_text, f"a temperature below the start, {start:g} °C")
        model = database.model_for(db)
        excl = parse_exclude(exclude_text, model)
        res = run_path(brine["molalities"], process, mode, float(temp_c), start, end, db, excl)
    except PhasekitError as exc:
        text = messages.describe(exc)
        if "electrically neutral" in text:
            text = ("The brine is not electrically neutral: balance it on an ion in the brine panel "
                    "(the model needs a neutral brine). " + text)
        return (*keep, messages.error(text), no_update)
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "the path")), no_update)
    try:
        out = _present(res, brine, process, mode, temp_c, start, scale)
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "drawing the path")), no_update)
    out[0]["database"] = model.label
    return (*out, database.label_line(model, id="path-db-label"))


def _present(res, brine, process, mode, temp_c, start, scale):
    m = masses(res)
    steps, ev = res.steps, res.events
    if process == "evaporation":
        x, x_title = steps["concentration_factor"], "concentration factor (initial water / water left)"
        ex = ev["concentration_factor"]
        title = f"Evaporation at {float(temp_c):g} °C — {mode}"
    else:
        x, x_title, ex = steps["temp_c"], "temperature (°C)", ev["temp_c"]
        title = f"Cooling from {start:g} °C — {mode}"
    y_title = Y_TITLE + (" (cumulative harvest)" if mode == "fractional" else " (solids present)")
    fig = sequence_figure(x, x_title, m, ev, ex.to_numpy(float), Y_TITLE, reverse_x=process == "cooling", title=title,
                          log_x=process == "evaporation", log_y=scale == "log")
    fig["layout"]["yaxis"]["title"]["text"] = y_title
    sentence = first_solid_sentence(res, process, start)
    if res.complete:
        sentence += end_sentence(res)
    else:
        sentence = end_sentence(res) + " " + sentence
    if res.exclude:
        sentence += f" Kept out: {', '.join(res.exclude)}."
    summary = res.summary().reset_index()
    species = [c for c in steps.columns if c in brine["molalities"]]
    step_cols = ["water_removed_fraction", "concentration_factor", "temp_c", "liquid_water_kg", *species,
                 "water_activity", "ionic_strength", "density_kg_per_l", "solids"]
    steps_export = steps[step_cols].rename(columns={s: f"{s}_mol_per_kg_water" for s in species})
    steps_export = pd.concat([steps_export, m.add_suffix("_g_per_kg_initial_brine")], axis=1)
    steps_export["stop_reason"] = res.stop_reason
    steps_export["exclude"] = "+".join(res.exclude)
    events_export = ev.rename(columns={s: f"{s}_mol_per_kg_water" for s in species})
    store = {
        "process": process, "mode": mode, "first": res.first_solid, "end_point": res.end_point,
        "complete": res.complete, "stop_reason": res.stop_reason, "exclude": list(res.exclude),
        "sentence": sentence,
        "steps": stored(steps[["water_removed_fraction", "concentration_factor", "temp_c", *species]]),
        "events": stored(ev[["solid", "event", "point", "concentration_factor", "water_removed_fraction", "temp_c",
                             *species]]),
        "tables": {"events": stored(events_export), "summary": stored(summary), "steps": stored(steps_export)},
    }
    events_table = table(_events_view(ev), id="path-events-table", digits={"temperature (°C)": 3})
    summary_table = table(summary, id="path-summary-table", headers={
        "mol_per_kg_water": "mol per kg initial water", "g_per_kg_water": "g per kg initial water",
        "g_per_kg_brine": "g per kg initial brine", "kg_per_m3_brine": "kg per m³ initial brine"})
    warn = messages.warnings_box(res.warnings, "Validity of this path")
    return store, sentence, fig, events_table, summary_table, warn, None


def register(app):
    app.callback(Output("path-result", "data"), Output("path-sentence", "children"), Output("path-graph", "figure"),
                 Output("path-events", "children"), Output("path-summary", "children"), Output("path-warn", "children"),
                 Output("path-msg", "children"), Output("path-db", "children"),
                 Input("brine", "data"), Input("temp-c", "data"), Input("path-process", "value"),
                 Input("path-mode", "value"), Input("cool-start", "value"), Input("cool-end", "value"),
                 Input("path-scale", "value"), Input("database", "data"), Input("path-exclude", "value"))(update_path)
