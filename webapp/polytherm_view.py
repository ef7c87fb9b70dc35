"""The solubility-against-temperature view: the polytherm of each salt of the system, with its
hydrate transitions (pk.polytherm)."""

from __future__ import annotations

from functools import lru_cache

import pandas as pd
from dash import Input, Output, dcc, html, no_update
from dash.exceptions import PreventUpdate

import phasekit as pk
from phasekit.chemistry.salts import salt_formula_mass
from phasekit.equilibrium.solubility import salt_solids
from phasekit.errors import InputError, PhasekitError
from webapp import database, messages
from webapp.diagram_view import parse_temperature
from webapp.figures import polytherm_figure
from webapp.style import graph_config
from webapp.systems import get_system
from webapp.tables import export_buttons, figure_buttons, stored, table

STEP_C = 1.0


def layout(inputs: dict) -> html.Div:
    q = inputs["polytherm"]
    return html.Div([
        html.Div([
            html.Label("From", htmlFor="poly-tmin"),
            dcc.Input(id="poly-tmin", value=q["t_min_c"], type="text", debounce=True, inputMode="decimal",
                      className="pk-field pk-field-short"),
            html.Label("to", htmlFor="poly-tmax"),
            dcc.Input(id="poly-tmax", value=q["t_max_c"], type="text", debounce=True, inputMode="decimal",
                      className="pk-field pk-field-short"),
            html.Span("°C"),
            dcc.RadioItems(id="poly-basis", value=q["basis"], inline=True, className="pk-radio",
                           options=[{"label": "mass %", "value": "mass_percent"},
                                    {"label": "g per 100 g water", "value": "grams_per_100g_water"},
                                    {"label": "mol/kg water", "value": "molality"}]),
        ], className="pk-toolbar pk-toolbar-wrap"),
        html.Div(id="poly-msg", **{"aria-live": "polite"}),
        dcc.Loading(dcc.Graph(id="poly-graph", config=graph_config("phasekit-solubility"), style={"height": "480px"}),
                    type="circle", delay_show=150),
        html.Div(id="poly-db"),
        figure_buttons("poly-graph"),
        html.Div(id="poly-warn"),
        html.H3("Transitions between solids"),
        html.Div(id="poly-transitions"),
        export_buttons("transitions"),
        html.Div([html.H3("Solubility curves"), export_buttons("polytherms")]),
    ], className="pk-view")


def salt_range(salt: str, model) -> tuple[float, float]:
    """Temperatures (°C) covered by the solids of a salt in the database of ``model``."""
    _, idx = salt_solids(model, salt)
    rng = model.solids.t_range[idx]
    return float(rng[:, 0].min()), float(rng[:, 1].max())


@lru_cache(maxsize=64)
def polytherm(salt: str, t0: float, t1: float, db_key: tuple = (database.EMBEDDED,)):
    """The library's polytherm of a salt with the database of ``db_key`` (cached)."""
    return pk.polytherm(salt, t_min_c=t0, t_max_c=t1, step_c=STEP_C, model=database.model_by_key(db_key))


def update_polytherm(system_key, tmin_text, tmax_text, basis, temp_c, tab, db=None):
    """Callback: polytherms of the salts of the system over the chosen range (clipped to each salt's data),
    with the database chosen; computed when the view is shown."""
    if tab != "polytherm":
        raise PreventUpdate
    keep = (no_update,) * 4
    try:
        model = database.model_for(db)
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "the database")), no_update)
    key = database.key_of(db)
    try:
        t0 = parse_temperature(tmin_text, "from (°C)")
        t1 = parse_temperature(tmax_text, "to (°C)")
        if t1 <= t0:
            raise InputError("to (°C)", tmax_text, f"a temperature above {t0:g} °C")
    except PhasekitError as exc:
        return (*keep, messages.error(str(exc)), no_update)
    system = get_system(system_key)
    curves, trans, notes, warns = {}, {}, [], []
    for salt in system.salts:
        try:
            lo, hi = salt_range(salt, model)
            a, b = max(t0, lo), min(t1, hi)
            if b - a < STEP_C:
                notes.append(f"{salt}: the database covers {lo:g}–{hi:g} °C only, outside the chosen range.")
                continue
            if (a, b) != (t0, t1):
                notes.append(f"{salt}: drawn over {a:g}–{b:g} °C, the range of its data.")
            c, tr = polytherm(salt, a, b, key)
        except PhasekitError as exc:
            notes.append(f"{salt}: {exc}")
            continue
        except Exception as exc:
            notes.append(f"{salt}: {messages.describe(exc, 'the polytherm')}")
            continue
        curves[salt] = c
        warns += [f"{salt}: {w}" for w in c.attrs.get("warnings", [])]
        tr = tr.copy()
        tr["grams_per_100g_water"] = tr["molality"] * salt_formula_mass(salt) / 10.0
        tr["mass_percent"] = 100 * tr["grams_per_100g_water"] / (100 + tr["grams_per_100g_water"])
        trans[salt] = tr
    if not curves:
        return (*keep, messages.error(" ".join(notes) or "no salt of this system has solubility data"), no_update)
    fig = polytherm_figure(curves, trans, basis, float(temp_c) if temp_c is not None else None)
    all_tr = pd.concat([t.assign(salt=s) for s, t in trans.items()], ignore_index=True) if trans else pd.DataFrame()
    if len(all_tr):
        view = all_tr[["salt", "solid_below", "solid_above", "temp_c", "molality", "mass_percent", "water_activity"]]
        tr_table = table(view, id="poly-transitions-table", headers={
            "solid_below": "solid below", "solid_above": "solid above", "temp_c": "temperature (°C)",
            "molality": "mol/kg water", "mass_percent": "mass %", "water_activity": "water activity"})
    else:
        view = pd.DataFrame(columns=["salt", "solid_below", "solid_above", "temp_c"])
        tr_table = messages.note("No change of the stable solid in this range.")
    curves_all = pd.concat([c.assign(salt=s) for s, c in curves.items()], ignore_index=True)
    store = {"tables": {"transitions": stored(view), "polytherms": stored(curves_all)}, "database": model.label}
    msg = html.Div([messages.note(n) for n in notes]) if notes else None
    return (fig, tr_table, store, messages.warnings_box(warns, "Validity of these curves"), msg,
            database.label_line(model, id="poly-db-label"))


def register(app):
    app.callback(Output("poly-graph", "figure"), Output("poly-transitions", "children"), Output("res-poly", "data"),
                 Output("poly-warn", "children"), Output("poly-msg", "children"), Output("poly-db", "children"),
                 Input("system", "value"), Input("poly-tmin", "value"), Input("poly-tmax", "value"),
                 Input("poly-basis", "value"), Input("temp-c", "data"), Input("views", "value"),
                 Input("database", "data"))(update_polytherm)
