"""Plotly figures of the diagrams, for the app (and for export through kaleido).

- :func:`ternary_figure` — triangular diagram in mass per cent (water at the top).
- :func:`rectangular_figure` — salt B against salt A, in g per 100 g water or mol per kg water.
- :func:`jaenecke_figure` — Jänecke square (reciprocal pair) or triangle (oceanic salts).
- :func:`polytherm_figure` — invariant points and binary solubilities against temperature.

Every function takes a ``path`` (see :mod:`phasekit.plotting.overlay`) to draw on the diagram.
Diagrams read back with :func:`phasekit.diagrams.read_diagram` plot the same way.
"""

from __future__ import annotations

import warnings

import numpy as np
import plotly.graph_objects as go

from phasekit.errors import InputError
from phasekit.plotting import style
from phasekit.plotting.overlay import path_frames, projection_path, ternary_path

UNITS = {"g_per_100g_water": "g per 100 g water", "molality": "mol per kg water", "mass_percent": "mass %"}


def _meta(result) -> dict:
    return result.meta()


def _layout(fig, title):
    fig.update_layout(title=title, font={"family": style.FONT_FAMILY, "size": 13}, template="simple_white",
                      legend={"itemsizing": "constant", "font": {"size": 11}}, margin={"l": 60, "r": 30, "t": 60, "b": 50})
    return fig


def _title(meta, what):
    salts = meta.get("salts")
    sys_name = f"{salts[0]}–{salts[1]}–H2O" if salts else what
    return f"{sys_name}, {meta.get('temp_c', '')} °C" if "temp_c" in meta else sys_name


# ------------------------------------------------------------------- ternary
def ternary_figure(result, path=None, tie_lines: bool = True, fields: bool = True, model=None) -> go.Figure:
    """Triangular isotherm in mass per cent: water at the top, salt A left, salt B right.

    Parameters
    ----------
    result : IsothermResult or LoadedDiagram of an isotherm
    path : DataFrame or mapping of DataFrames, optional
        Crystallization path(s) to overlay (liquid molalities per species).
    tie_lines, fields : bool
        Draw the tie lines and the filled crystallization fields.
    """
    meta = _meta(result)
    A, B = meta["salts"]
    pa, pb, pw = f"{A}_mass_percent", f"{B}_mass_percent", "water_mass_percent"
    fig = go.Figure()
    if fields:
        for (name, kind), f in result.fields.groupby(["field", "kind"], sort=False):
            if kind == "crystallization field":
                col = style.rgba(style.solid_colour(name), style.FIELD_OPACITY)
            elif kind == "three-phase region":
                col = "rgba(200,200,200,0.25)"
            else:
                col = style.rgba("#dfe7ee", 0.5)
            fig.add_trace(go.Scatterternary(a=f[pw], b=f[pa], c=f[pb], mode="lines", fill="toself", fillcolor=col,
                                            line={"width": 0}, name=f"{name} ({kind})" if kind != "unsaturated solution"
                                            else style.LABELS["unsaturated"], hoverinfo="name", showlegend=False))
    if tie_lines and len(result.tie_lines):
        a, b, c = [], [], []
        for _, t in result.tie_lines.groupby("tie_line"):
            a += list(t[pw]) + [None]
            b += list(t[pa]) + [None]
            c += list(t[pb]) + [None]
        fig.add_trace(go.Scatterternary(a=a, b=b, c=c, mode="lines", name=style.LABELS["tie_line"],
                                        line={"color": style.TIE_LINE_COLOUR, "width": style.TIE_LINE_WIDTH}))
    shown = set()
    for (_cid, solid, meta_flag), cdf in result.curves.groupby(["curve", "solid", "metastable"], sort=False):
        label = f"{solid}: {style.LABELS['metastable'] if meta_flag else style.LABELS['curve']}"
        fig.add_trace(go.Scatterternary(
            a=cdf[pw], b=cdf[pa], c=cdf[pb], mode="lines", name=label, legendgroup=label,
            showlegend=label not in shown,
            line={"color": style.solid_colour(solid), "width": style.CURVE_WIDTH,
                  "dash": style.METASTABLE_DASH if meta_flag else "solid"}))
        shown.add(label)
    _ternary_points(fig, result, pa, pb, pw)
    for label, df in path_frames(path):
        c = ternary_path(model or _model(), (A, B), df)
        fig.add_trace(go.Scatterternary(a=c[pw], b=c[pa], c=c[pb], mode="lines+markers", name=label,
                                        line={"color": style.PATH_COLOUR, "width": 1.5},
                                        marker={"symbol": style.MARKERS["path"][0], "size": style.MARKERS["path"][2]}))
    fig.update_layout(ternary={"sum": 100, "aaxis": {"title": "H2O (mass %)"}, "baxis": {"title": f"{A} (mass %)"},
                               "caxis": {"title": f"{B} (mass %)"}})
    _layout(fig, _title(meta, "isotherm"))
    fig.update_layout(margin={"l": 110, "r": 40, "t": 70, "b": 60})
    return fig


def _ternary_points(fig, result, pa, pb, pw):
    inv = result.invariant_points
    for kind, g in inv.groupby("kind", sort=False) if len(inv) else []:
        sym, _, size = style.invariant_marker(kind)
        fig.add_trace(go.Scatterternary(
            a=g[pw], b=g[pa], c=g[pb], mode="markers", name=style.LABELS["eutonic"] if kind == "eutonic"
            else style.LABELS["transition"], text=[" + ".join(s) for s in g["solids"]],
            hovertemplate="%{text}<extra>" + kind + "</extra>",
            marker={"symbol": sym, "size": size, "color": style.INVARIANT_COLOUR}))
    sp = result.solid_points
    sym, _, size = style.MARKERS["solid"]
    fig.add_trace(go.Scatterternary(a=sp[pw], b=sp[pa], c=sp[pb], mode="markers+text", text=sp["solid"],
                                    textposition="bottom center", name="solid composition", cliponaxis=False,
                                    marker={"symbol": sym, "size": size, "color": "#333333"}))


def _model():
    from phasekit.model import default_model

    return default_model()


# --------------------------------------------------------------- rectangular
def rectangular_figure(result, units: str = "g_per_100g_water", path=None, model=None) -> go.Figure:
    """Isotherm in rectangular coordinates: salt B against salt A per unit of water.

    Parameters
    ----------
    units : {"g_per_100g_water", "molality"}
    """
    if units not in ("g_per_100g_water", "molality"):
        raise InputError("units", units, "'g_per_100g_water' or 'molality'")
    meta = _meta(result)
    A, B = meta["salts"]
    ca, cb = f"{A}_{units}", f"{B}_{units}"
    fig = go.Figure()
    shown = set()
    for (_cid, solid, meta_flag), cdf in result.curves.groupby(["curve", "solid", "metastable"], sort=False):
        label = f"{solid}: {style.LABELS['metastable'] if meta_flag else style.LABELS['curve']}"
        fig.add_trace(go.Scatter(x=cdf[ca], y=cdf[cb], mode="lines", name=label, legendgroup=label,
                                 showlegend=label not in shown,
                                 line={"color": style.solid_colour(solid), "width": style.CURVE_WIDTH,
                                       "dash": style.METASTABLE_DASH if meta_flag else "solid"}))
        shown.add(label)
    inv = result.invariant_points
    for kind, g in inv.groupby("kind", sort=False) if len(inv) else []:
        sym, _, size = style.invariant_marker(kind)
        fig.add_trace(go.Scatter(x=g[ca], y=g[cb], mode="markers",
                                 name=style.LABELS["eutonic"] if kind == "eutonic" else style.LABELS["transition"],
                                 text=[" + ".join(s) for s in g["solids"]], hovertemplate="%{text}<extra></extra>",
                                 marker={"symbol": sym, "size": size, "color": style.INVARIANT_COLOUR}))
    # field labels at the middle of each stable curve, offset towards the solid
    st = result.curves[~result.curves["metastable"]]
    for _, cdf in st.groupby("curve"):
        mid = cdf.iloc[len(cdf) // 2]
        fig.add_annotation(x=mid[ca], y=mid[cb], text=mid["solid"], showarrow=False, yshift=12,
                           font={"color": style.solid_colour(mid["solid"]), "size": 11})
    for label, df in path_frames(path):
        c = ternary_path(model or _model(), (A, B), df)
        fig.add_trace(go.Scatter(x=c[ca], y=c[cb], mode="lines+markers", name=label,
                                 line={"color": style.PATH_COLOUR, "width": 1.5},
                                 marker={"symbol": style.MARKERS["path"][0], "size": style.MARKERS["path"][2]}))
    fig.update_xaxes(title=f"{A} ({UNITS[units]})", rangemode="tozero")
    fig.update_yaxes(title=f"{B} ({UNITS[units]})", rangemode="tozero")
    return _layout(fig, _title(meta, "isotherm"))


# ------------------------------------------------------------------ Jänecke
def _projection_frame(fig, meta):
    corners = meta["corners"]
    names = list(corners)
    xs = [corners[n][0] for n in names] + [corners[names[0]][0]]
    ys = [corners[n][1] for n in names] + [corners[names[0]][1]]
    fig.add_trace(go.Scatter(x=xs, y=ys, mode="lines", line={"color": "#222222", "width": 1.2},
                             showlegend=False, hoverinfo="skip"))
    cx, cy = float(np.mean(xs[:-1])), float(np.mean(ys[:-1]))
    for n in names:
        x, y = corners[n]
        fig.add_annotation(x=x, y=y, text=f"<b>{n}</b>", showarrow=False,
                           xshift=18 * np.sign(x - cx), yshift=14 * np.sign(y - cy))


def jaenecke_figure(result, path=None, model=None) -> go.Figure:
    """Jänecke projection: crystallization fields, field boundaries and invariant points."""
    meta = _meta(result)
    system = meta["system"]
    fig = go.Figure()
    for (solid, _fid), f in result.fields.groupby(["solid", "field"], sort=False):
        fig.add_trace(go.Scatter(x=f["x"], y=f["y"], mode="lines", fill="toself",
                                 fillcolor=style.rgba(style.solid_colour(solid), style.FIELD_OPACITY + 0.1),
                                 line={"width": 0}, name=f"{solid} ({style.LABELS['field']})", hoverinfo="name"))
        cx, cy = style.polygon_centroid(f["x"], f["y"])
        fig.add_annotation(x=cx, y=cy, text=solid, showarrow=False, font={"size": 11})
    first = True
    for _, c in result.curves.groupby("boundary", sort=False):
        fig.add_trace(go.Scatter(x=c["x"], y=c["y"], mode="lines", name=style.LABELS["boundary"],
                                 legendgroup="boundary", showlegend=first,
                                 line={"color": "#333333", "width": 1.6}, hoverinfo="skip"))
        first = False
    _projection_frame(fig, meta)
    inv = result.invariant_points
    if len(inv):
        sym, _, size = style.invariant_marker("invariant point")
        fig.add_trace(go.Scatter(x=inv["x"], y=inv["y"], mode="markers", name=style.LABELS["invariant"],
                                 text=[" + ".join(s) for s in inv["solids"]], hovertemplate="%{text}<extra></extra>",
                                 marker={"symbol": sym, "size": size, "color": style.INVARIANT_COLOUR}))
    sp = result.side_points
    sp = sp[sp["location"] == "side"] if len(sp) else sp
    if len(sp):
        sym, _, size = style.MARKERS["side point"]
        fig.add_trace(go.Scatter(x=sp["x"], y=sp["y"], mode="markers", name="invariant point of a side",
                                 text=[" + ".join(s) for s in sp["solids"]], hovertemplate="%{text}<extra></extra>",
                                 marker={"symbol": sym, "size": size, "color": style.INVARIANT_COLOUR}))
    for label, df in path_frames(path):
        x, y = projection_path(model or _model(), system, df)
        fig.add_trace(go.Scatter(x=x, y=y, mode="lines+markers", name=label,
                                 line={"color": style.PATH_COLOUR, "width": 1.5},
                                 marker={"symbol": style.MARKERS["path"][0], "size": style.MARKERS["path"][2]}))
    if system == "reciprocal":
        title = f"Na+, K+ // Cl−, SO4²− – H2O, {meta['temp_c']:g} °C (Jänecke: mol per 100 mol salts)"
        fig.update_xaxes(title="K2 / (Na2 + K2)", range=[-0.08, 1.08])
        fig.update_yaxes(title="SO4 / (Cl2 + SO4)", range=[-0.08, 1.08], scaleanchor="x")
    elif system == "reciprocal_nitrate":
        title = f"Na+, K+ // Cl−, NO3− – H2O, {meta['temp_c']:g} °C (Jänecke: mol per 100 mol salts)"
        fig.update_xaxes(title="K / (Na + K)", range=[-0.08, 1.08])
        fig.update_yaxes(title="NO3 / (Cl + NO3)", range=[-0.08, 1.08], scaleanchor="x")
    else:
        title = f"Oceanic salts at halite saturation, {meta['temp_c']:g} °C (Jänecke K2–Mg–SO4)"
        fig.update_xaxes(visible=False, range=[-0.08, 1.08])
        fig.update_yaxes(visible=False, range=[-0.08, 0.95], scaleanchor="x")
    return _layout(fig, title)


# ----------------------------------------------------------------- polytherm
def polytherm_figure(result, units: str = "mass_percent", path=None, model=None) -> go.Figure:
    """Invariant points and binary solubilities of a ternary polytherm against temperature.

    A ``path`` here needs a ``temp_c`` column besides the molalities (a cooling or heating path).
    """
    if units not in ("mass_percent", "g_per_100g_water", "molality"):
        raise InputError("units", units, "'mass_percent', 'g_per_100g_water' or 'molality'")
    meta = _meta(result)
    A, B = meta["salts"]
    fig = go.Figure()
    inv = result.invariant_points
    for solids, g in inv.groupby(inv["solids"].map(lambda s: " + ".join(s)), sort=False):
        for salt, dash in ((A, "solid"), (B, "dash")):
            fig.add_trace(go.Scatter(x=g["temp_c"], y=g[f"{salt}_{units}"], mode="lines+markers",
                                     name=f"{salt} at {solids}", line={"dash": dash, "color": style.INVARIANT_COLOUR},
                                     marker={"size": 5}))
    bp = result.binary_points
    ucol = {"mass_percent": "mass_percent", "g_per_100g_water": "g_per_100g_water", "molality": "molality"}[units]
    for (salt, solid), g in bp.groupby(["salt", "solid"], sort=False):
        fig.add_trace(go.Scatter(x=g["temp_c"], y=g[ucol], mode="lines+markers",
                                 name=f"{salt} alone ({solid})", line={"color": style.solid_colour(solid)},
                                 marker={"size": 4}))
    tr = result.transitions
    if len(tr):
        for kind, g in tr.groupby("kind", sort=False):
            sym, _, size = style.invariant_marker(kind)
            for salt in (A, B):
                fig.add_trace(go.Scatter(x=g["temp_c"], y=g[f"{salt}_{units}"], mode="markers",
                                         name=f"{kind} ({salt})", text=[" + ".join(s) for s in g["solids"]],
                                         hovertemplate="%{x:.2f} °C: %{text}<extra></extra>",
                                         marker={"symbol": sym, "size": size, "color": "#b23a48"}))
    for label, df in path_frames(path):
        temps = _path_temperatures(df)
        c = ternary_path(model or _model(), (A, B), df)
        for salt, dash in ((A, "solid"), (B, "dash")):
            fig.add_trace(go.Scatter(x=temps, y=c[f"{salt}_{units}"], mode="lines+markers", name=f"{label}: {salt}",
                                     line={"color": style.PATH_COLOUR, "width": 1.5, "dash": dash},
                                     marker={"symbol": style.MARKERS["path"][0], "size": style.MARKERS["path"][2]}))
    fig.update_xaxes(title="temperature (°C)")
    fig.update_yaxes(title=f"salt ({UNITS[units]})")
    return _layout(fig, f"{A}–{B}–H2O polytherm: invariant points and binary solubilities")


def _path_temperatures(df):
    if "temp_c" not in df.columns:
        raise InputError("path", list(df.columns), "a DataFrame with a 'temp_c' column (°C) besides the molalities")
    return df["temp_c"].to_numpy(dtype=float)


_BROWSER = {"started": False}


def _browser():
    """Keep one kaleido browser for the process (a cold start costs seconds per figure)."""
    if _BROWSER["started"]:
        return
    import atexit

    import kaleido

    try:
        kaleido.start_sync_server(silence_warnings=True)
    except Exception:  # pragma: no cover - fall back to one browser per figure
        _BROWSER["started"] = True
        return
    _BROWSER["started"] = True
    atexit.register(lambda: kaleido.stop_sync_server(silence_warnings=True))


def save_figure(fig: go.Figure, file, width: int = 900, height: int = 750, scale: float = 1.0):
    """Write a plotly figure to PNG, SVG or PDF through kaleido (Chromium)."""
    from pathlib import Path

    suffix = Path(file).suffix.lower()
    if suffix not in (".png", ".svg", ".pdf", ".jpg", ".jpeg", ".webp"):
        raise InputError("file", str(file), "a file name ending in .png, .svg, .pdf, .jpg or .webp")
    _browser()
    for attempt in range(3):
        try:
            with warnings.catch_warnings():
                warnings.filterwarnings("ignore", message="The kopts argument is ignored")
                fig.write_image(str(file), width=width, height=height, scale=scale)
            break
        except Exception as exc:  # kaleido's browser page is sometimes not ready yet: try again
            if attempt == 2 or not type(exc).__module__.startswith("kaleido"):
                raise
    return Path(file)
