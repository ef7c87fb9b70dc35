"""Isotherms of salt–salt–water systems with a common ion.

The saturation curve of every solid is traced by continuation (see
:mod:`phasekit.diagrams.engine` and :mod:`phasekit.diagrams.network`) in the unknowns
``x`` (mole fraction of salt B in the dissolved salts) and ``s = ln(m_A + m_B)``, from the
binary solubility of salt A to that of salt B; where a second solid reaches saturation the
invariant point is solved exactly (both saturation equations, |SI| < 1e-10) and the tracing
goes on along the new solid's curve. The solids are every solid of the database made only
of the system's ions (hydrates and double salts included), so carnallite appears in
KCl–MgCl2–H2O and schoenite in K2SO4–MgSO4–H2O without being named.

Names (as in the solubility literature, e.g. Linke & Seidell 1965, "Solubilities of
Inorganic and Metal-Organic Compounds", 4th ed., and Silcock 1979, "Solubilities of
Inorganic and Organic Compounds", vol. 3): a *saturation curve* bounds the *crystallization
field* of its solid; at an *invariant point* two solids and the liquid coexist (at fixed T
and P the phase rule leaves no freedom); it is a *eutonic point* when the liquid's salt
ratio lies between those of its two solids (isothermal evaporation ends there, both solids
crystallizing) and a *transition point* otherwise (one solid dissolves while the other
forms, as for carnallite next to sylvite). *Tie lines* join a liquid to the solid it is
saturated with.

Ice is not considered (the model's temperature range starts at 0 °C).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER
from phasekit.diagrams.engine import LN10, Evaluator
from phasekit.diagrams.export import DiagramData
from phasekit.diagrams.network import Network
from phasekit.diagrams.systems import TernarySystem, check_temperature
from phasekit.errors import InputError, ValidityWarning, warn_validity

#: tolerance on the salt ratio when telling a eutonic from a transition point
RATIO_TOL = 1e-9


@dataclass
class IsothermResult(DiagramData):
    """Isotherm of a salt–salt–water system.

    Attributes
    ----------
    salts : list of str
    temp_c : float
    curves : pandas.DataFrame
        One row per point of every saturation curve: ``solid``, ``curve`` (id), ``point``
        (order along the curve, from salt A's side for stable curves, outward for metastable
        extensions), ``metastable``, ``x_<B>`` (mole fraction of salt B in the dissolved salts),
        ``<salt>_molality``, ``<salt>_mass_percent``, ``<salt>_g_per_100g_water`` for both
        salts, ``water_mass_percent``, ``water_activity``, ``ionic_strength`` and
        ``saturation_index`` (log10, of the curve's solid).
    invariant_points : pandas.DataFrame
        ``solids`` (tuple of the two coexisting solids), ``kind`` (``eutonic`` or ``transition
        point``), the composition columns as in ``curves``, ``water_activity``,
        ``ionic_strength``, ``max_abs_saturation_index``.
    fields : pandas.DataFrame
        Polygons in mass per cent: ``field``, ``kind`` (``crystallization field``,
        ``three-phase region`` or ``unsaturated solution``), ``vertex`` and the mass per cent
        of both salts and water.
    tie_lines : pandas.DataFrame
        ``solid``, ``tie_line``, ``end`` (``liquid``/``solid``) and mass per cent columns.
    solid_points : pandas.DataFrame
        Composition of every solid considered: formula, salt units per formula unit, mass per
        cent, and whether it has a stable field here.
    warnings : list of str
    """

    salts: list
    temp_c: float
    curves: pd.DataFrame
    invariant_points: pd.DataFrame
    fields: pd.DataFrame
    tie_lines: pd.DataFrame
    solid_points: pd.DataFrame
    metastable: bool = False
    warnings: list = field(default_factory=list)
    database: str = "embedded database"

    kind = "isotherm"
    table_names = ("curves", "invariant_points", "fields", "tie_lines", "solid_points")

    def meta(self) -> dict:
        return {"salts": list(self.salts), "temp_c": self.temp_c, "metastable": self.metastable,
                "warnings": list(self.warnings), "database": self.database}

    @property
    def stable_sequence(self) -> list:
        """Solids of the stable curves in order from salt A to salt B."""
        st = self.curves[~self.curves["metastable"]]
        return list(dict.fromkeys(st.sort_values(["curve", "point"])["solid"].tolist()))


# ------------------------------------------------------------------ compositions
def composition_columns(sysm: TernarySystem, sm: np.ndarray) -> dict:
    """Composition columns of salt molality rows ``sm`` (N, 2)."""
    A, B = sysm.salts
    g = sm * sysm.salt_masses[None, :]  # g of salt per kg water
    tot = 1000.0 + g.sum(axis=1)
    return {
        f"{A}_molality": sm[:, 0], f"{B}_molality": sm[:, 1],
        f"{A}_mass_percent": 100.0 * g[:, 0] / tot, f"{B}_mass_percent": 100.0 * g[:, 1] / tot,
        "water_mass_percent": 100.0 * 1000.0 / tot,
        f"{A}_g_per_100g_water": g[:, 0] / 10.0, f"{B}_g_per_100g_water": g[:, 1] / 10.0,
    }


def solid_mass_percent(sysm: TernarySystem, model, k: int) -> np.ndarray:
    """Mass per cent (salt A, salt B, water) of solid ``k``."""
    p = sysm.solid_salts[k]
    g = np.array([p[0] * sysm.salt_masses[0], p[1] * sysm.salt_masses[1], model.solids.nw[k] * M_WATER * 1000.0])
    return 100.0 * g / g.sum()


def _ratio(sysm, k) -> float:
    p = sysm.solid_salts[k]
    return float(p[1] / (p[0] + p[1]))


def _rows(sysm, points, names_pct):
    Z = np.array([p.z for p in points])
    sm = sysm.salt_molalities(Z)
    cols = composition_columns(sysm, sm)
    cols["water_activity"] = np.exp([p.ln_aw for p in points])
    cols["ionic_strength"] = np.array([p.ionic_strength for p in points])
    return Z, cols


# ------------------------------------------------------------------- the isotherm
def build_network(model, sysm: TernarySystem, temp_c: float, metastable: bool = False):
    """Trace the stable curves (and metastable extensions) of a ternary system; returns (ev, net, order)."""
    ev = Evaluator(model, sysm, temp_c)
    net = Network(ev)
    order = net.side(0)
    if metastable:
        i_stop = float(model.db.ionic_strength_max)
        for sg in [s for s in net.segments if not s.metastable]:
            for nid in (sg.start, sg.end):
                if nid is not None and len(net.nodes[nid].solids) == 2:
                    net.extend(sg, nid, i_stop)
    return ev, net, order


def isotherm(salts, temp_c: float, metastable: bool = False, exclude=(), model=None,
             tie_lines_per_curve: int = 6) -> IsothermResult:
    """Isotherm of a salt–salt–water system with a common ion.

    Parameters
    ----------
    salts : sequence of two str
        Salt formulas with one ion in common, e.g. ``["NaCl", "KCl"]``, ``["KCl", "MgCl2"]``,
        ``["NaCl", "Na2SO4"]``.
    temp_c : float
        Temperature, °C.
    metastable : bool
        Also trace the metastable extension of every saturation curve beyond its invariant
        points (rows with ``metastable`` True), up to a binary axis, a turn of the curve, or
        the ionic strength limit of the database.
    exclude : sequence of str
        Solids left out, e.g. ``["thenardite"]`` for the metastable diagram with mirabilite.
    tie_lines_per_curve : int
        Tie lines drawn from each stable saturation curve.

    Returns
    -------
    IsothermResult

    Raises
    ------
    InputError
        Not two salts, salts without exactly one common ion, a salt unknown to the database.
    RangeError
        A temperature outside the range of the system's Pitzer parameters.
    """
    from phasekit.model import default_model

    model = model or default_model()
    sysm = TernarySystem(model, salts, exclude)
    t = check_temperature(model, sysm.ions, temp_c)
    if not isinstance(tie_lines_per_curve, int | np.integer) or tie_lines_per_curve < 0:
        raise InputError("tie_lines_per_curve", tie_lines_per_curve, "an integer >= 0")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        ev, net, order = build_network(model, sysm, t, metastable)
    return result_from_network(model, sysm, ev, net, t, metastable, tie_lines_per_curve)


def result_from_network(model, sysm, ev, net, temp_c, metastable=False, tie_lines_per_curve=6,
                        light: bool = False) -> IsothermResult:
    """Tables of an isotherm from its traced network (``light``: curves and invariant points only)."""
    A, B = sysm.salts
    warns = list(net.warnings)
    # ------------------------------------------------------------ curves
    frames = []
    for sg in net.segments:
        pts = sg.points
        k = sg.solids[0]
        Z, cols = _rows(sysm, pts, None)
        df = pd.DataFrame({"solid": ev.names[k], "curve": sg.id, "point": np.arange(len(pts)),
                           "metastable": sg.metastable, f"x_{B}": Z[:, 0], **cols,
                           "saturation_index": np.array([p.lnsi[k] for p in pts]) / LN10})
        frames.append(df)
    curves = pd.concat(frames, ignore_index=True)
    # ------------------------------------------------------ invariant points
    inv = []
    for nd in net.nodes:
        if len(nd.solids) != 2:
            continue
        p = nd.point
        Z, cols = _rows(sysm, [p], None)
        r = sorted(_ratio(sysm, ev.cands[k]) for k in nd.solids)
        xp = float(Z[0, 0])
        kind = "eutonic" if r[0] - RATIO_TOL <= xp <= r[1] + RATIO_TOL else "transition point"
        names = tuple(sorted(ev.names[k] for k in nd.solids))
        row = {"solids": names, "kind": kind, f"x_{B}": xp}
        row.update({c: float(v[0]) for c, v in cols.items()})
        row["max_abs_saturation_index"] = float(np.max(np.abs(p.lnsi[list(nd.solids)]))) / LN10
        inv.append(row)
    inv_cols = ["solids", "kind", f"x_{B}"] + list(composition_columns(sysm, np.zeros((1, 2))).keys()) + [
        "water_activity", "ionic_strength", "max_abs_saturation_index"]
    invariant = pd.DataFrame(inv, columns=inv_cols)
    invariant = invariant.sort_values(f"x_{B}", kind="stable").reset_index(drop=True)
    stable_solids = {ev.names[sg.solids[0]] for sg in net.segments if not sg.metastable}
    if light:
        empty = pd.DataFrame()
        return IsothermResult(list(sysm.salts), float(temp_c), curves, invariant, empty, empty, empty, metastable,
                              warns + _validity_warnings(model, net, temp_c, stable_solids),
                              getattr(model, "label", "embedded database"))
    # ----------------------------------------------------------- solids
    stable_solids = {ev.names[sg.solids[0]] for sg in net.segments if not sg.metastable}
    srows = []
    for li, k in enumerate(ev.cands):
        pct = solid_mass_percent(sysm, model, k)
        p = sysm.solid_salts[k]
        srows.append({"solid": ev.names[li], "formula": model.solids.solids[k].formula,
                      f"{A}_per_formula": float(p[0]), f"{B}_per_formula": float(p[1]),
                      "water_per_formula": float(model.solids.nw[k]),
                      f"{A}_mass_percent": pct[0], f"{B}_mass_percent": pct[1], "water_mass_percent": pct[2],
                      "stable_field": ev.names[li] in stable_solids})
    solid_points = pd.DataFrame(srows)
    spct = {r["solid"]: (r[f"{A}_mass_percent"], r[f"{B}_mass_percent"], r["water_mass_percent"]) for r in srows}
    # ----------------------------------------------------------- fields
    pa, pb = f"{A}_mass_percent", f"{B}_mass_percent"
    frows = []

    def poly(name, kind, verts):
        for i, (a, b, w) in enumerate(verts):
            frows.append({"field": name, "kind": kind, "vertex": i, pa: a, pb: b, "water_mass_percent": w})

    stable = curves[~curves["metastable"]]
    for cid, cdf in stable.groupby("curve", sort=True):
        solid = cdf["solid"].iloc[0]
        seg = net.segments[int(cid)]
        if seg.end is None:
            continue
        verts = list(zip(cdf[pa], cdf[pb], cdf["water_mass_percent"])) + [spct[solid]]
        poly(solid, "crystallization field", verts)
    for _, r in invariant.iterrows():
        s1, s2 = r["solids"]
        poly(f"{s1} + {s2}", "three-phase region", [(r[pa], r[pb], r["water_mass_percent"]), spct[s1], spct[s2]])
    liquidus = stable.sort_values(["curve", "point"])
    verts = [(0.0, 0.0, 100.0)] + list(zip(liquidus[pa], liquidus[pb], liquidus["water_mass_percent"]))
    poly("unsaturated solution", "unsaturated solution", verts)
    fields = pd.DataFrame(frows, columns=["field", "kind", "vertex", pa, pb, "water_mass_percent"])
    # -------------------------------------------------------- tie lines
    trows = []
    tid = 0
    for _, cdf in stable.groupby("curve", sort=True):
        solid = cdf["solid"].iloc[0]
        n = len(cdf)
        if n < 2 or tie_lines_per_curve == 0:
            continue
        idx = np.unique(np.round(np.linspace(0, n - 1, tie_lines_per_curve + 2)[1:-1]).astype(int))
        for i in idx:
            r = cdf.iloc[int(i)]
            trows.append({"solid": solid, "tie_line": tid, "end": "liquid", pa: r[pa], pb: r[pb],
                          "water_mass_percent": r["water_mass_percent"]})
            s = spct[solid]
            trows.append({"solid": solid, "tie_line": tid, "end": "solid", pa: s[0], pb: s[1],
                          "water_mass_percent": s[2]})
            tid += 1
    tie_lines = pd.DataFrame(trows, columns=["solid", "tie_line", "end", pa, pb, "water_mass_percent"])
    warns += _validity_warnings(model, net, temp_c, stable_solids)
    for w in warns:
        warn_validity(w)
    return IsothermResult(list(sysm.salts), float(temp_c), curves, invariant, fields, tie_lines, solid_points,
                          metastable, warns, getattr(model, "label", "embedded database"))


def _validity_warnings(model, net, temp_c, stable_solids) -> list:
    """Validity-range warnings of the stable part of a diagram."""
    pts = [p for sg in net.segments if not sg.metastable for p in sg.points]
    out = []
    if pts:
        out += model._validity(np.array([p.m for p in pts]), temp_c, np.array([p.ionic_strength for p in pts]))
    rng = model.solids.t_range
    for name in sorted(stable_solids):
        k = model.solids.index[name]
        if not rng[k, 0] <= temp_c <= rng[k, 1]:
            out.append(f"{name}: {temp_c:g} °C outside the validity range {rng[k, 0]:g}–{rng[k, 1]:g} °C "
                       "of its solubility product (extrapolated)")
    return out
