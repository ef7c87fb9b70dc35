"""The conversion-cycle view: one hot/cold crystallization cycle of a conversion process, e.g.
NaNO3 + KCl → KNO3 + NaCl (pk.hot_cold_cycle): the salt harvested hot, the salt harvested cold,
the yields and the mother liquor sent back.

The feed is given in this view as amounts of salts in mol per kg of water (it is not the brine of the
brine panel). Every number comes from the library; this module reads the fields, calls it and places
the result.
"""

from __future__ import annotations

import math
from functools import lru_cache

import pandas as pd
from dash import Input, Output, dcc, html, no_update
from dash.exceptions import PreventUpdate

import phasekit as pk
from phasekit.errors import InputError, PhasekitError
from webapp import database, diagram_source, messages
from webapp.diagram_view import parse_temperature
from webapp.figures import CYCLE_SYSTEM, cycle_figure
from webapp.session import CONVERSION_KEYS, CONVERSION_SALTS
from webapp.style import graph_config
from webapp.tables import export_buttons, figure_buttons, stored, table

#: the fields of the view: key of the session's "conversion" entry -> (id, label, hint)
FIELDS = {
    "NaNO3": ("conv-nano3", "NaNO3 (mol per kg water)", ""),
    "KCl": ("conv-kcl", "KCl (mol per kg water)", ""),
    "NaCl": ("conv-nacl", "NaCl (mol per kg water)", "optional: recycle liquor"),
    "KNO3": ("conv-kno3", "KNO3 (mol per kg water)", "optional: recycle liquor"),
    "hot_c": ("conv-hot", "Hot crystallizer (°C)", "evaporation, the hot crop is separated"),
    "cold_c": ("conv-cold", "Cold crystallizer (°C)", "cooling, the cold crop is separated"),
    "dilution": ("conv-dilution", "Water added before cooling", "'auto' or kg per kg feed water"),
    "hot_solid": ("conv-hot-solid", "Solid harvested hot", "mineral name or salt formula"),
    "cold_solid": ("conv-cold-solid", "Solid harvested cold", "mineral name or salt formula"),
    "exclude": ("conv-exclude", "Solids kept out", "optional, comma separated: solids that do not form in your "
                                                   "crystallizers"),
}
#: the ids of the fields, in the order of the session's keys (the order of collectInputs' arguments)
IDS = [FIELDS[k][0] for k in CONVERSION_KEYS]
#: the library's argument names (InputError.field) -> the field of this view
LIB_FIELDS = {"hot_c": "hot_c", "cold_c": "cold_c", "dilution": "dilution", "hot_solid": "hot_solid",
              "cold_solid": "cold_solid", "exclude": "exclude"}
PER = "g per kg feed water"
STAGE_TEXT = {"hot": "hot: evaporate, separate the hot crop", "dilution": "add water to the hot mother liquor",
              "cold": "cold: cool, separate the cold crop"}
CAUTION = ("Caution: the hot stage handles brine near its boiling point, which scalds. Nitrates are oxidizers: keep "
           "dry crystals and crusts on hot surfaces away from organic matter, fuels and reducing agents (see the "
           "cautions at the foot of the page).")


#: largest amount of a salt in the feed, mol per kg water: above what any of these salts dissolves even
#: at 100 °C (KNO3, the most soluble, about 24 mol/kg: 246 g per 100 g water, CRC Handbook of Chemistry
#: and Physics, aqueous solubility table, from memory); a larger value is a slip of units or digits
MAX_FEED_MOLALITY = 50.0


def label(key: str) -> str:
    """The label of a field, as the messages name it."""
    return FIELDS[key][1]


def _field(key: str, value: str) -> html.Div:
    fid, text, hint = FIELDS[key]
    extra = {"list": "conv-solids"} if key.endswith("_solid") else {}
    return html.Div([
        html.Label(text, htmlFor=fid),
        dcc.Input(id=fid, value=value, type="text", debounce=True, className="pk-field",
                  inputMode="text" if key in ("dilution", "hot_solid", "cold_solid", "exclude") else "decimal",
                  **extra),
        html.Div(hint, className="pk-hint"),
    ], className="pk-leach-field")


def layout(inputs: dict) -> html.Div:
    c = inputs["conversion"]
    solids = database.model_for(None).solids.names
    return html.Div([
        html.P("One cycle of a conversion such as NaNO3 + KCl → KNO3 + NaCl: the feed is evaporated hot until the "
               "cold solid is about to saturate (the hot solid crystallizes and is separated hot), water is added "
               "back so that the hot solid stays dissolved on cooling, and the liquor is cooled (the cold solid "
               "crystallizes). The cold mother liquor is sent back with fresh salts. Amounts are per kg of the "
               "feed's water; the feed is given here, not in the brine panel.", className="pk-hint"),
        html.P(CAUTION, className="pk-msg pk-warn", id="conv-caution"),
        html.H3("Feed"),
        html.Div([_field(k, c[k]) for k in CONVERSION_SALTS], className="pk-leach-grid"),
        html.H3("Cycle"),
        html.Div([_field(k, c.get(k, "")) for k in ("hot_c", "cold_c", "dilution", "hot_solid", "cold_solid",
                                                     "exclude")],
                 className="pk-leach-grid"),
        html.Datalist([html.Option(value=s) for s in solids], id="conv-solids"),
        html.Div(html.Button("Run the cycle", id="conv-run", className="pk-btn"), className="pk-toolbar"),
        html.Div(id="conv-msg", **{"aria-live": "polite"}),
        dcc.Loading([
            html.P(id="conv-sentence", className="pk-sentence"),
            html.Div(id="conv-db"),
            html.Div(id="conv-warn"),
            html.Div([
                html.H3("On the phase diagram"),
                html.P("The Jänecke square Na⁺, K⁺ ∥ Cl⁻, NO₃⁻ (K / (Na + K) across, NO₃ / (Cl + NO₃) up, water "
                       "not shown) at the hot temperature, with the field boundaries at the cold temperature "
                       "dashed: the feed, the hot mother liquor (saturated with both solids) and the recycle "
                       "liquor. Water added or evaporated does not move a point on the square.",
                       className="pk-hint"),
                dcc.Graph(id="conv-graph", config=graph_config("phasekit-conversion-cycle"),
                          style={"height": "620px"}),
                figure_buttons("conv-graph"),
            ], id="conv-figure", style={"display": "none"}),
            html.Div(id="conv-fig-note"),
            html.H3("Stages"), html.Div(id="conv-stages"),
        ], type="circle", delay_show=150),
        export_buttons("conversion_stages", "Download stages"),
        html.H3("Crops"), html.Div(id="conv-crops"), export_buttons("conversion_crops", "Download crops"),
        html.H3("Yields"), html.Div(id="conv-yields"), export_buttons("conversion_yields", "Download yields"),
        html.H3("Mother liquors"),
        html.P("The hot liquor after the hot crop is separated, and the cold mother liquor (the recycle).",
               className="pk-hint"),
        html.Div(id="conv-recycle"), export_buttons("conversion_recycle", "Download mother liquors"),
    ], className="pk-view")


# ----------------------------------------------------------------------------- reading the fields
def parse_amount(text, key: str) -> float:
    """A salt amount typed by the user (mol per kg water; blank = 0)."""
    expected = f"a number >= 0 and at most {MAX_FEED_MOLALITY:g} in mol per kg water (blank = 0)"
    s = "" if text is None else str(text).strip().replace(",", ".")
    if not s:
        return 0.0
    try:
        x = float(s)
    except ValueError:
        raise InputError(label(key), text, expected) from None
    if not math.isfinite(x) or x < 0 or x > MAX_FEED_MOLALITY:
        raise InputError(label(key), text, expected)
    return x


def parse_dilution(text):
    """'auto' (or blank) or kg of water per kg of feed water."""
    s = "" if text is None else str(text).strip()
    if not s or s.lower() == "auto":
        return "auto"
    expected = "'auto' or kg of water per kg of feed water (a number >= 0)"
    try:
        x = float(s.replace(",", "."))
    except ValueError:
        raise InputError(label("dilution"), text, expected) from None
    if not math.isfinite(x) or x < 0:
        raise InputError(label("dilution"), text, expected)
    return x


def parse_solid(text, key: str, model) -> str:
    """A solid of the database, by mineral name or salt formula."""
    s = "" if text is None else str(text).strip()
    try:
        if not s:
            raise InputError(label(key), text, "a solid of the database, e.g. 'halite' or 'niter'")
        return model.solids.resolve(s)
    except InputError as exc:
        raise InputError(label(key), text, exc.expected) from None


def parse_inputs(values: dict, model) -> dict:
    """The library's arguments from the fields (text as typed), or an InputError naming the field."""
    salts = {k: parse_amount(values.get(k), k) for k in CONVERSION_SALTS}
    if not any(v > 0 for v in salts.values()):
        raise InputError("feed", "no salt", "at least one salt amount above 0 mol per kg water")
    hot = parse_temperature(values.get("hot_c"), label("hot_c"))
    cold = parse_temperature(values.get("cold_c"), label("cold_c"))
    if not cold < hot:
        raise InputError(label("cold_c"), values.get("cold_c"),
                         f"a temperature below the hot crystallizer's, {hot:g} °C")
    hs = parse_solid(values.get("hot_solid"), "hot_solid", model)
    cs = parse_solid(values.get("cold_solid"), "cold_solid", model)
    if hs == cs:
        raise InputError(label("cold_solid"), values.get("cold_solid"), f"a solid other than the hot one ({hs})")
    from webapp.path_view import parse_exclude

    excl = parse_exclude(values.get("exclude"), model, label("exclude"))
    return {"salts": {k: v for k, v in salts.items() if v > 0}, "hot_c": hot, "cold_c": cold, "hot_solid": hs,
            "cold_solid": cs, "dilution": parse_dilution(values.get("dilution")), "exclude": excl}


# ----------------------------------------------------------------------------- the library
@lru_cache(maxsize=32)
def _cycle(salts: tuple, hot_c: float, cold_c: float, hot_solid: str, cold_solid: str, dilution, db_key: tuple,
           exclude: tuple = ()):
    model = database.model_by_key(db_key)
    feed = pk.Brine.from_salts(dict(salts), units="mol/kg")
    return feed, pk.hot_cold_cycle(feed, hot_c=hot_c, cold_c=cold_c, hot_solid=hot_solid, cold_solid=cold_solid,
                                   dilution=dilution, model=model, exclude=list(exclude))


def run_cycle(args: dict, db=None):
    """The feed brine and the library's cycle for the parsed inputs (cached per inputs and database).

    Errors of the library on its own arguments are named as the fields of this view."""
    database.model_for(db)
    try:
        return _cycle(tuple(sorted(args["salts"].items())), args["hot_c"], args["cold_c"], args["hot_solid"],
                      args["cold_solid"], args["dilution"], database.key_of(db), tuple(args.get("exclude", ())))
    except InputError as exc:
        key = LIB_FIELDS.get(exc.field)
        expected = str(exc.expected).replace("at hot_c", "at the hot crystallizer's temperature")
        if key is None and expected == exc.expected:
            raise
        raise type(exc)(label(key) if key else exc.field, exc.value, expected) from None


# ----------------------------------------------------------------------------- presenting it
def _grams(x: float) -> str:
    """A mass in g for a sentence: whole grams from 100 g, else 3 significant digits."""
    return f"{x:.0f}" if x >= 100 else f"{x:.3g}"


def sentence(res, hot_solid: str, cold_solid: str) -> str:
    """One plain sentence: what is harvested hot and cold, and the yields."""
    hot_g, cold_g = res.hot_solids.get(hot_solid, 0.0), res.cold_solids.get(cold_solid, 0.0)
    yields = ", ".join(f"{ion} yield {100 * y:.0f} %" for ion, y in res.yields.items())
    text = (f"{hot_solid[0].upper() + hot_solid[1:]} is harvested hot ({_grams(hot_g)} {PER}), {cold_solid} cold "
            f"({_grams(cold_g)} g); {yields}.")
    for stage, crop, main in (("hot", res.hot_solids, hot_solid), ("cold", res.cold_solids, cold_solid)):
        others = {s: g for s, g in crop.items() if s != main and g > 0}
        if others:
            total = sum(crop.values())
            text += (f" The {stage} crop also holds " + ", ".join(f"{s} ({_grams(g)} g)" for s, g in others.items())
                     + f": {main} is {100 * crop.get(main, 0.0) / total:.0f} % of it.")
    if getattr(res, "exclude", None):
        text += f" Kept out: {', '.join(res.exclude)}."
    return text


def tables(feed, res, cold_solid: str) -> dict:
    """The tables of the view (DataFrames, the library's numbers with readable headers)."""
    st = res.stages
    stages = pd.DataFrame({
        "stage": [STAGE_TEXT.get(s, s) for s in st["stage"]],
        "temperature (°C)": st["temp_c"],
        "water evaporated (+) or added (−), kg per kg feed water": st["water_kg"],
        f"solids separated ({PER})": st["solids_g"],
        "main solid": st["main_solid"],
        "main solid share (%)": 100 * st["purity"],
    })
    rows = []
    for stage, crop in (("hot", res.hot_solids), ("cold", res.cold_solids)):
        total = sum(crop.values())
        for solid, g in sorted(crop.items(), key=lambda kv: -kv[1]):
            rows.append({"stage": stage, "solid": solid, PER: g,
                         "share of the crop (%)": 100 * g / total if total else math.nan})
    crops = pd.DataFrame(rows, columns=["stage", "solid", PER, "share of the crop (%)"])
    fed = feed.molalities
    yields = pd.DataFrame({"ion": list(res.yields),
                           "fed (mol per kg feed water)": [float(fed.get(i, 0.0)) for i in res.yields],
                           f"recovered in {cold_solid} (%)": [100 * y for y in res.yields.values()]})
    species = list(dict.fromkeys([*res.hot_liquor, *res.recycle]))
    liquors = pd.DataFrame({
        "": [f"{s} (mol per kg water)" for s in species] + ["water (kg per kg feed water)"],
        "hot liquor (before dilution)": [res.hot_liquor.get(s, 0.0) for s in species] + [res.hot_water_kg],
        "cold mother liquor (recycle)": [res.recycle.get(s, 0.0) for s in species] + [res.recycle_water_kg],
    })
    return {"conversion_stages": stages, "conversion_crops": crops, "conversion_yields": yields,
            "conversion_recycle": liquors}


def diagram_of_cycle(feed, res, args: dict, db=None) -> tuple[dict | None, list]:
    """The figure of the cycle on the library's square (its diagrams cached per temperature and database),
    and notes; (None, notes) when there is no square at the hot temperature."""
    key, model = database.key_of(db), database.model_for(db)
    hot, cold, notes = args["hot_c"], args["cold_c"], []
    try:
        hot_result = diagram_source.diagram(CYCLE_SYSTEM, hot, key)
        hot_base = diagram_source.base_figure(CYCLE_SYSTEM, hot, "triangular", "g_per_100g_water", key)
    except (diagram_source.DiagramUnavailable, PhasekitError) as exc:
        return None, [f"The cycle is not drawn: no phase diagram at {hot:g} °C ({exc})."]
    try:
        cold_result = diagram_source.diagram(CYCLE_SYSTEM, cold, key)
    except (diagram_source.DiagramUnavailable, PhasekitError) as exc:
        cold_result = None
        notes.append(f"The boundaries at {cold:g} °C are not drawn: {exc}.")
    liquors = {"feed": dict(feed.molalities), "hot liquor": dict(res.hot_liquor), "recycle liquor": dict(res.recycle)}
    fig, more = cycle_figure(hot_base, hot_result, cold_result, liquors, hot, cold, args["hot_solid"],
                             args["cold_solid"], model)
    for t, result in ((hot, hot_result), (cold, cold_result)):
        notes += [f"The square at {t:g} °C: {w}" for w in (getattr(result, "warnings", None) or [])]
    return fig, notes + more


def update_conversion(_run, tab, db, *values):
    """Callback: run the cycle with the database chosen (when the view is shown; the previous result is kept
    on any error, and the fields keep what was typed)."""
    if tab != "conversion":
        raise PreventUpdate
    keep = (no_update,) * 11
    fields = dict(zip(CONVERSION_KEYS, values))
    try:
        model = database.model_for(db)
        args = parse_inputs(fields, model)
        feed, res = run_cycle(args, db)
    except PhasekitError as exc:
        return (*keep, messages.error(messages.describe(exc)))
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "the conversion cycle")))
    try:
        dfs = tables(feed, res, args["cold_solid"])
        text = sentence(res, args["hot_solid"], args["cold_solid"])
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "presenting the conversion cycle")))
    feed_text = ", ".join(f"{k} {v:g}" for k, v in args["salts"].items()) + " mol per kg water"
    store = {"tables": {k: stored(v) for k, v in dfs.items()}, "database": model.label, "file": "conversion",
             "about": {"feed": feed_text, "hot crystallizer (°C)": args["hot_c"],
                       "cold crystallizer (°C)": args["cold_c"], "water added before cooling": str(args["dilution"]),
                       "solid harvested hot": args["hot_solid"], "solid harvested cold": args["cold_solid"]},
             "nitrates": any("NO3" in s for s in args["salts"])}
    warn = messages.warnings_box(res.warnings, "Read before use")
    try:
        fig, notes = diagram_of_cycle(feed, res, args, db)
    except Exception as exc:
        fig, notes = None, [messages.describe(exc, "drawing the cycle on the phase diagram")]
    fig_note = html.Div([messages.note(n) for n in dict.fromkeys(notes)]) if notes else None
    fig_out, fig_style = (no_update, {"display": "none"}) if fig is None else (fig, {})
    return (text, database.label_line(model, id="conv-db-label"), warn,
            table(dfs["conversion_stages"], id="conv-stages-table"),
            table(dfs["conversion_crops"], id="conv-crops-table"),
            table(dfs["conversion_yields"], id="conv-yields-table", digits={"recovered in " + args["cold_solid"]
                                                                             + " (%)": 3}),
            table(dfs["conversion_recycle"], id="conv-recycle-table"), store, fig_out, fig_style, fig_note, None)


def register(app):
    app.callback(Output("conv-sentence", "children"), Output("conv-db", "children"), Output("conv-warn", "children"),
                 Output("conv-stages", "children"), Output("conv-crops", "children"),
                 Output("conv-yields", "children"), Output("conv-recycle", "children"), Output("res-conv", "data"),
                 Output("conv-graph", "figure"), Output("conv-figure", "style"), Output("conv-fig-note", "children"),
                 Output("conv-msg", "children"),
                 Input("conv-run", "n_clicks"), Input("views", "value"), Input("database", "data"),
                 *[Input(i, "value") for i in IDS])(update_conversion)
