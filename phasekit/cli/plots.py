"""Report figures of the command line (matplotlib, no display needed).

Where :mod:`phasekit.plotting` provides a figure for a result, the command line uses it; these
are the plain figures drawn otherwise.
"""

from __future__ import annotations

import numpy as np

from phasekit.errors import InputError


def _pyplot():
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt


def save(fig, path: str) -> None:
    """Save and close a figure; a file that cannot be written is an input error."""
    plt = _pyplot()
    try:
        fig.savefig(path, dpi=150, bbox_inches="tight")
    except OSError as exc:
        raise InputError("--plot", path, f"a file that can be written ({exc.strerror})") from None
    finally:
        plt.close(fig)


def polytherm_figure(curve, transitions, salt: str, path: str) -> None:
    """Solubility (mass %) against temperature, one colour per stable solid, transitions marked."""
    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    for solid, part in curve.dropna(subset=["solid"]).groupby("solid", sort=False):
        part = part.sort_values("temp_c")
        ax.plot(part["temp_c"], part["mass_percent"], lw=2, label=solid)
    for tr in transitions.itertuples():
        ax.axvline(tr.temp_c, color="0.6", lw=0.8, ls="--")
        ax.annotate(f"{tr.temp_c:.1f} °C", (tr.temp_c, ax.get_ylim()[1]), rotation=90, va="top", ha="right",
                    fontsize=8, color="0.35")
    ax.set_xlabel("temperature, °C")
    ax.set_ylabel(f"{salt}, mass % of the saturated solution")
    ax.set_title(f"Solubility of {salt} (stable solid)")
    ax.grid(alpha=0.3)
    ax.legend(title="solid")
    save(fig, path)


def path_figure(result, x: str, path: str, title: str) -> None:
    """Brine molalities and cumulative solids along a path; ``x`` is a column of ``result.steps``."""
    plt = _pyplot()
    steps, prec = result.steps, result.precipitated
    species = [c for c in steps.columns if c not in ("water_removed_fraction", "concentration_factor", "temp_c",
                                                      "liquid_water_kg", "water_activity", "ionic_strength",
                                                      "density_kg_per_l", "solids")]
    fig, (top, bottom) = plt.subplots(2, 1, figsize=(7.0, 7.0), sharex=True)
    xs = steps[x].to_numpy()
    for s in species:
        y = steps[s].to_numpy()
        if np.any(y > 0):
            top.plot(xs, np.where(y > 0, y, np.nan), label=s)
    top.set_yscale("log")
    top.set_ylabel("brine, mol/kg water")
    top.legend(ncol=4, fontsize=8)
    top.grid(alpha=0.3, which="both")
    for c in prec.columns:
        bottom.plot(xs, prec[c].to_numpy(), label=c)
    bottom.set_ylabel("solids, mol per kg initial water")
    bottom.set_xlabel({"concentration_factor": "concentration factor", "temp_c": "temperature, °C"}.get(x, x))
    if len(prec.columns):
        bottom.legend(ncol=3, fontsize=8)
    bottom.grid(alpha=0.3)
    for ev in result.events.itertuples():
        if ev.event == "appears":
            for ax in (top, bottom):
                ax.axvline(getattr(ev, x), color="0.6", lw=0.7, ls=":")
    if x == "concentration_factor":
        bottom.set_xscale("log")
    if x == "temp_c" and len(xs) > 1 and xs[0] > xs[-1]:
        bottom.invert_xaxis()
    top.set_title(title)
    save(fig, path)


def isotherm_figure(curves, invariant_points, salts, temp_c, path: str) -> None:
    """Saturation curves of a ternary isotherm in mass % (plain fallback figure)."""
    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(6.0, 5.0))
    xcol = next((c for c in curves.columns if c.endswith("_mass_percent") and salts[0] in c), None)
    ycol = next((c for c in curves.columns if c.endswith("_mass_percent") and salts[1] in c), None)
    if xcol is None or ycol is None:
        plt.close(fig)
        raise InputError("--plot", path, "an isotherm result with mass-percent columns of both salts")
    key = "solid" if "solid" in curves.columns else None
    groups = curves.groupby(key, sort=False) if key else [("", curves)]
    for name, part in groups:
        ax.plot(part[xcol], part[ycol], lw=2, label=str(name))
    if invariant_points is not None and len(invariant_points):
        xi = next((c for c in invariant_points.columns if c.endswith("_mass_percent") and salts[0] in c), None)
        yi = next((c for c in invariant_points.columns if c.endswith("_mass_percent") and salts[1] in c), None)
        if xi and yi:
            ax.plot(invariant_points[xi], invariant_points[yi], "ko", ms=5, label="invariant points")
    ax.set_xlabel(f"{salts[0]}, mass %")
    ax.set_ylabel(f"{salts[1]}, mass %")
    ax.set_title(f"{' – '.join(salts)} – H2O at {temp_c:g} °C")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8)
    save(fig, path)
