"""The saturation view: the state of the brine with respect to every solid (model.saturation)."""

from __future__ import annotations

from dash import Input, Output, html, no_update
from dash.exceptions import PreventUpdate

import phasekit as pk
from phasekit.errors import PhasekitError
from webapp import database, messages
from webapp.tables import export_buttons, stored, table


def layout(inputs: dict) -> html.Div:
    return html.Div([
        html.P("Saturation index SI = log10(ion activity product / solubility product): above 0 the solid can "
               "form, below 0 it can dissolve. The last columns give how much of each solid the brine could still "
               "dissolve (negative: would have to crystallize) to reach saturation with it alone.", className="pk-hint"),
        html.Div(id="sat-msg", **{"aria-live": "polite"}),
        html.Div(id="sat-table"),
        html.Div(id="sat-db"),
        export_buttons("saturation"),
        html.Div(id="sat-warn"),
    ], className="pk-view")


def update_saturation(brine, temp_c, tab, db=None):
    """Callback: saturation states of the brine at the working temperature with the database chosen
    (computed when shown)."""
    if tab != "saturation":
        raise PreventUpdate
    keep = (no_update,) * 3
    if not brine:
        return (*keep, messages.note("Enter a brine analysis to see its saturation states."), no_update)
    try:
        model = database.model_for(db)
        df = model.saturation(pk.Brine(brine["molalities"]), float(temp_c))
    except PhasekitError as exc:
        text = str(exc)
        if "electrically neutral" in text:
            text = ("The brine is not electrically neutral: balance it on an ion in the brine panel "
                    "(the model needs a neutral brine). " + text)
        return (*keep, messages.error(text), no_update)
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "the saturation states")), no_update)
    view = df.reset_index().sort_values("saturation_index", ascending=False)
    warns = df.attrs.get("warnings", [])
    tab = table(view, id="sat-table-body", headers={
        "solid": "solid", "saturation_index": "SI", "state": "state", "formula": "formula",
        "dissolvable_mol_per_kg_water": "can dissolve, mol/kg water", "dissolvable_g_per_kg_water":
        "can dissolve, g/kg water"}, digits={"saturation_index": 3},
        row_class=lambda r: f"pk-state-{r['state']}")
    head = html.P(f"{brine.get('name') or 'Brine'} at {float(temp_c):g} °C:", className="pk-hint")
    store = {"tables": {"saturation": stored(view)}, "database": model.label}
    return ([head, tab], store, messages.warnings_box(warns, "Validity"), None,
            database.label_line(model, id="sat-db-label"))


def register(app):
    app.callback(Output("sat-table", "children"), Output("res-sat", "data"), Output("sat-warn", "children"),
                 Output("sat-msg", "children"), Output("sat-db", "children"), Input("brine", "data"),
                 Input("temp-c", "data"), Input("views", "value"), Input("database", "data"))(update_saturation)
