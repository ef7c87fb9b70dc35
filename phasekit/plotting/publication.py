"""Publication figures (matplotlib; the triangle through python-ternary), saved as PNG, SVG or PDF.

- :func:`save_ternary` — triangular isotherm in mass per cent.
- :func:`save_rectangular` — salt B against salt A (g per 100 g water or mol per kg water).
- :func:`save_jaenecke` — Jänecke square or triangle.
- :func:`save_polytherm` — invariant points and binary solubilities against temperature.

The format follows the file suffix. Each function accepts a ``path`` to overlay (see
:mod:`phasekit.plotting.overlay`) and returns the file written.
"""

from __future__ import annotations

from pathlib import Path

import matplotlib.pyplot as plt
import numpy as np

from phasekit.errors import InputError
from phasekit.plotting import style
from phasekit.plotting.overlay import path_frames, projection_path, ternary_path

FORMATS = (".png", ".svg", ".pdf")
UNITS = {"g_per_100g_water": "g per 100 g water", "molality": "mol per kg water", "mass_percent": "mass %"}


def _check_file(file) -> Path:
    p = Path(file)
    if p.suffix.lower() not in FORMATS:
        raise InputError("file", str(file), "a file name ending in .png, .svg or .pdf")
    p.parent.mkdir(parents=True, exist_ok=True)
    return p


def _finish(fig, p: Path, dpi: int) -> Path:
    fig.savefig(p, dpi=dpi, bbox_inches="tight")
    plt.close(fig)
    return p


def _model():
    from phasekit.model import default_model

    return default_model()


def _mpl_dash(metastable: bool) -> str:
    return ":" if metastable else "-"


def save_ternary(result, file, path=None, tie_lines: bool = True, dpi: int = 200, model=None) -> Path:
    """Triangular isotherm (mass per cent; salt B right, water top, salt A left) to ``file``."""
    import ternary

    p = _check_file(file)
    meta = result.meta()
    A, B = meta["salts"]
    pa, pb, pw = f"{A}_mass_percent", f"{B}_mass_percent", "water_mass_percent"

    def pts(df):  # python-ternary order: (bottom/right corner, top, left corner)
        return list(zip(df[pb], df[pw], df[pa]))

    fig, tax = ternary.figure(scale=100)
    fig.set_size_inches(7.5, 6.8)
    tax.boundary(linewidth=1.2)
    tax.gridlines(multiple=10, color="#cccccc", linewidth=0.4)
    ax = tax.get_axes()
    for (name, kind), f in result.fields.groupby(["field", "kind"], sort=False):
        xs, ys = ternary.helpers.project_sequence(pts(f))
        if kind == "crystallization field":
            ax.fill(xs, ys, color=style.solid_colour(name), alpha=style.FIELD_OPACITY, lw=0)
        elif kind == "three-phase region":
            ax.fill(xs, ys, color="#bbbbbb", alpha=0.25, lw=0)
    if tie_lines:
        for _, t in result.tie_lines.groupby("tie_line"):
            tax.plot(pts(t), color=style.TIE_LINE_COLOUR, linewidth=style.TIE_LINE_WIDTH)
    seen = set()
    for (_, solid, meta_flag), c in result.curves.groupby(["curve", "solid", "metastable"], sort=False):
        label = f"{solid}: {style.LABELS['metastable'] if meta_flag else style.LABELS['curve']}"
        tax.plot(pts(c), color=style.solid_colour(solid), linewidth=style.CURVE_WIDTH,
                 linestyle=_mpl_dash(meta_flag), label=None if label in seen else label)
        seen.add(label)
    inv = result.invariant_points
    for kind, g in inv.groupby("kind", sort=False) if len(inv) else []:
        _, mk, size = style.invariant_marker(kind)
        xs, ys = ternary.helpers.project_sequence(pts(g))
        ax.scatter(xs, ys, marker=mk, s=size * 5, color=style.INVARIANT_COLOUR, zorder=5,
                   label=style.LABELS["eutonic"] if kind == "eutonic" else style.LABELS["transition"])
    sp = result.solid_points
    xs, ys = ternary.helpers.project_sequence(pts(sp))
    ax.scatter(xs, ys, marker=style.MARKERS["solid"][1], s=40, color="#333333", zorder=5)
    for _, r in sp.iterrows():
        x, y = ternary.helpers.project_point((r[pb], r[pw], r[pa]))
        ax.annotate(r["solid"], (x, y), textcoords="offset points", xytext=(4, 4), fontsize=8)
    for label, df in path_frames(path):
        c = ternary_path(model or _model(), (A, B), df)
        tax.plot(list(zip(c[pb], c[pw], c[pa])), color=style.PATH_COLOUR, linewidth=1.2, marker="o",
                 markersize=3, label=label)
    tax.left_axis_label(f"{A} (mass %)", offset=0.14)
    tax.right_axis_label("H2O (mass %)", offset=0.14)
    tax.bottom_axis_label(f"{B} (mass %)", offset=0.06)
    tax.ticks(axis="lbr", multiple=20, linewidth=1, offset=0.02, fontsize=8)
    tax.clear_matplotlib_ticks()
    ax.axis("off")
    tax.set_title(f"{A}–{B}–H2O, {meta['temp_c']:g} °C", fontsize=12)
    tax.legend(fontsize=7, loc="upper right")
    return _finish(fig, p, dpi)


def save_rectangular(result, file, units: str = "g_per_100g_water", path=None, dpi: int = 200, model=None) -> Path:
    """Rectangular isotherm (salt B against salt A per unit of water) to ``file``."""
    if units not in ("g_per_100g_water", "molality"):
        raise InputError("units", units, "'g_per_100g_water' or 'molality'")
    p = _check_file(file)
    meta = result.meta()
    A, B = meta["salts"]
    ca, cb = f"{A}_{units}", f"{B}_{units}"
    fig, ax = plt.subplots(figsize=(7, 5.5))
    seen = set()
    for (_, solid, meta_flag), c in result.curves.groupby(["curve", "solid", "metastable"], sort=False):
        label = f"{solid}: {style.LABELS['metastable'] if meta_flag else style.LABELS['curve']}"
        ax.plot(c[ca], c[cb], color=style.solid_colour(solid), lw=style.CURVE_WIDTH, ls=_mpl_dash(meta_flag),
                label=None if label in seen else label)
        seen.add(label)
    inv = result.invariant_points
    for kind, g in inv.groupby("kind", sort=False) if len(inv) else []:
        _, mk, size = style.invariant_marker(kind)
        ax.scatter(g[ca], g[cb], marker=mk, s=size * 5, color=style.INVARIANT_COLOUR, zorder=5,
                   label=style.LABELS["eutonic"] if kind == "eutonic" else style.LABELS["transition"])
    for label, df in path_frames(path):
        c = ternary_path(model or _model(), (A, B), df)
        ax.plot(c[ca], c[cb], color=style.PATH_COLOUR, lw=1.2, marker="o", ms=3, label=label)
    ax.set_xlabel(f"{A} ({UNITS[units]})")
    ax.set_ylabel(f"{B} ({UNITS[units]})")
    ax.set_xlim(left=0)
    ax.set_ylim(bottom=0)
    ax.set_title(f"{A}–{B}–H2O, {meta['temp_c']:g} °C")
    ax.legend(fontsize=8)
    return _finish(fig, p, dpi)


def save_jaenecke(result, file, path=None, dpi: int = 200, model=None) -> Path:
    """Jänecke projection (square or triangle) to ``file``."""
    p = _check_file(file)
    meta = result.meta()
    fig, ax = plt.subplots(figsize=(7, 6.5))
    for (solid, _), f in result.fields.groupby(["solid", "field"], sort=False):
        ax.fill(f["x"], f["y"], color=style.solid_colour(solid), alpha=style.FIELD_OPACITY + 0.1, lw=0)
        ax.text(*style.polygon_centroid(f["x"], f["y"]), solid, ha="center", va="center", fontsize=7)
    for _, c in result.curves.groupby("boundary", sort=False):
        ax.plot(c["x"], c["y"], color="#333333", lw=1.2)
    corners = meta["corners"]
    names = list(corners)
    xs = [corners[n][0] for n in names] + [corners[names[0]][0]]
    ys = [corners[n][1] for n in names] + [corners[names[0]][1]]
    ax.plot(xs, ys, color="#111111", lw=1.0)
    cx, cy = np.mean(xs[:-1]), np.mean(ys[:-1])
    for n in names:
        x, y = corners[n]
        ax.annotate(n, (x, y), textcoords="offset points", xytext=(10 * np.sign(x - cx), 8 * np.sign(y - cy)),
                    ha="center", va="center", fontsize=10, fontweight="bold")
    inv = result.invariant_points
    if len(inv):
        ax.scatter(inv["x"], inv["y"], marker=style.MARKERS["invariant point"][1], s=40, color=style.INVARIANT_COLOUR,
                   zorder=5, label=style.LABELS["invariant"])
    for label, df in path_frames(path):
        x, y = projection_path(model or _model(), meta["system"], df)
        ax.plot(x, y, color=style.PATH_COLOUR, lw=1.2, marker="o", ms=3, label=label)
    ax.set_aspect("equal")
    ax.axis("off")
    title = {"reciprocal": "Na+, K+ // Cl−, SO4²− – H2O", "reciprocal_nitrate": "Na+, K+ // Cl−, NO3− – H2O"}.get(
        meta["system"], "Oceanic salts at halite saturation (K2–Mg–SO4)")
    ax.set_title(f"{title}, {meta['temp_c']:g} °C", fontsize=11)
    if len(inv):  # below the diagram: the corners carry the salt names
        ax.legend(fontsize=8, loc="upper center", bbox_to_anchor=(0.5, 0.0), frameon=False)
    return _finish(fig, p, dpi)


def save_polytherm(result, file, units: str = "mass_percent", path=None, dpi: int = 200, model=None) -> Path:
    """Polytherm (invariant points and binary solubilities against temperature) to ``file``.

    A ``path`` here needs a ``temp_c`` column besides the molalities (a cooling or heating path).
    """
    if units not in ("mass_percent", "g_per_100g_water", "molality"):
        raise InputError("units", units, "'mass_percent', 'g_per_100g_water' or 'molality'")
    p = _check_file(file)
    meta = result.meta()
    A, B = meta["salts"]
    fig, ax = plt.subplots(figsize=(7.5, 5))
    inv = result.invariant_points
    for solids, g in inv.groupby(inv["solids"].map(lambda s: " + ".join(s)), sort=False):
        for salt, ls in ((A, "-"), (B, "--")):
            ax.plot(g["temp_c"], g[f"{salt}_{units}"], ls=ls, color=style.INVARIANT_COLOUR, lw=1.4, marker=".",
                    label=f"{salt} at {solids}")
    for (salt, solid), g in result.binary_points.groupby(["salt", "solid"], sort=False):
        ax.plot(g["temp_c"], g[units], color=style.solid_colour(solid), lw=1.4, label=f"{salt} alone ({solid})")
    tr = result.transitions
    for _, r in tr.iterrows():
        ax.axvline(r["temp_c"], color="#b23a48", lw=0.8, ls=":")
    for label, df in path_frames(path):
        if "temp_c" not in df.columns:
            raise InputError("path", list(df.columns), "a DataFrame with a 'temp_c' column (°C) besides the molalities")
        c = ternary_path(model or _model(), (A, B), df)
        for salt, ls in ((A, "-"), (B, "--")):
            ax.plot(df["temp_c"], c[f"{salt}_{units}"], color=style.PATH_COLOUR, ls=ls, lw=1.2, marker="o", ms=3,
                    label=f"{label}: {salt}")
    ax.set_xlabel("temperature (°C)")
    ax.set_ylabel(f"salt ({UNITS[units]})")
    ax.set_title(f"{A}–{B}–H2O polytherm")
    ax.legend(fontsize=7)
    return _finish(fig, p, dpi)
