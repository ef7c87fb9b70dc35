"""The dissolution-rate view: how fast the salts of an ore dissolve in a stirred tank of brine
(phasekit.kinetics.leach), with the time to dissolve 98 % of each salt.

The leach brine is the brine of the brine panel, or pure water. Every number comes from the
library; this module reads the fields, calls it and places the result.
"""

from __future__ import annotations

import re
import warnings

import pandas as pd
from dash import Input, Output, State, dcc, html, no_update

from phasekit import kinetics as kin
from phasekit.errors import InputError, PhasekitError
from phasekit.kinetics.saturation import EquilibriumSaturation
from webapp import database, messages
from webapp.style import GRID, axis, base_layout, graph_config, solid_colour
from webapp.tables import export_buttons, figure_buttons, stored, table

TARGET = 0.98

#: the fields of the view: key -> (label, demo value as typed)
FIELDS = {
    "ore": ("Ore (solid and mass fraction)", "sylvite 0.3, halite 0.65"),
    "ore-kg": ("Ore charged (kg)", "0.4"),
    "water-kg": ("Water of the leach brine (kg)", "1"),
    "d50": ("Median grain size (µm)", "400"),
    "gsd": ("Spread of sizes (geometric std. dev.)", "1.6"),
    "temp": ("Temperature (°C)", "25"),
    "power": ("Stirring power (W/kg)", "0.5"),
    "time": ("Residence time (s)", "600"),
    "cmp-d50": ("Compare: other grain size (µm)", ""),
    "cmp-temp": ("Compare: other temperature (°C)", ""),
}

#: the library's field names (InputError.field, by prefix) -> the field of the view
LIB_FIELDS = [("composition", "ore"), ("solids", "ore"), ("solid", "ore"), ("ore_kg", "ore-kg"),
              ("brine_volume_m3/water_kg", "water-kg"), ("water_kg", "water-kg"), ("d50", "d50"),
              ("median", "d50"), ("gsd", "gsd"), ("sigma", "gsd"), ("geometric", "gsd"), ("temp", "temp"),
              ("power", "power"), ("residence", "time")]


def _field(key: str, value: str) -> html.Div:
    label, _ = FIELDS[key]
    return html.Div([
        html.Label(label, htmlFor=f"leach-{key}"),
        dcc.Input(id=f"leach-{key}", value=value, type="text", debounce=True, className="pk-field",
                  inputMode="text" if key == "ore" else "decimal"),
        html.Div(id=f"leach-msg-{key}", className="pk-field-msg", **{"aria-live": "polite"}),
    ], className="pk-leach-field" + (" pk-leach-wide" if key == "ore" else ""))


def layout(_inputs: dict) -> html.Div:
    return html.Div([
        html.P("Leach an ore in a stirred tank for a residence time: how much of each salt dissolves, and how "
               "soon 98 % of it is gone. Grains are taken as liberated (each grain is one salt); the rest of the "
               "ore is insoluble.", className="pk-hint"),
        html.Div([_field(k, v) for k, (_, v) in FIELDS.items()], className="pk-leach-grid"),
        html.Div([
            dcc.Checklist(id="leach-pure-water", value=[], className="pk-radio",
                          options=[{"label": " leach with pure water (instead of the brine of the brine panel)",
                                    "value": "water"}]),
            html.Button("Run the leach", id="leach-run", className="pk-btn"),
        ], className="pk-toolbar pk-toolbar-wrap"),
        html.Div(id="leach-msg", **{"aria-live": "polite"}),
        dcc.Loading([
            html.P(id="leach-sentence", className="pk-sentence"),
            html.Div(id="leach-db"),
            dcc.Graph(id="leach-graph", config=graph_config("phasekit-dissolution"), style={"height": "420px"},
                      figure=empty_figure()),
            html.Div(id="leach-summary"),
        ], type="circle", delay_show=150),
        figure_buttons("leach-graph"),
        export_buttons("leach-summary", "Download summary"),
        export_buttons("leach-history", "Download dissolved fraction against time"),
        html.Div(id="leach-warn"),
    ], className="pk-view")


# ----------------------------------------------------------------------------- reading the fields
def parse_number(text, key: str) -> float:
    """A number typed in a field (a comma as decimal mark is accepted); InputError naming the field."""
    label = FIELDS[key][0]
    s = str(text if text is not None else "").strip().replace(",", ".")
    try:
        return float(s)
    except ValueError:
        raise InputError(label, text, "a number") from None


def parse_ore(text) -> dict:
    """{solid: mass fraction} from 'sylvite 0.3, halite 0.65' (or 'sylvite=0.3; halite=0.65')."""
    label = FIELDS["ore"][0]
    out = {}
    for part in [p.strip() for p in re.split(r"[;,\n]+(?=\s*[A-Za-z])", str(text or "")) if p.strip()]:
        m = re.fullmatch(r"([A-Za-z][A-Za-z0-9()·.\- ]*?)\s*[=: ]\s*(\S+)", part)
        if not m:
            raise InputError(label, part, "a solid and its mass fraction, e.g. 'sylvite 0.3, halite 0.65'")
        name, val = m.group(1).strip(), m.group(2).replace(",", ".")
        try:
            out[name] = float(val)
        except ValueError:
            raise InputError(label, part, "a mass fraction after the solid's name, e.g. 'sylvite 0.3'") from None
    if not out:
        raise InputError(label, text, "at least one solid and its mass fraction, e.g. 'sylvite 0.3, halite 0.65'")
    return out


def field_of(exc: InputError) -> str | None:
    """The field of the view that an InputError is about (None: shown above the results)."""
    f = str(getattr(exc, "field", ""))
    for key, (label, _) in FIELDS.items():
        if f == label:
            return key
    low = f.lower()
    for prefix, key in LIB_FIELDS:
        if low.startswith(prefix):
            return key
    return None


def read_inputs(values: dict) -> dict:
    """The library's arguments from the fields as typed (InputError on bad text)."""
    args = {"composition": parse_ore(values["ore"])}
    for key, name in (("ore-kg", "ore_kg"), ("water-kg", "water_kg"), ("d50", "d50_um"), ("gsd", "gsd"),
                      ("temp", "temp_c"), ("power", "power_w_kg"), ("time", "residence_s")):
        args[name] = parse_number(values[key], key)
    for key in ("cmp-d50", "cmp-temp"):
        text = str(values.get(key) or "").strip()
        args[key] = parse_number(text, key) if text else None
    return args


def run_leach(args: dict, brine: dict | None, d50_um: float | None = None, temp_c: float | None = None,
              model=None):
    """The library's leach with these arguments (optionally another grain size or temperature), its driving
    force from ``model`` (the database chosen; the embedded one by default)."""
    model = model if model is not None else database.model_for(None)
    d50 = args["d50_um"] if d50_um is None else d50_um
    t = args["temp_c"] if temp_c is None else temp_c
    sizes = kin.lognormal(d50, args["gsd"])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the validity warnings are kept on the result and shown
        return kin.leach(args["ore_kg"], args["composition"], sizes, brine, residence_s=args["residence_s"],
                         water_kg=args["water_kg"], temp_c=t, power_w_kg=args["power_w_kg"],
                         saturation=EquilibriumSaturation(model))


# ----------------------------------------------------------------------------- the result
def duration(seconds: float) -> str:
    """A time in plain words: '42 s', '6.5 min (390 s)', '2.1 h'."""
    if seconds < 120:
        return f"{seconds:.2g} s" if seconds < 10 else f"{seconds:.0f} s"
    if seconds < 7200:
        return f"{seconds / 60:.2g} min ({seconds:.0f} s)"
    return f"{seconds / 3600:.2g} h"


def leach_sentence(res, residence_s: float) -> str:
    """'98 % of the sylvite dissolves in 42 s; 3 % of the halite dissolves in the residence time (600 s).'"""
    parts = []
    for solid, row in res.summary.iterrows():
        t98 = res.time_to(TARGET, solid=solid)
        if t98 is not None and t98 <= residence_s:
            parts.append(f"{TARGET * 100:.0f} % of the {solid} dissolves in {duration(t98)}")
        else:
            pct = 100 * float(row["dissolved_fraction"])
            parts.append(f"{pct:.2g} % of the {solid} dissolves in the residence time ({duration(residence_s)})")
    text = "; ".join(parts) + "."
    return text[0].upper() + text[1:]


def summary_table(res, residence_s: float) -> pd.DataFrame:
    rows = []
    for solid, row in res.summary.iterrows():
        t98 = res.time_to(TARGET, solid=solid)
        rows.append({"solid": solid, "formula": row["formula"], "charged (kg)": float(row["charged_kg"]),
                     "dissolved (kg)": float(row["dissolved_kg"]),
                     "dissolved (% of charge)": 100 * float(row["dissolved_fraction"]),
                     "time to 98 % (s)": t98 if t98 is not None and t98 <= residence_s else None})
    return pd.DataFrame(rows)


def _solids(history: pd.DataFrame) -> list[str]:
    return [c[: -len("_dissolved_fraction")] for c in history.columns
            if c.endswith("_dissolved_fraction") and not c.startswith("total")]


def empty_figure() -> dict:
    return {"data": [], "layout": base_layout(xaxis=axis("time (s)"), yaxis=axis("dissolved (% of the charge)",
                                                                                   range=[0, 102]))}


def leach_figure(curves: list[tuple[str, pd.DataFrame, str]], title: str) -> dict:
    """Dissolved fraction of each salt against time; curves = [(label, history, dash)]."""
    data = []
    for label, h, dash in curves:
        t = h["time_s"].round(4).tolist()
        for solid in _solids(h):
            name = solid if not label else f"{solid} ({label})"
            data.append({"type": "scatter", "mode": "lines", "name": name, "x": t,
                         "y": (100 * h[f"{solid}_dissolved_fraction"]).round(4).tolist(),
                         "line": {"color": solid_colour(solid), "width": 2.5, "dash": dash},
                         "hovertemplate": f"{name}<br>%{{x:.3g}} s: %{{y:.1f}} %<extra></extra>"})
    t_end = max(float(h["time_s"].iloc[-1]) for _, h, _ in curves)
    data.append({"type": "scatter", "mode": "lines", "name": "98 %", "x": [0, t_end], "y": [98, 98],
                 "line": {"color": GRID, "width": 1, "dash": "dot"}, "hoverinfo": "skip", "showlegend": False})
    lay = base_layout(title={"text": title, "x": 0.02}, xaxis=axis("time (s)"),
                      yaxis=axis("dissolved (% of the charge)", range=[0, 102]))
    return {"data": data, "layout": lay}


def update_leach(_run, pure_water, brine, db, *values):
    """Callback: run the leach. Returns (sentence, figure, summary, warnings, store, message, field messages...);
    on bad input the previous result is kept and the message is shown next to the field."""
    fields = dict(zip(FIELDS, values))
    n_fields = len(FIELDS)
    clear = (None,) * n_fields
    keep = (no_update,) * 6
    water_only = bool(pure_water)
    if not water_only and not (brine and brine.get("molalities")):
        return (*keep, messages.note("Enter a brine in the brine panel, or tick 'leach with pure water'."), *clear)
    leach_brine = None if water_only else brine["molalities"]
    try:
        model = database.model_for(db)
        args = read_inputs(fields)
        res = run_leach(args, leach_brine, model=model)
        curves = [("" if not (args["cmp-d50"] or args["cmp-temp"]) else
                   f"{args['d50_um']:g} µm, {args['temp_c']:g} °C", res.history, "solid")]
        other = None
        if args["cmp-d50"] is not None or args["cmp-temp"] is not None:
            d_o = args["cmp-d50"] if args["cmp-d50"] is not None else args["d50_um"]
            t_o = args["cmp-temp"] if args["cmp-temp"] is not None else args["temp_c"]
            try:
                other = run_leach(args, leach_brine, d50_um=d_o, temp_c=t_o, model=model)
            except InputError as exc:  # a bad comparison is reported next to its own field
                key = "cmp-temp" if field_of(exc) == "temp" else "cmp-d50"
                raise InputError(FIELDS[key][0], exc.value, exc.expected) from None
            curves.append((f"{d_o:g} µm, {t_o:g} °C", other.history, "dash"))
    except PhasekitError as exc:
        text = messages.describe(exc)
        if "electrically neutral" in text:
            text = "The brine is not electrically neutral: balance it on an ion in the brine panel. " + text
        key = field_of(exc) if isinstance(exc, InputError) else None
        msgs = [messages.error(text) if k == key else None for k in FIELDS]
        return (*keep, None if key else messages.error(text), *msgs)
    except Exception as exc:
        return (*keep, messages.error(messages.describe(exc, "the leach")), *clear)
    medium = "pure water" if water_only else (brine.get("name") or "the brine")
    title = (f"Leach in {medium} at {args['temp_c']:g} °C, median grain {args['d50_um']:g} µm, "
             f"{args['power_w_kg']:g} W/kg")
    fig = leach_figure(curves, title)
    summ = summary_table(res, args["residence_s"])
    sentence = leach_sentence(res, args["residence_s"])
    body = [table(summ, id="leach-summary-table")]
    hist = res.history.copy()
    if other is not None:
        osumm = summary_table(other, args["residence_s"])
        body += [html.H3(f"Compared with {curves[1][0]}"), table(osumm, id="leach-compare-table"),
                 html.P(leach_sentence(other, args["residence_s"]), className="pk-sentence pk-sentence-sub",
                        id="leach-compare-sentence")]
        summ = pd.concat([summ.assign(case=curves[0][0]), osumm.assign(case=curves[1][0])], ignore_index=True)
        hist = pd.concat([hist.assign(case=curves[0][0]), other.history.assign(case=curves[1][0])],
                         ignore_index=True)
    store = {"tables": {"leach-summary": stored(summ), "leach-history": stored(hist)}, "database": model.label}
    warn = messages.warnings_box(list(res.warnings) + (list(other.warnings) if other is not None else []),
                                 "Validity of this leach")
    return (sentence, fig, body, warn, store, database.label_line(model, id="leach-db-label"), None, *clear)


def register(app):
    app.callback(Output("leach-sentence", "children"), Output("leach-graph", "figure"),
                 Output("leach-summary", "children"), Output("leach-warn", "children"), Output("res-leach", "data"),
                 Output("leach-db", "children"), Output("leach-msg", "children"), *[Output(f"leach-msg-{k}", "children") for k in FIELDS],
                 Input("leach-run", "n_clicks"), State("leach-pure-water", "value"), State("brine", "data"),
                 State("database", "data"),
                 *[State(f"leach-{k}", "value") for k in FIELDS], prevent_initial_call=True)(update_leach)

