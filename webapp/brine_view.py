"""The brine panel: the analysis (typed, pasted or picked from an uploaded table), its charge
balance, the explicit balancing on a chosen ion, and the brine's molalities."""

from __future__ import annotations

import itertools
import time

import pandas as pd
from dash import ALL, ClientsideFunction, Input, Output, State, ctx, dcc, html, no_update
from dash.exceptions import PreventUpdate

import phasekit as pk
from phasekit.chemistry.species import SPECIES
from phasekit.errors import InputError, PhasekitError
from webapp import messages, uploads
from webapp.messages import UserInputProblem
from webapp.session import UNITS
from webapp.tables import fmt, table

PER_LITRE = ("mg/L", "g/L")


# ----------------------------------------------------------------------------- layout
def row_keys(n: int) -> list[str]:
    """Fresh keys for ``n`` rows: new rows are new components, so every callback on them runs."""
    gen = next(_GENERATION)
    return [f"{gen}.{k}" for k in range(n)]


_GENERATION = itertools.count(int(time.time() * 1000) % 10**9)


def rows_children(rows: list[dict]) -> list:
    """The editable rows of the analysis table (ion, value, remove)."""
    out = []
    for k, r in zip(row_keys(len(rows)), rows):
        out.append(html.Div([
            dcc.Input(id={"type": "ion", "row": k}, value=r.get("ion", ""), type="text", debounce=True,
                      placeholder="ion", className="pk-cell pk-cell-ion", name="ion"),
            dcc.Input(id={"type": "val", "row": k}, value=r.get("value", ""), type="text", debounce=True,
                      inputMode="decimal", placeholder="value", className="pk-cell pk-cell-val",
                      name="value"),
            html.Button("×", id={"type": "del", "row": k}, className="pk-btn pk-btn-icon", title="remove this ion"),
        ], className="pk-row"))
    return out


def layout(inputs: dict) -> html.Div:
    b = inputs["brine"]
    return html.Div([
        html.H2("Brine analysis"),
        html.Label("Sample", htmlFor="brine-name"),
        dcc.Input(id="brine-name", value=b["name"], type="text", debounce=True, className="pk-field"),
        html.Div([
            html.Div([html.Label("Units", htmlFor="brine-units"),
                      dcc.Dropdown(id="brine-units", options=UNITS, value=b["units"], clearable=False,
                                   searchable=False, className="pk-dropdown")], className="pk-col"),
            html.Div([html.Label("Density, kg/L (optional)", htmlFor="brine-density"),
                      dcc.Input(id="brine-density", value=b["density"], type="text", debounce=True,
                                inputMode="decimal", className="pk-field",
                                placeholder="estimated if empty")], className="pk-col"),
        ], className="pk-pair"),
        html.Div(id="density-msg"),
        html.Div([html.Span("ion", className="pk-head-ion"), html.Span("value", className="pk-head-val")],
                 className="pk-row pk-row-head"),
        html.Div(rows_children(b["rows"]), id="brine-rows"),
        html.Button("+ add ion", id="brine-add", className="pk-btn pk-btn-small"),
        html.Div(id="brine-msg", **{"aria-live": "polite"}),
        html.Div(id="cb-panel", className="pk-cb"),
        html.Div([
            dcc.Dropdown(id="balance-ion", options=[{"label": "auto: major ion of the short side", "value": "auto"}]
                         + list(SPECIES), value="auto", clearable=False, searchable=False,
                         className="pk-dropdown pk-dropdown-small"),
            html.Button("Balance on this ion", id="balance-go", className="pk-btn"),
            html.Button("Use as analysed", id="balance-undo", className="pk-btn pk-btn-quiet"),
        ], className="pk-balance"),
        html.Div(id="brine-molal"),
        html.Details([
            html.Summary("Paste a row"),
            html.P("A line of ions and a line of values, one line of values in the order of the table, or one "
                   "'ion, value' pair per line; tab, comma or semicolon separated.", className="pk-hint"),
            dcc.Textarea(id="brine-paste", value="", className="pk-textarea", rows=3,
                         placeholder="Na\tK\tMg\tCa\tCl\tSO4\n10850\t402\t1295\t415\t19480\t2725"),
            html.Button("Use pasted values", id="brine-paste-go", className="pk-btn pk-btn-small"),
            html.Div(id="paste-msg"),
        ], className="pk-details"),
        html.Details([
            html.Summary("Table of analyses (CSV or XLSX)"),
            dcc.Upload(id="analyses-upload", children=html.Div(["Drop a file here or ", html.A("choose one")]),
                       className="pk-upload", multiple=False),
            html.P(f"One analysis per row, one column per ion (in the units above), optional 'sample' and "
                   f"'density' columns; at most {uploads.MAX_UPLOAD_BYTES // (1024 * 1024)} MB and "
                   f"{uploads.MAX_ROWS} rows.", className="pk-hint"),
            dcc.Store(id="analyses-upload-checked"),
            html.Div(id="upload-msg"),
            dcc.Dropdown(id="analyses-pick", options=[], placeholder="choose an analysis", className="pk-dropdown"),
            html.Button("Use this analysis", id="analyses-use", className="pk-btn pk-btn-small"),
            html.Div(id="analyses-msg"),
        ], className="pk-details", open=True),
    ], className="pk-panel pk-brine")


# ----------------------------------------------------------------------------- the brine
def build_brine(rows: list[dict], units: str, density: str, balance_on: str | None):
    """The brine of the analysis table, through the library.

    Returns
    -------
    (raw, brine) : tuple of Brine
        The brine as analysed and the one used (balanced on ``balance_on`` if set).

    Raises
    ------
    PhasekitError, UserInputProblem
    """
    values: dict[str, str] = {}
    for i, r in enumerate(rows):
        ion, val = (r.get("ion") or "").strip(), (r.get("value") or "").strip()
        if not ion and not val:
            continue
        if not ion:
            raise UserInputProblem(f"analysis row {i + 1}: value {val!r} has no ion; write the ion beside it")
        if ion in values:
            raise UserInputProblem(f"analysis: ion {ion!r} is given twice; keep one row per ion")
        values[ion] = val
    if not values:
        raise UserInputProblem("analysis: no ion given; type at least one ion and its value")
    dens = (density or "").strip()
    if units in PER_LITRE:
        density_arg = dens or None
    else:
        if dens:
            try:
                float(dens)
            except ValueError:
                raise InputError("density", dens, "a number in kg/L (used only for mg/L and g/L), or nothing") \
                    from None
        density_arg = None
    try:
        raw = pk.Brine.from_analysis(values, units=units, density=density_arg)
    except InputError as err:
        if balance_on and err.field == "charge balance":
            raw = None
        else:
            raise
    if not balance_on:
        return raw, raw
    if raw is None:
        brine = pk.Brine.from_analysis(values, units=units, density=density_arg, balance_on=balance_on)
        return brine, brine
    return raw, raw.balance(on=balance_on)  # the library's rule: the ion is increased, never lowered


def brine_state(name: str, raw, brine, balance_on) -> dict:
    """What the other views need from the brine (JSON-ready)."""
    return {"name": name or "brine", "molalities": brine.molalities, "charge_balance": raw.charge_balance(),
            "balanced_charge": brine.charge_balance(), "balanced_on": balance_on, "warnings": list(brine.warnings)}


def _cb_panel(raw, brine, balance_on):
    cb = raw.charge_balance()
    items = [html.Span("Charge balance as analysed: "), html.B(f"{cb:+.2f} %", id="cb-value"),
             html.Span(f"  (cations {raw.cation_equivalents:.4g}, anions {raw.anion_equivalents:.4g} eq/kg water)",
                       className="pk-hint")]
    if balance_on:
        detail = brine.warnings[-1].split(": ", 1)[-1] if brine.warnings else ""
        how = f"Balanced on {brine.balance_change['ion']} (auto: the major ion of the short side)" \
            if balance_on == "auto" and brine.balance_change else f"Balanced on {balance_on}"
        state = html.Div([html.B(f"{how}, as you asked: "), html.Span(detail),
                          html.Span(" ('Use as analysed' undoes it.)", className="pk-hint")],
                         className="pk-msg pk-note", id="balance-state")
    elif abs(cb) > 1e-4:
        state = html.Div("Not balanced. Saturation states and paths need an electrically neutral brine: choose "
                         "an ion and press 'Balance on this ion' (nothing is balanced without you asking).",
                         className="pk-msg pk-warn", id="balance-state")
    else:
        state = html.Div("Electrically neutral as analysed.", className="pk-msg pk-note", id="balance-state")
    return [html.Div(items), state]


def _molal_table(brine):
    m = brine.molalities
    df = pd.DataFrame({"ion": list(m), "mol/kg water": list(m.values()),
                       "mass %": [brine.mass_percent[s] for s in m]})
    extra = html.Div([
        html.Span(f"ionic strength {fmt(brine.ionic_strength)} mol/kg water · dissolved ions "
                  f"{fmt(brine.total_dissolved_solids)} g/kg brine"),
    ], className="pk-hint")
    return [html.H3("The brine used"), table(df, digits={"mol/kg water": 5, "mass %": 4}, id="brine-molal-table"), extra]


def update_brine(ions, values, units, density, balance_on, name):
    """Callback: the brine from the analysis table (previous brine kept on bad input)."""
    rows = [{"ion": i or "", "value": v or ""} for i, v in zip(ions, values)]
    try:
        raw, brine = build_brine(rows, units, density, balance_on)
    except (PhasekitError, UserInputProblem) as exc:
        return no_update, messages.error(messages.describe(exc)), no_update, no_update, _density_msg(exc)
    except Exception as exc:  # never a traceback in the browser
        return no_update, messages.error(messages.describe(exc, "the brine analysis")), no_update, no_update, None
    warn = messages.warnings_box([w for w in brine.warnings if not w.startswith("balanced on")],
                                 "About this analysis")
    return (brine_state(name, raw, brine, balance_on), warn, _cb_panel(raw, brine, balance_on), _molal_table(brine),
            None)


def _density_msg(exc):
    if isinstance(exc, InputError) and exc.field == "density":
        return messages.error(str(exc))
    return None


# ----------------------------------------------------------------------------- callbacks
def edit_rows(_add, _dels, _paste, _use, ions, values, paste_text, analyses, pick):
    """Callback: add or remove a row, take a pasted row, or take a row of the uploaded table."""
    trig = ctx.triggered_id
    if trig is None or not (ctx.triggered and ctx.triggered[0].get("value")):
        raise PreventUpdate
    rows = [{"ion": i or "", "value": v or ""} for i, v in zip(ions, values)]
    if trig == "brine-add":
        return rows_children(rows + [{"ion": "", "value": ""}]), no_update, no_update, no_update, no_update
    if isinstance(trig, dict) and trig.get("type") == "del":
        k = deleted_index(trig)
        return rows_children([r for i, r in enumerate(rows) if i != k]), no_update, no_update, no_update, no_update
    if trig == "brine-paste-go":
        try:
            new = uploads.parse_pasted(paste_text, [r["ion"] for r in rows])
        except UserInputProblem as exc:
            return no_update, messages.error(str(exc)), no_update, no_update, no_update
        return rows_children(new), messages.note(f"{len(new)} values taken from the pasted text."), no_update, \
            no_update, no_update
    if trig == "analyses-use":
        if not analyses or pick is None:
            return no_update, no_update, no_update, no_update, messages.error(
                "analyses: choose an analysis of the uploaded table first", keep_note=False)
        s = uploads.sample(analyses, int(pick))
        return rows_children(s["rows"]), no_update, s["name"], s["density"], messages.note(
            f"Analysis {s['name']!r} copied into the table above.")
    raise PreventUpdate


def deleted_index(trig) -> int:
    """Position of the row whose remove button was pressed (the second input of the callback)."""
    ids = [item["id"] for item in ctx.inputs_list[1]]
    return ids.index(trig)


def set_balance(_go, _undo, ion):
    """Callback: balance on the chosen ion, or go back to the brine as analysed."""
    if ctx.triggered_id == "balance-go":
        return ion
    if ctx.triggered_id == "balance-undo":
        return None
    raise PreventUpdate


def take_upload(checked):
    """Callback: read an uploaded table of analyses (already size-checked in the browser)."""
    if not checked:
        raise PreventUpdate
    if checked.get("error"):
        return no_update, messages.error(checked["error"])
    name = checked.get("filename") or "upload"
    try:
        raw = uploads.decode(checked.get("contents"), name)
        tab = uploads.read_analyses(raw, name)
    except UserInputProblem as exc:
        return no_update, messages.error(str(exc))
    except Exception as exc:
        return no_update, messages.error(messages.describe(exc, "the upload"))
    note = f"{name}: {len(tab['rows'])} analyses read"
    if tab["ignored"]:
        note += f" (columns shown but not used: {', '.join(tab['ignored'])})"
    if tab.get("notes"):
        note += f" ({'; '.join(tab['notes'])})"
    return tab, messages.note(note + ". Choose one below.")


def pick_options(analyses, units):
    """Callback: the analyses of the uploaded table, each with its charge balance or its problem."""
    if not analyses:
        return [], None, None
    labels = uploads.sample_labels(analyses)
    options, problems = [], []
    marked = analyses.get("problems") if isinstance(analyses.get("problems"), dict) else {}
    for i, label in enumerate(labels):
        if marked.get(str(i)):
            options.append({"label": f"{label} — needs attention", "value": i})
            problems.append(f"{label}: {marked[str(i)]}")
            continue
        s = uploads.sample(analyses, i)
        try:
            raw, _ = build_brine(s["rows"], units, s["density"], None)
            options.append({"label": f"{label} (charge balance {raw.charge_balance():+.1f} %)", "value": i})
        except (PhasekitError, UserInputProblem) as exc:
            options.append({"label": f"{label} — needs attention", "value": i})
            problems.append(f"{label}: {exc}")
        except Exception as exc:
            options.append({"label": f"{label} — needs attention", "value": i})
            problems.append(f"{label}: {messages.describe(exc, 'the upload')}")
    box = messages.warnings_box(problems, "Analyses that cannot be used as they are") if problems else None
    return options, (0 if options else None), box


def register(app):
    app.callback(
        Output("brine", "data"), Output("brine-msg", "children"), Output("cb-panel", "children"),
        Output("brine-molal", "children"), Output("density-msg", "children"),
        Input({"type": "ion", "row": ALL}, "value"), Input({"type": "val", "row": ALL}, "value"),
        Input("brine-units", "value"), Input("brine-density", "value"), Input("balance-on", "data"),
        Input("brine-name", "value"),
    )(update_brine)
    app.callback(
        Output("brine-rows", "children", allow_duplicate=True), Output("paste-msg", "children"),
        Output("brine-name", "value", allow_duplicate=True), Output("brine-density", "value", allow_duplicate=True),
        Output("analyses-msg", "children"),
        Input("brine-add", "n_clicks"), Input({"type": "del", "row": ALL}, "n_clicks"),
        Input("brine-paste-go", "n_clicks"), Input("analyses-use", "n_clicks"),
        State({"type": "ion", "row": ALL}, "value"), State({"type": "val", "row": ALL}, "value"),
        State("brine-paste", "value"), State("analyses", "data"), State("analyses-pick", "value"),
        prevent_initial_call=True,
    )(edit_rows)
    app.callback(Output("balance-on", "data", allow_duplicate=True), Input("balance-go", "n_clicks"),
                 Input("balance-undo", "n_clicks"), State("balance-ion", "value"),
                 prevent_initial_call=True)(set_balance)
    app.clientside_callback(
        ClientsideFunction("phasekit", "checkUpload"),
        Output("analyses-upload-checked", "data"), Input("analyses-upload", "contents"),
        State("analyses-upload", "filename"), prevent_initial_call=True)
    app.callback(Output("analyses", "data", allow_duplicate=True), Output("upload-msg", "children"),
                 Input("analyses-upload-checked", "data"), prevent_initial_call=True)(take_upload)
    app.callback(Output("analyses-pick", "options"), Output("analyses-pick", "value"),
                 Output("analyses-msg", "children", allow_duplicate=True),
                 Input("analyses", "data"), Input("brine-units", "value"),
                 prevent_initial_call="initial_duplicate")(pick_options)
