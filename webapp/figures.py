"""Figures of the app, as plain plotly figure dictionaries (fast to build and to send).

Every number drawn comes from the library (diagrams, paths, polytherms, pond trains); these
functions only place them.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from phasekit.errors import PhasekitError
from phasekit.plotting import style as _lib_style
from webapp import database, diagram_source
from webapp.style import BRINE, GRID, INK, MUTED, PATH_END, axis, base_layout, solid_colour
from webapp.systems import get_system


def _list(v):
    return np.atleast_1d(np.asarray(v, dtype=float)).round(6).tolist()


# ----------------------------------------------------------------------------- diagram
UNIT_LABEL = {"mass_percent": "mass %", "g_per_100g_water": "g per 100 g water", "molality": "mol per kg water"}


def overlay_coordinates(system, coords: str, units: str, df: pd.DataFrame, model) -> tuple[dict, list]:
    """Plot coordinates of compositions (rows of molalities) on a diagram, by the library's projections
    with ``model`` (the database chosen), and a hover text per row."""
    if system.kind == "ternary":
        ternary_path = diagram_source.library("phasekit.plotting.overlay", "ternary_path")
        c = ternary_path(model, tuple(system.salts), df)
        a, b = system.salts
        text = [f"{a}: {x:.2f} mass %<br>{b}: {y:.2f} mass %<br>water: {w:.2f} mass %"
                for x, y, w in zip(c[f"{a}_mass_percent"], c[f"{b}_mass_percent"], c["water_mass_percent"])]
        if coords == "triangular":
            return {"a": _list(c["water_mass_percent"]), "b": _list(c[f"{a}_mass_percent"]),
                    "c": _list(c[f"{b}_mass_percent"])}, text
        return {"x": _list(c[f"{a}_{units}"]), "y": _list(c[f"{b}_{units}"])}, text
    projection_path = diagram_source.library("phasekit.plotting.overlay", "projection_path")
    x, y = projection_path(model, system.kind, df)
    species = [s for s in df.columns if s in model.species]
    text = ["<br>".join(f"{s}: {row[s]:.4g} mol/kg water" for s in species) for _, row in df.iterrows()]
    return {"x": _list(x), "y": _list(y)}, text


def _hover_curves(fig: dict, system, coords: str, units: str) -> None:
    """Hover of the library's saturation curves: the saturated solid and the composition."""
    for tr in fig.get("data", []):
        name = str(tr.get("name", ""))
        if ": saturation curve" not in name and ": metastable" not in name:
            continue
        solid = name.split(":")[0]
        if system.kind == "ternary" and coords == "triangular":
            a, b = system.salts
            tr["hovertemplate"] = (f"<b>saturated with {solid}</b><br>{a}: %{{b:.2f}} mass %<br>{b}: %{{c:.2f}} "
                                   "mass %<br>water: %{a:.2f} mass %<extra></extra>")
        elif system.kind == "ternary":
            a, b = system.salts
            tr["hovertemplate"] = (f"<b>saturated with {solid}</b><br>{a}: %{{x:.3g}} {UNIT_LABEL[units]}<br>"
                                   f"{b}: %{{y:.3g}} {UNIT_LABEL[units]}<extra></extra>")


def _empty(system, coords: str, units: str, title: str) -> dict:
    """Axes of the diagram without its curves (when the library has no diagram to give)."""
    if system.kind == "ternary" and coords == "triangular":
        a, b = system.salts
        ax = {"linecolor": MUTED, "gridcolor": GRID}
        return {"data": [], "layout": base_layout(title={"text": title}, ternary={
            "sum": 100, "aaxis": {**ax, "title": {"text": "H2O (mass %)"}},
            "baxis": {**ax, "title": {"text": f"{a} (mass %)"}}, "caxis": {**ax, "title": {"text": f"{b} (mass %)"}}})}
    if system.kind == "ternary":
        a, b = system.salts
        return {"data": [], "layout": base_layout(title={"text": title}, xaxis=axis(f"{a} ({UNIT_LABEL[units]})"),
                                                  yaxis=axis(f"{b} ({UNIT_LABEL[units]})"))}
    return {"data": [], "layout": base_layout(title={"text": title}, xaxis=axis("", range=[-0.08, 1.08]),
                                              yaxis=axis("", range=[-0.08, 1.08], scaleanchor="x"))}


def diagram_figure(system, coords: str, units: str, base: dict | None, brine=None, path=None,
                   title: str = "", model=None) -> tuple[dict, list]:
    """The library's diagram figure with the brine (a star) and its path (line, phase changes as dots).

    Parameters
    ----------
    base : dict or None
        The library's figure (plotly dictionary); None draws empty axes.
    brine : dict, optional
        ``{"name", "molalities"}``.
    path : dict, optional
        ``{"steps": DataFrame of molalities, "events": DataFrame}``.
    model : Model, optional
        The model of the database chosen (:func:`webapp.database.model_for`), for the projections;
        the embedded database's by default.

    Returns
    -------
    (figure, notes)
    """
    notes: list[str] = []
    if model is None:
        model = database.model_for(None)
    if base is None:
        fig = _empty(system, coords, units, title)
    else:
        fig = {"data": [dict(t) for t in base.get("data", [])], "layout": dict(base.get("layout", {}))}
        _hover_curves(fig, system, coords, units)
    kind = "scatterternary" if system.kind == "ternary" and coords == "triangular" else "scatter"
    try:
        if path is not None and len(path["steps"]):
            xy, _ = overlay_coordinates(system, coords, units, path["steps"], model)
            fig["data"].append({"type": kind, "mode": "lines", "name": "path of the brine", **xy,
                                "line": {"color": BRINE, "width": 3}, "hoverinfo": "skip"})
            ev = path["events"]
            if len(ev):
                exy, text = overlay_coordinates(system, coords, units, ev, model)
                hover = [f"<b>{r['solid']} {r['event']}</b><br>concentration factor {r['concentration_factor']:.3g}, "
                         f"{r['temp_c']:.1f} °C<br>{t}" for r, t in zip(ev.to_dict("records"), text)]
                fig["data"].append({"type": kind, "mode": "markers", "name": "phase changes", **exy,
                                    "hovertext": hover, "hoverinfo": "text",
                                    "marker": {"size": 9, "color": PATH_END, "line": {"color": "white", "width": 1}}})
        if brine is not None:
            df = pd.DataFrame([brine["molalities"]])
            bxy, text = overlay_coordinates(system, coords, units, df, model)
            name = brine.get("name") or "brine"
            fig["data"].append({"type": kind, "mode": "markers", "name": name, **bxy,
                                "hovertext": [f"<b>{name}</b><br>{t}" for t in text], "hoverinfo": "text",
                                "marker": {"symbol": "star", "size": 17, "color": BRINE,
                                           "line": {"color": "white", "width": 1}}})
    except diagram_source.DiagramUnavailable as exc:
        notes.append(str(exc))
    except PhasekitError as exc:
        notes.append(f"The brine cannot be placed on this diagram: {exc}")
    return fig, notes


# ----------------------------------------------------------------------------- paths
def sequence_figure(x, x_title: str, amounts: pd.DataFrame, events: pd.DataFrame, event_x, y_title: str,
                    reverse_x: bool = False, title: str = "", log_x: bool = False, log_y: bool = False) -> dict:
    """Mass of each solid along a path, with the phase changes marked."""
    traces = []
    for solid in amounts.columns:
        traces.append({"type": "scatter", "mode": "lines", "name": solid, "x": _list(x),
                       "y": _list(amounts[solid].to_numpy(float)), "line": {"color": solid_colour(solid), "width": 2.5},
                       "hovertemplate": f"<b>{solid}</b><br>%{{x:.3g}}<br>%{{y:.4g}} {y_title}<extra></extra>"})
    shapes, notes = [], []
    for (_, ev), xe in zip(events.iterrows(), event_x):
        if ev["event"] != "appears" or not np.isfinite(xe):
            continue
        shapes.append({"type": "line", "xref": "x", "yref": "paper", "x0": xe, "x1": xe, "y0": 0, "y1": 1,
                       "line": {"color": solid_colour(ev["solid"]), "width": 1, "dash": "dot"}})
        notes.append({"x": float(np.log10(xe)) if log_x else xe, "y": 1.0, "xref": "x", "yref": "paper",
                      "text": ev["solid"], "showarrow": False, "textangle": -90, "xanchor": "right", "yanchor": "top",
                      "font": {"size": 11, "color": MUTED}})
    xa = axis(x_title)
    if reverse_x:
        xa["autorange"] = "reversed"
    if log_x:
        xa["type"] = "log"
    ya = axis(y_title)
    if log_y:
        ya["type"] = "log"
    return {"data": traces, "layout": base_layout(title={"text": title, "x": 0.01}, xaxis=xa, yaxis=ya,
                                                  shapes=shapes, annotations=notes, hovermode="closest")}


# ----------------------------------------------------------------------------- polytherms
POLY_LABEL = {"mass_percent": "solubility (mass % of anhydrous salt)",
              "grams_per_100g_water": "solubility (g anhydrous salt per 100 g water)",
              "molality": "solubility (mol per kg water)"}


def polytherm_figure(curves: dict, transitions: dict, basis: str, temp_c=None) -> dict:
    """Solubility of each salt against temperature, one line per stable solid, transitions marked."""
    traces = []
    dash = ["solid", "dash", "dot", "dashdot", "longdash"]
    for i, (salt, df) in enumerate(curves.items()):
        df = df.dropna(subset=[basis])
        seg_id = (df["solid"] != df["solid"].shift()).cumsum()
        shown = set()
        for _, seg in df.groupby(seg_id, sort=False):
            solid = seg["solid"].iloc[0]
            traces.append({"type": "scatter", "mode": "lines", "x": _list(seg["temp_c"]), "y": _list(seg[basis]),
                           "name": f"{salt}: {solid}", "legendgroup": f"{salt}:{solid}",
                           "showlegend": (salt, solid) not in shown,
                           "line": {"color": solid_colour(solid), "width": 2.5, "dash": dash[i % len(dash)]},
                           "hovertemplate": f"<b>{salt}</b>, solid {solid}<br>%{{x:.1f}} °C<br>%{{y:.4g}}<extra></extra>"})
            shown.add((salt, solid))
        tr = transitions.get(salt)
        if tr is not None and len(tr):
            traces.append({"type": "scatter", "mode": "markers+text", "x": _list(tr["temp_c"]), "y": _list(tr[basis]),
                           "name": f"{salt}: transitions", "text": [f"{t:.1f} °C" for t in tr["temp_c"]],
                           "textposition": "top left", "textfont": {"size": 11, "color": INK},
                           "marker": {"symbol": "diamond", "size": 11, "color": INK, "line": {"color": "white", "width": 1}},
                           "hovertext": [f"<b>{salt}</b>: {a} → {b}<br>at {t:.2f} °C"
                                         for a, b, t in zip(tr["solid_below"], tr["solid_above"], tr["temp_c"])],
                           "hoverinfo": "text"})
    shapes = []
    if temp_c is not None:
        shapes.append({"type": "line", "xref": "x", "yref": "paper", "x0": temp_c, "x1": temp_c, "y0": 0, "y1": 1,
                       "line": {"color": BRINE, "width": 1, "dash": "dot"}})
    return {"data": traces, "layout": base_layout(title={"text": "Solubility against temperature", "x": 0.01},
                                                  xaxis=axis("temperature (°C)"), yaxis=axis(POLY_LABEL[basis]),
                                                  shapes=shapes)}


# ----------------------------------------------------------------------------- ponds
def pond_figure(harvest: pd.DataFrame, order: list, y_title: str) -> dict:
    """Stacked bars: what each pond harvests."""
    traces = []
    for solid in dict.fromkeys(harvest["solid"]):
        sub = harvest[harvest["solid"] == solid].set_index("pond")
        y = [float(sub.loc[p, "amount"]) if p in sub.index else 0.0 for p in order]
        traces.append({"type": "bar", "name": solid, "x": order, "y": y, "marker": {"color": solid_colour(solid)},
                       "hovertemplate": f"<b>{solid}</b><br>%{{x}}<br>%{{y:.4g}} {y_title}<extra></extra>"})
    return {"data": traces, "layout": base_layout(title={"text": "Harvest per pond", "x": 0.01}, barmode="stack",
                                                  xaxis=axis("pond"), yaxis=axis(y_title))}


# ----------------------------------------------------------------------------- conversion cycle
#: the system of the conversion cycle's figure (the Jänecke square Na, K // Cl, NO3)
CYCLE_SYSTEM = "reciprocal-nitrate"


def _solids_text(solids) -> str:
    return " + ".join(solids) if isinstance(solids, tuple | list) else str(solids)


def _boundary_name(solids, face, temp_c: float) -> str:
    """Name of a field boundary of the library's square: the solids it separates (or the solid on a side)."""
    if face == "interior":
        return f"{_solids_text(solids)} boundary at {temp_c:g} °C"
    return f"{_solids_text(solids)} saturation, side {face}, at {temp_c:g} °C"


def cycle_figure(hot_base: dict, hot_result, cold_result, liquors: dict, hot_c: float, cold_c: float,
                 hot_solid: str, cold_solid: str, model) -> tuple[dict, list]:
    """The conversion cycle on the library's Jänecke square Na, K // Cl, NO3.

    The library's figure of the square at the hot temperature (fields, boundaries, invariant points), the
    field boundaries of its square at the cold temperature dashed on the same axes, and the feed, the hot
    mother liquor and the cold recycle liquor placed by the library's projection, joined by arrows.

    Parameters
    ----------
    hot_base : dict
        The library's figure of the hot square (plotly dictionary, not modified).
    hot_result, cold_result
        The library's diagrams at the hot and cold temperatures (``cold_result`` may be None: no dashed lines).
    liquors : dict
        ``{"feed": molalities, "hot liquor": molalities, "recycle liquor": molalities}``.

    Returns
    -------
    (figure, notes)
    """
    notes: list[str] = []
    system = get_system(CYCLE_SYSTEM)
    hot_label, cold_label = f"fields and boundaries at {hot_c:g} °C", f"boundaries at {cold_c:g} °C"
    boundary = _lib_style.LABELS["boundary"]
    base = [dict(t) for t in hot_base.get("data", [])]
    groups = [c for _, c in hot_result.curves.groupby("boundary", sort=False)] if hot_result is not None else []
    bounds = [t for t in base if t.get("name") == boundary]
    named = len(groups) == len(bounds)  # the library draws one trace per boundary, in the order of its table
    line = dict((bounds[0].get("line") if bounds else None) or {"color": INK, "width": 1.6})
    data = [{"type": "scatter", "mode": "lines", "x": [None], "y": [None], "name": hot_label, "legendgroup": "hot",
             "line": line, "hoverinfo": "skip"}]
    i = 0
    for t in base:
        t.update(legendgroup="hot", showlegend=False)
        if t.get("name") == boundary:
            if named:
                c = groups[i]
                t["name"] = _boundary_name(c["solids"].iloc[0], c["face"].iloc[0], hot_c)
                t.pop("hoverinfo", None)
                t["hovertemplate"] = f"<b>{t['name']}</b><extra></extra>"
            i += 1
        elif str(t.get("name", "")).startswith("invariant point"):
            t["name"] = f"{t['name']} at {hot_c:g} °C"
        data.append(t)

    if cold_result is not None:
        cold_colour = _lib_style.INVARIANT_COLOUR
        data.append({"type": "scatter", "mode": "lines", "x": [None], "y": [None], "name": cold_label,
                     "legendgroup": "cold", "line": {"color": cold_colour, "width": 2.2, "dash": "dash"},
                     "hoverinfo": "skip"})
        for _, c in cold_result.curves.groupby("boundary", sort=False):
            if c["face"].iloc[0] != "interior":  # the sides lie on the frame of the square
                continue
            name = _boundary_name(c["solids"].iloc[0], "interior", cold_c)
            data.append({"type": "scatter", "mode": "lines", "x": _list(c["x"]), "y": _list(c["y"]), "name": name,
                         "legendgroup": "cold", "showlegend": False,
                         "line": {"color": cold_colour, "width": 2.2, "dash": "dash"},
                         "hovertemplate": f"<b>{name}</b><extra></extra>"})
        inv = cold_result.invariant_points
        if len(inv):
            sym, _, size = _lib_style.invariant_marker("invariant point")
            data.append({"type": "scatter", "mode": "markers", "x": _list(inv["x"]), "y": _list(inv["y"]),
                         "name": f"invariant point at {cold_c:g} °C", "legendgroup": "cold", "showlegend": False,
                         "text": [_solids_text(s) for s in inv["solids"]],
                         "hovertemplate": f"<b>%{{text}}</b> at {cold_c:g} °C<extra></extra>",
                         "marker": {"symbol": f"{sym}-open", "size": size, "color": cold_colour,
                                    "line": {"width": 2}}})

    # the three liquors, by the library's projection
    names = list(liquors)
    df = pd.DataFrame([liquors[n] for n in names]).fillna(0.0)
    xy, text = overlay_coordinates(system, "triangular", "molality", df, model)
    marks = {"feed": ("quadruple point", _lib_style.PATH_COLOUR),
             "hot liquor": ("transition point", solid_colour(hot_solid)),
             "recycle liquor": ("corner", solid_colour(cold_solid))}
    detail = {"feed": "feed", "hot liquor": f"hot liquor at {hot_c:g} °C, {hot_solid} separated",
              "recycle liquor": f"recycle liquor at {cold_c:g} °C, {cold_solid} separated"}
    pts = {}
    for j, n in enumerate(names):
        x, y = xy["x"][j], xy["y"][j]
        pts[n] = (x, y)
        key, colour = marks.get(n, ("path", _lib_style.PATH_COLOUR))
        sym, _, size = _lib_style.MARKERS[key]
        data.append({"type": "scatter", "mode": "markers", "x": [x], "y": [y], "name": n, "legendgroup": n,
                     "hovertext": [f"<b>{detail.get(n, n)}</b><br>K / (Na + K) = {x:.4f}<br>NO3 / (Cl + NO3) = "
                                   f"{y:.4f}<br>{text[j]}"], "hoverinfo": "text",
                     "marker": {"symbol": sym, "size": max(size, 13) + 2, "color": colour,
                                "line": {"color": _lib_style.PATH_COLOUR, "width": 1}}})
    arrows = []
    legs = (("feed", "hot liquor", "recycle liquor", f"evaporate at {hot_c:g} °C: {hot_solid} out"),
            ("hot liquor", "recycle liquor", "feed", f"cool to {cold_c:g} °C: {cold_solid} out"))
    for a, b, other, what in legs:
        if a not in pts or b not in pts:
            continue
        (x0, y0), (x1, y1) = pts[a], pts[b]
        length = np.hypot(x1 - x0, y1 - y0)
        if not all(np.isfinite([x0, y0, x1, y1])) or length < 1e-3:
            continue
        arrows.append({"x": x1, "y": y1, "ax": x0, "ay": y0, "xref": "x", "yref": "y", "axref": "x", "ayref": "y",
                       "text": "", "showarrow": True, "arrowhead": 2, "arrowsize": 1.3, "arrowwidth": 2,
                       "arrowcolor": _lib_style.PATH_COLOUR, "standoff": 9, "startstandoff": 9})
        # the leg's label beside its middle, on the side away from the third point (equal axis scales:
        # the normal in data units is the normal on the screen)
        mx, my = (x0 + x1) / 2, (y0 + y1) / 2
        nx, ny = -(y1 - y0) / length, (x1 - x0) / length
        if other in pts and np.all(np.isfinite(pts[other])):
            if (pts[other][0] - mx) * nx + (pts[other][1] - my) * ny > 0:
                nx, ny = -nx, -ny
        arrows.append({"x": mx, "y": my, "xref": "x", "yref": "y", "text": what, "showarrow": False,
                       "font": {"size": 11, "color": INK}, "bgcolor": "rgba(255,255,255,0.8)",
                       "xanchor": "left" if nx >= 0 else "right", "yanchor": "bottom" if ny >= 0 else "top",
                       "xshift": 6 * nx, "yshift": 6 * ny})
    lay = dict(hot_base.get("layout", {}))
    lay["title"] = {"text": f"The cycle on the Na⁺, K⁺ ∥ Cl⁻, NO₃⁻ square: fields at {hot_c:g} °C, "
                            f"boundaries at {cold_c:g} °C dashed", "x": 0.01}
    lay["annotations"] = [*lay.get("annotations", []), *arrows]
    lay["legend"] = {**lay.get("legend", {}), "bgcolor": "rgba(255,255,255,0.85)", "bordercolor": GRID,
                     "borderwidth": 1}
    lay["hovermode"] = "closest"
    if any(not np.isfinite(v) for p in pts.values() for v in p):
        notes.append("A liquor cannot be placed on the square (no Na or K, or no Cl or NO3).")
    return {"data": data, "layout": lay}, notes
