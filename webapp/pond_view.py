"""The pond-train view: a small editable table of ponds, the harvest of each and the brine passed on
(pk.pond_train)."""

from __future__ import annotations

import pandas as pd
from dash import ALL, Input, Output, State, ctx, dcc, html, no_update
from dash.exceptions import PreventUpdate

import phasekit as pk
from phasekit.errors import InputError, PhasekitError
from webapp import database, messages
from webapp.brine_view import row_keys
from webapp.diagram_view import parse_temperature
from webapp.figures import pond_figure
from webapp.session import POND_ENDS
from webapp.style import graph_config
from webapp.tables import export_buttons, figure_buttons, stored, table

Y_TITLE = "kg per tonne of intake brine"


def rows_children(ponds: list[dict]) -> list:
    """The editable rows of the pond table."""
    out = []
    for k, p in zip(row_keys(len(ponds)), ponds):
        out.append(html.Div([
            dcc.Input(id={"type": "pond-name", "row": k}, value=p.get("name", ""), type="text", debounce=True,
                      className="pk-cell pk-cell-name", name="name"),
            dcc.Input(id={"type": "pond-temp", "row": k}, value=p.get("temp_c", ""), type="text", debounce=True,
                      inputMode="decimal", className="pk-cell pk-cell-temp",
                      name="temperature"),
            dcc.Dropdown(id={"type": "pond-end", "row": k}, value=p.get("end", "until_saturated"), clearable=False,
                         searchable=False, options=[{"label": v, "value": key} for key, v in POND_ENDS.items()],
                         className="pk-dropdown pk-cell-end"),
            dcc.Input(id={"type": "pond-value", "row": k}, value=p.get("value", ""), type="text", debounce=True,
                      className="pk-cell pk-cell-value", name="end value"),
            html.Button("×", id={"type": "pond-del", "row": k}, className="pk-btn pk-btn-icon", title="remove this pond"),
        ], className="pk-row pk-pond-row"))
    return out


def layout(inputs: dict) -> html.Div:
    return html.Div([
        html.P("Each pond evaporates the brine it receives at its temperature until its end condition, keeps the "
               "solids that form (they are harvested) and passes the brine on to the next pond.", className="pk-hint"),
        html.Div([html.Span("pond"), html.Span("°C"), html.Span("end condition"), html.Span("value")],
                 className="pk-row pk-row-head pk-pond-row"),
        html.Div(rows_children(inputs["ponds"]), id="pond-rows"),
        html.Div([html.Label("Solids kept out", htmlFor="pond-exclude",
                                 title="solids that do not form in the ponds on their time scale (comma separated): "
                                 "anhydrite, for one, where the ponds give gypsum"),
                  dcc.Input(id="pond-exclude", value=inputs.get("ponds_exclude", ""), type="text", debounce=True,
                            placeholder="e.g. anhydrite", className="pk-field")],
                 className="pk-inline"),
        html.Div([html.Button("+ add pond", id="pond-add", className="pk-btn pk-btn-small"),
                  html.Button("Run the pond train", id="pond-run", className="pk-btn")], className="pk-toolbar"),
        html.Div(id="pond-msg", **{"aria-live": "polite"}),
        dcc.Loading([
            html.Div(id="pond-summary"),
            html.Div(id="pond-db"),
            dcc.Graph(id="pond-graph", config=graph_config("phasekit-ponds"), style={"height": "400px"}),
        ], type="circle", delay_show=150),
        figure_buttons("pond-graph"),
        export_buttons("ponds", "Download pond table"),
        html.H3("Harvest per pond"), html.Div(id="pond-harvest"), export_buttons("harvest"),
        html.H3("Brine passed on by each pond"), html.Div(id="pond-outflow"), export_buttons("outflow"),
    ], className="pk-view")


def parse_ponds(rows: list[dict], model=None) -> list:
    """Ponds of the library from the rows of the table (text as typed); solids named as in ``model``'s
    database (the embedded one by default)."""
    model = model if model is not None else database.model_for(None)
    if not rows:
        raise InputError("ponds", "none", "at least one pond: press '+ add pond'")
    out, names = [], set()
    for i, r in enumerate(rows):
        name = (r.get("name") or "").strip() or f"pond {i + 1}"
        if name in names:
            raise InputError(f"pond {i + 1} name", name, "a name used once in the train")
        names.add(name)
        label = f"pond {i + 1} ({name})"
        t = parse_temperature(r.get("temp_c"), f"{label} temperature")
        end, value = r.get("end"), (r.get("value") or "").strip()
        if end == "until_saturated":
            solids = [s.strip() for s in value.replace("+", ",").split(",") if s.strip()]
            if not solids:
                raise InputError(f"{label} end value", value, "the solid (or solids, comma separated) at whose "
                                                              "saturation the brine is passed on, e.g. 'halite'")
            solids = [model.solids.resolve(s) for s in solids]
            out.append(pk.Pond(name, t, until_saturated=solids))
            continue
        try:
            x = float(value.replace(",", "."))
        except ValueError:
            x = None
        if end == "water_removed":
            if x is None or not 0 < x < 1:
                raise InputError(f"{label} water evaporated", value, "a fraction of the inflow's water between 0 and 1")
            out.append(pk.Pond(name, t, water_removed=x))
        else:
            if x is None or not x > 1:
                raise InputError(f"{label} concentration factor", value, "a number above 1")
            out.append(pk.Pond(name, t, concentration_factor=x))
    return out


def run_train(molalities: dict, ponds: list, model=None, exclude=()):
    """The library's pond train on this brine (with ``model``, the embedded database by default)."""
    return pk.pond_train(pk.Brine(molalities), ponds, model=model, exclude=list(exclude))


def update_ponds(_run, tab, brine, db, names, temps, ends, values, exclude_text=""):
    """Callback: run the pond train with the database chosen (when the view is shown; previous result kept
    on any error)."""
    if tab != "ponds":
        raise PreventUpdate
    keep = (no_update,) * 5
    if not brine:
        return (*keep, messages.note("Enter a brine analysis to run the pond train."), no_update)
    rows = [{"name": n, "temp_c": t, "end": e, "value": v} for n, t, e, v in zip(names, temps, ends, values)]
    try:
        model = database.model_for(db)
        ponds = parse_ponds(rows, model)
        from webapp.path_view import parse_exclude

        excl = parse_exclude(exclude_text, model)
        res = run_train(brine["molalities"], ponds, model, excl)
    except PhasekitError as exc:
        text = messages.describe(exc)
        if "electrically neutral" in text:
            text = "The brine is not electrically neutral: balance it on an ion in the brine panel. " + text
        return (*keep, messages.error(text), no_update)
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "the pond train")), no_update)
    first = next(iter(res.paths.values()))
    per_t = 1.0 / first.initial_solution_mass_kg  # kg of intake brine per kg of its water -> per tonne
    harvest = res.harvest.copy()
    harvest["amount"] = harvest["g"] * per_t
    order = list(res.ponds["pond"])
    fig = pond_figure(harvest, order, Y_TITLE)
    hv = pd.DataFrame({"pond": harvest["pond"], "solid": harvest["solid"],
                       "g per kg intake water": harvest["g"], Y_TITLE: harvest["amount"],
                       "share of the pond's harvest (%)": 100 * harvest["purity"]})
    pv = res.ponds.copy()
    pv["harvest_kg_per_t_intake_brine"] = pv["harvest_g"] * per_t
    pond_view = pd.DataFrame({
        "pond": pv["pond"], "°C": pv["temp_c"], "concentration factor in the pond": pv["concentration_factor"],
        "concentration factor from intake": pv["cumulative_concentration_factor"],
        "water evaporated (kg per kg intake water)": pv["evaporated_kg"],
        "harvest (" + Y_TITLE + ")": pv["harvest_kg_per_t_intake_brine"], "main solid": pv["main_solid"],
        "main solid share (%)": 100 * pv["purity"], "end": pv["end"]})
    out_rows = []
    for name, path in res.paths.items():
        last = path.steps.iloc[-1]
        row = {"pond": name}
        row.update({f"{s} (mol/kg water)": float(last[s]) for s in brine["molalities"] if s in last})
        row["density (kg/L)"] = float(last["density_kg_per_l"])
        out_rows.append(row)
    outflow = pd.DataFrame(out_rows)
    unreached = [p.name for p in ponds if p.name not in res.paths]
    if not res.complete:
        last = res.ponds["pond"].iloc[-1]
        why = ("the brine reached the database's validity limit" if res.stop_reason == "validity limit"
               else "the solver failed")
        note = messages.note(f"The train stopped in {last}: {why}; the ponds after it ({', '.join(unreached)}) were "
                             "not run. What is shown is the part computed up to there." if unreached else
                             f"The last pond, {last}, stopped before its end condition: {why}.")
    else:
        note = (messages.note(f"The brine dried up before: {', '.join(unreached)}.") if unreached else None)
    if res.exclude:
        note = html.Div([note, messages.note(f"Kept out of every pond: {', '.join(res.exclude)}.")])
    pond_view["exclude"] = "+".join(res.exclude)
    store = {"tables": {"ponds": stored(pond_view), "harvest": stored(hv), "outflow": stored(outflow)},
             "database": model.label, "exclude": list(res.exclude), "complete": res.complete,
             "stop_reason": res.stop_reason}
    summary = [table(pond_view, id="pond-summary-table"), note]
    return (summary, fig, table(hv, id="pond-harvest-table"), table(outflow, id="pond-outflow-table", digits={}),
            store, None, database.label_line(model, id="pond-db-label"))


def edit_rows(_add, _dels, names, temps, ends, values):
    """Callback: add or remove a pond."""
    trig = ctx.triggered_id
    if trig is None or not (ctx.triggered and ctx.triggered[0].get("value")):
        raise PreventUpdate
    rows = [{"name": n or "", "temp_c": t or "", "end": e, "value": v or ""}
            for n, t, e, v in zip(names, temps, ends, values)]
    if trig == "pond-add":
        last = rows[-1] if rows else {"temp_c": "30"}
        rows.append({"name": f"pond {len(rows) + 1}", "temp_c": last["temp_c"], "end": "concentration_factor",
                     "value": "2"})
    elif isinstance(trig, dict):
        ids = [item["id"] for item in ctx.inputs_list[1]]
        rows = [r for i, r in enumerate(rows) if i != ids.index(trig)]
    return rows_children(rows)


def register(app):
    fields = [State({"type": t, "row": ALL}, "value") for t in ("pond-name", "pond-temp", "pond-end", "pond-value")]
    exclude = State("pond-exclude", "value")
    app.callback(Output("pond-summary", "children"), Output("pond-graph", "figure"),
                 Output("pond-harvest", "children"), Output("pond-outflow", "children"), Output("res-ponds", "data"),
                 Output("pond-msg", "children"), Output("pond-db", "children"),
                 Input("pond-run", "n_clicks"), Input("views", "value"), Input("brine", "data"), Input("database", "data"),
                 *[Input(f.component_id, f.component_property) for f in (*fields, exclude)])(update_ponds)
    app.callback(Output("pond-rows", "children", allow_duplicate=True), Input("pond-add", "n_clicks"),
                 Input({"type": "pond-del", "row": ALL}, "n_clicks"), *fields, prevent_initial_call=True)(edit_rows)
