"""Polytherms of salt–salt–water systems: invariant points and saturation curves against temperature.

The isotherm (:mod:`phasekit.diagrams.ternary`) is traced at every temperature of a grid.
Between two neighbouring temperatures whose sequences of stable solids (from salt A's axis
to salt B's) differ, the temperature of the change is root-found (Brent's method,
``scipy.optimize.brentq``), never read off the grid:

- a solid appears or disappears inside the diagram: at the invariant point of its two
  neighbours (a, c), solved exactly at each trial temperature, the saturation index of the
  solid b crosses zero. At that temperature a, b and c coexist with the liquid — a
  *quadruple point* of the polytherm (four phases, invariant at fixed pressure).
- the stable solid on a binary axis changes (e.g. mirabilite → thenardite in Na2SO4–H2O): at
  the axis point saturated with the old solid the new solid's saturation index crosses zero —
  the *transition point* of the binary salt–water system.

Where a grid interval holds more than one change the interval is halved until each part holds
one. Two changes that cancel within one grid interval (a field that appears and vanishes
between two grid temperatures) are not seen: choose a finer ``step_c`` to resolve them.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.optimize import brentq

from phasekit.diagrams.engine import LN10, Eqs, Evaluator
from phasekit.diagrams.export import DiagramData
from phasekit.diagrams.systems import TernarySystem, check_temperature
from phasekit.diagrams.ternary import build_network, composition_columns, result_from_network
from phasekit.errors import ConvergenceError, InputError, ValidityWarning

#: temperature resolution of the transition search, °C
T_XTOL = 1e-7
MAX_BISECT = 5


@dataclass
class PolythermResult(DiagramData):
    """Polytherm of a salt–salt–water system.

    Attributes
    ----------
    salts : list of str
    temperatures : list of float
        The grid (°C).
    invariant_points : pandas.DataFrame
        ``temp_c`` plus the columns of :attr:`IsothermResult.invariant_points`, one row per
        invariant point per grid temperature.
    curves : pandas.DataFrame
        ``temp_c`` plus the columns of :attr:`IsothermResult.curves` (the field boundaries at
        each temperature).
    binary_points : pandas.DataFrame
        Solubility on each binary axis: ``temp_c``, ``salt``, ``solid``, ``molality``,
        ``mass_percent``, ``g_per_100g_water``.
    transitions : pandas.DataFrame
        ``temp_c``, ``kind`` (``quadruple point`` or ``binary transition point``), ``event``,
        ``solids`` (the coexisting solids), ``solids_below``/``solids_above`` (the stable
        sequences just below and above), and the composition of the liquid.
    warnings : list of str
    """

    salts: list
    temperatures: list
    invariant_points: pd.DataFrame
    curves: pd.DataFrame
    binary_points: pd.DataFrame
    transitions: pd.DataFrame
    isotherms: dict = field(default_factory=dict, repr=False)
    warnings: list = field(default_factory=list)
    database: str = "embedded database"

    kind = "polytherm"
    table_names = ("invariant_points", "curves", "binary_points", "transitions")

    def meta(self) -> dict:
        return {"salts": list(self.salts), "temperatures": list(self.temperatures), "warnings": list(self.warnings),
                "database": self.database}


def _sequence(ev, net) -> list:
    return [ev.names[sg.solids[0]] for sg in net.segments if not sg.metastable]


def _classify(s1: list, s2: list):
    """One elementary change between two stable sequences, or None."""
    if s1 == s2:
        return None
    for side, a, b in (("A", s1, s2), ("B", s1[::-1], s2[::-1])):
        if a[0] != b[0] and (a[1:] == b[1:] or b[1:] == a or a[1:] == b):
            return ("axis", side, a[0], b[0])
    if len(s2) == len(s1) + 1:
        for i in range(1, len(s2) - 1):
            if s2[:i] + s2[i + 1:] == s1:
                return ("appears", s2[i - 1], s2[i], s2[i + 1])
    if len(s1) == len(s2) + 1:
        for i in range(1, len(s1) - 1):
            if s1[:i] + s1[i + 1:] == s2:
                return ("disappears", s1[i - 1], s1[i], s1[i + 1])
    return None


class _Tracker:
    """Root-finding of one transition temperature with warm-started point solves."""

    def __init__(self, model, sysm, eqs_names, watch_name, z0, fixed_x=None):
        self.model, self.sysm = model, sysm
        self.names, self.watch = eqs_names, watch_name
        self.z = np.array(z0, dtype=float)
        self.fixed_x = fixed_x
        self.last = None

    def g(self, t):
        ev = Evaluator(self.model, self.sysm, t)
        loc = [ev.names.index(n) for n in self.names]
        if self.fixed_x is None:
            eqs = Eqs(loc, np.zeros((0, 2)), np.zeros(0))
        else:
            eqs = Eqs(loc, np.array([[1.0, 0.0]]), np.array([self.fixed_x]))
        sol = ev.newton(self.z, eqs, maxit=40)
        if sol is None:
            raise _NoPoint(t)
        pt = sol[0]
        self.z = pt.z.copy()
        self.last = (ev, pt)
        return float(pt.lnsi[ev.names.index(self.watch)])


class _NoPoint(Exception):
    pass


def ternary_polytherm(salts, t_min_c: float = 0.0, t_max_c: float = 100.0, step_c: float = 5.0, exclude=(),
                      model=None) -> PolythermResult:
    """Polytherm of a salt–salt–water system: isotherms on a temperature grid and the transitions between.

    Parameters
    ----------
    salts : sequence of two str
        Salt formulas with one ion in common, e.g. ``["NaCl", "KCl"]``.
    t_min_c, t_max_c : float
        Temperature range, °C.
    step_c : float
        Grid step, °C (the transitions are root-found between grid points, not limited by it).
    exclude : sequence of str
        Solids left out.

    Returns
    -------
    PolythermResult

    Raises
    ------
    InputError, RangeError
        As for :func:`~phasekit.diagrams.ternary.isotherm`; also ``t_max_c <= t_min_c`` or a
        non-positive step.
    """
    from phasekit.model import default_model

    model = model or default_model()
    sysm = TernarySystem(model, salts, exclude)
    t0 = check_temperature(model, sysm.ions, t_min_c, "t_min_c")
    t1 = check_temperature(model, sysm.ions, t_max_c, "t_max_c")
    if not t1 > t0:
        raise InputError("t_max_c", t_max_c, f"a temperature above t_min_c = {t0:g} °C")
    try:
        step = float(step_c)
    except (TypeError, ValueError):
        raise InputError("step_c", step_c, "a positive step in °C") from None
    if not (np.isfinite(step) and step > 0):
        raise InputError("step_c", step_c, "a positive step in °C")
    n = max(int(round((t1 - t0) / step)), 1)
    grid = [float(v) for v in np.linspace(t0, t1, n + 1)]
    warns: list = []
    nets = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for t in grid:
            try:
                nets[t] = build_network(model, sysm, t)
            except ConvergenceError as exc:
                warns.append(f"no isotherm at {t:g} °C: {exc}")
        grid = [t for t in grid if t in nets]
        if not grid:
            raise ConvergenceError(f"no isotherm of {sysm.name} could be traced from {t0:g} to {t1:g} °C",
                                   {"warnings": warns})
        transitions = []
        for ta, tb in zip(grid[:-1], grid[1:]):
            _resolve(model, sysm, nets, ta, tb, transitions, warns, 0)
        for t in grid:
            seq = _sequence(*nets[t][:2])
            if len(set(seq)) < len(seq):
                warns.append(f"{t:g} °C: a solid has two separate stable fields ({' | '.join(seq)}); "
                             "suspect the solubility products of the solids at this temperature")
        isos = {t: result_from_network(model, sysm, nets[t][0], nets[t][1], t, light=True) for t in grid}
    A, B = sysm.salts
    inv = pd.concat([iso.invariant_points.assign(temp_c=t) for t, iso in isos.items()], ignore_index=True)
    inv = inv[["temp_c"] + [c for c in inv.columns if c != "temp_c"]]
    cur = pd.concat([iso.curves.assign(temp_c=t) for t, iso in isos.items()], ignore_index=True)
    cur = cur[["temp_c"] + [c for c in cur.columns if c != "temp_c"]]
    brows = []
    for t, iso in isos.items():
        for salt, x in ((A, 0.0), (B, 1.0)):
            c = iso.curves[(~iso.curves["metastable"]) & (np.abs(iso.curves[f"x_{B}"] - x) < 1e-12)]
            if len(c):
                r = c.iloc[0]
                brows.append({"temp_c": t, "salt": salt, "solid": r["solid"], "molality": r[f"{salt}_molality"],
                              "mass_percent": r[f"{salt}_mass_percent"],
                              "g_per_100g_water": r[f"{salt}_g_per_100g_water"]})
        for w in iso.warnings:
            if w not in warns and "of its solubility product" not in w:
                warns.append(w)
    extrap: dict = {}
    rng = model.solids.t_range
    for t, iso in isos.items():
        for name in set(iso.curves.loc[~iso.curves["metastable"], "solid"]):
            k = model.solids.index[name]
            if not rng[k, 0] <= t <= rng[k, 1]:
                extrap.setdefault(name, []).append(t)
    for name, ts in extrap.items():
        k = model.solids.index[name]
        warns.append(f"{name}: solubility product extrapolated at {min(ts):g}–{max(ts):g} °C "
                     f"(validity range {rng[k, 0]:g}–{rng[k, 1]:g} °C)")
    binary = pd.DataFrame(brows, columns=["temp_c", "salt", "solid", "molality", "mass_percent", "g_per_100g_water"])
    tcols = ["temp_c", "kind", "event", "solids", "solids_below", "solids_above", f"x_{B}"] + list(
        composition_columns(sysm, np.zeros((1, 2))).keys()) + ["water_activity", "max_abs_saturation_index"]
    trans = pd.DataFrame(sorted(transitions, key=lambda r: r["temp_c"]), columns=tcols)
    return PolythermResult(list(sysm.salts), grid, inv.reset_index(drop=True), cur, binary, trans, isos, warns,
                           getattr(model, "label", "embedded database"))


def _resolve(model, sysm, nets, ta, tb, out, warns, depth):
    eva, neta, _ = nets[ta]
    evb, netb, _ = nets[tb]
    sa, sb = _sequence(eva, neta), _sequence(evb, netb)
    if sa == sb:
        return
    if _incomplete(neta) or _incomplete(netb):
        warns.append(f"stable solids change from {sa} to {sb} between {ta:g} and {tb:g} °C, where an isotherm "
                     "is incomplete; not resolved")
        return
    ch = _classify(sa, sb)
    if ch is None and (len(set(sa)) < len(sa) or len(set(sb)) < len(sb)):
        warns.append(f"stable solids change from {sa} to {sb} between {ta:g} and {tb:g} °C with a solid in two "
                     "separate fields; not resolved")
        return
    if ch is None or not _root(model, sysm, nets, ta, tb, sa, sb, ch, out):
        if depth >= MAX_BISECT:
            warns.append(f"stable solids change from {sa} to {sb} between {ta:g} and {tb:g} °C; "
                         "the change could not be resolved into single transitions")
            return
        tm = 0.5 * (ta + tb)
        try:
            nets[tm] = build_network(model, sysm, tm)
        except ConvergenceError as exc:
            warns.append(f"no isotherm at {tm:g} °C: {exc}")
            return
        _resolve(model, sysm, nets, ta, tm, out, warns, depth + 1)
        _resolve(model, sysm, nets, tm, tb, out, warns, depth + 1)


def _incomplete(net) -> bool:
    return any(sg.end is None and not sg.metastable for sg in net.segments)


def _node_z(ev, net, names):
    key = tuple(sorted(names))
    for nd in net.nodes:
        if tuple(sorted(ev.names[k] for k in nd.solids)) == key:
            return nd.point.z
    return None


def _root(model, sysm, nets, ta, tb, sa, sb, ch, out) -> bool:
    """Root-find one elementary change; append its record; False if it could not be solved."""
    eva, neta, _ = nets[ta]
    B = sysm.salts[1]
    if ch[0] == "axis":
        _, side, old, new = ch
        x = 0.0 if side == "A" else 1.0
        z0 = _node_z(eva, neta, [old])
        tr = _Tracker(model, sysm, [old], new, z0, fixed_x=x)
        solids = tuple(sorted((old, new)))
        kind, event = "binary transition point", f"stable solid of {sysm.salts[0] if side == 'A' else B} " \
                                                 f"changes from {old} to {new}"
    else:
        what, a, b, c = ch
        z0 = _node_z(eva, neta, [a, c]) if what == "appears" else _node_z(nets[tb][0], nets[tb][1], [a, c])
        if z0 is None:
            return False
        tr = _Tracker(model, sysm, [a, c], b, z0)
        solids = tuple(sorted((a, b, c)))
        kind, event = "quadruple point", f"field of {b} {what} (on heating)"
    try:
        if ch[0] == "disappears":  # the neighbours' curves meet (stably) only above: start there
            gb = tr.g(tb)
            ga = tr.g(ta)
        else:
            ga = tr.g(ta)
            gb = tr.g(tb)
        if np.sign(ga) == np.sign(gb):
            return False
        ts = brentq(tr.g, ta, tb, xtol=T_XTOL, rtol=1e-14)
        tr.g(ts)
    except (_NoPoint, ValueError):
        return False
    ev, pt = tr.last
    # the watched solid joins the point: refine with all solids (3 equations in 3 unknowns incl. T is
    # equivalent to the root of g; report the saturation residuals)
    sm = sysm.salt_molalities(pt.z)
    row = {"temp_c": float(ts), "kind": kind, "event": event, "solids": solids, "solids_below": tuple(sa),
           "solids_above": tuple(sb), f"x_{B}": float(pt.z[0])}
    row.update({k: float(v[0]) for k, v in composition_columns(sysm, sm).items()})
    row["water_activity"] = float(np.exp(pt.ln_aw))
    loc = [ev.names.index(s) for s in solids]
    row["max_abs_saturation_index"] = float(np.max(np.abs(pt.lnsi[loc]))) / LN10
    out.append(row)
    return True

