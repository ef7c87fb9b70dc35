"""Evaporation, cooling, heating, and programmes of both, from a brine.

All amounts are per kg of the initial brine's water. Concentration factor = initial mass of
liquid water / mass of liquid water now.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from phasekit.equilibrium.common import candidate_indices, composition_array, excluded_solids
from phasekit.equilibrium.saturation import _solid_mass
from phasekit.errors import InputError, RangeError
from phasekit.paths.balance import as_dict, balance_frame, brine_mass, grades_frame, solid_mass_g
from phasekit.paths.engine import COMPLETE, run_programme
from phasekit.paths.result import PathResult
from phasekit.thermo.water import T_MAX_C, T_MIN_C
from phasekit.validate import is_number, number


def _temp(value, field):
    if not is_number(value) and not isinstance(value, str):
        raise InputError(field, value, "a temperature in °C")
    try:
        t = float(value)
    except (TypeError, ValueError):
        raise InputError(field, value, "a temperature in °C") from None
    if not np.isfinite(t) or t < T_MIN_C or t > T_MAX_C:
        raise RangeError(field, value, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")
    return t


def _fraction(value, field, upper=1.0):
    if not is_number(value) and not isinstance(value, str):
        raise InputError(field, value, "a number")
    try:
        f = float(value)
    except (TypeError, ValueError):
        raise InputError(field, value, "a number") from None
    if not np.isfinite(f) or f < 0 or f > upper:
        raise InputError(field, value, f"a fraction from 0 to {upper:g}")
    return f


def _model(model):
    from phasekit.model import default_model

    return model or default_model()


def _initial(model, brine):
    m0 = composition_array(model, brine)
    model._check(m0[None, :], 25.0, None)
    if not np.any(m0 > 0):
        raise InputError("brine", "no dissolved species", "a brine with at least one salt")
    return m0


def _density(model, m, temp_c):
    try:
        from phasekit.chemistry.brine import Brine

        return float(Brine({s: v for s, v in zip(model.species, m) if v > 0}).density(temp_c))
    except Exception:  # density model out of range or unavailable: not a reason to fail a path
        return float("nan")


def _result(model, path, mode, m0, temp0, exclude=(), allow_beyond_validity=False):
    names = model.solids.names
    rows, prec = [], []
    for rec in path.records:
        row = {"water_removed_fraction": rec["r"], "concentration_factor": 1.0 / rec["w"], "temp_c": rec["t"],
               "liquid_water_kg": rec["w"]}
        row.update({s: v for s, v in zip(model.species, rec["m"])})
        ln_g, osm, ln_aw, ion, _ = model.compute(rec["m"][None, :], rec["t"])
        row["water_activity"] = float(np.exp(ln_aw[0]))
        row["ionic_strength"] = float(ion[0])
        row["density_kg_per_l"] = _density(model, rec["m"], rec["t"])
        row["solids"] = rec["solids"]
        rows.append(row)
        prec.append(dict(zip(names, rec["amounts"])))
    steps = pd.DataFrame(rows)
    present = [s for s in model.species if steps[s].max() > 0]
    steps = steps[["water_removed_fraction", "concentration_factor", "temp_c", "liquid_water_kg", *present,
                   "water_activity", "ionic_strength", "density_kg_per_l", "solids"]]
    precipitated = pd.DataFrame(prec)
    used = [c for c in precipitated.columns if precipitated[c].max() > 0]
    precipitated = precipitated[used]
    ev = []
    for e in path.events:
        row = {"solid": e["solid"], "event": e["event"], "point": e.get("point", ""),
               "concentration_factor": 1.0 / e["w"],
               "water_removed_fraction": e["r"], "temp_c": e["t"]}
        row.update({s: v for s, v in zip(model.species, e["m"]) if s in present})
        ev.append(row)
    events = pd.DataFrame(ev, columns=["solid", "event", "point", "concentration_factor", "water_removed_fraction",
                                       "temp_c", *present])
    solution_mass = 1.0 + float(sum(v * sp for v, sp in zip(m0, _species_masses(model)))) / 1000.0
    masses = {n: _solid_mass(model.solids[n]) for n in used}
    warns = []
    rng = model.solids.t_range
    for n in used:
        k = model.solids.index[n]
        t_used = steps.loc[precipitated[n] > 0, "temp_c"]
        if len(t_used) and (t_used.min() < rng[k, 0] or t_used.max() > rng[k, 1]):
            warns.append(f"{n} forms at {t_used.min():g}–{t_used.max():g} °C, outside the validity range "
                         f"{rng[k, 0]:g}–{rng[k, 1]:g} °C of its solubility product")
    warns += model._validity(np.array([r["m"] for r in path.records]), steps["temp_c"].to_numpy(),
                             steps["ionic_strength"].to_numpy())
    if path.stop_reason == "validity limit":
        warns.append(f"the path stops at the {path.end_text}")
    elif path.stop_reason == "failure":
        warns.append(f"partial path ({path.end_text})")
    mb, grades = _balance_and_grades(model, path, m0)
    return PathResult(events, steps, precipitated, path.end_text, mode, _density(model, m0, temp0), solution_mass,
                      masses, warns, getattr(model, "label", "embedded database"),
                      complete=path.stop_reason in COMPLETE, stop_reason=path.stop_reason, exclude=list(exclude),
                      allow_beyond_validity=bool(allow_beyond_validity), mass_balance=mb, grades=grades)


def _balance_and_grades(model, path, m0):
    """Mass balance (feed = solids + water evaporated + bittern) and grades of a path's final state."""
    last = path.records[-1]
    names = model.solids.names
    crop = {names[k]: float(n) for k, n in enumerate(last["amounts"]) if n > 0}
    outputs = [(f"solid: {s}", n * solid_mass_g(model.solids[s].stoichiometry) / 1000.0) for s, n in crop.items()]
    outputs += [("water evaporated", float(last["r"])), ("bittern (brine left)", brine_mass(as_dict(model, last["m"]),
                                                                                              last["w"]))]
    mb = balance_frame([("feed brine", brine_mass(as_dict(model, m0), 1.0))], outputs)
    crops = [(s, {s: n}) for s, n in crop.items()]
    if len(crop) > 1:
        crops.append(("all solids", crop))
    return mb, grades_frame(crops, lambda s: model.solids[s].stoichiometry)


def _noted(res, brine):
    """The result with the brine's charge-balance line (how it was made neutral) on it."""
    res.charge_balance_note = getattr(brine, "balance_note", "") or ""
    return res


def _species_masses(model):
    from phasekit.chemistry.species import SPECIES

    return [SPECIES[s].molar_mass for s in model.species]


def _exclusion(model, exclude):
    names = excluded_solids(model, exclude)
    return names, candidate_indices(model, names)


def evaporate(brine, temp_c: float = 25.0, mode: str = "fractional", water_removed: float = 1.0,
              concentration_factor: float | None = None, stop_when=None, model=None, exclude=(),
              allow_beyond_validity: bool = False) -> PathResult:
    """Isothermal evaporation of a brine to its end point.

    Parameters
    ----------
    brine : Brine or mapping (mol per kg water)
    temp_c : float
    mode : {"fractional", "equilibrium"}
        Fractional: solids are harvested as they form; equilibrium: they stay and may react.
    water_removed : float
        Largest fraction of the initial water to evaporate (default: all; the path stops at
        its eutonic or drying point first; transition points are passed).
    concentration_factor : float, optional
        Stop when the liquid reaches this concentration factor instead.
    stop_when : callable, optional
        ``stop_when(path, state) -> bool``, checked after every step (used by pond trains).
    exclude : sequence of str, optional
        Solids kept out of the path (e.g. ``["anhydrite", "polyhalite"]``: solids that do not form on
        the time scale of the process); recorded on the result.
    allow_beyond_validity : bool
        By default the path stops where the liquid leaves the database's validity (ionic strength
        above its limit, or a temperature outside the range of a Pitzer parameter of the ions
        present), with ``stop_reason`` "validity limit"; True continues, with warnings.

    Returns
    -------
    PathResult
        ``.complete`` is False when the path stopped early (``stop_reason`` "failure" or
        "validity limit"); the rows computed up to there are kept.
    """
    model = _model(model)
    t = _temp(temp_c, "temp_c")
    f = _fraction(water_removed, "water_removed")
    m0 = _initial(model, brine)
    excl, cands = _exclusion(model, exclude)
    cond = stop_when
    if concentration_factor is not None:
        cf = number("concentration_factor", concentration_factor, "a number >= 1", lo=1.0)

        def cond(path, st, cf=cf, inner=stop_when):
            return 1.0 / st.w >= cf or (inner is not None and inner(path, st))
    path = run_programme(model, m0, 1.0, [(t, 0.0), (t, f)], mode, cond, cands, allow_beyond_validity)
    return _noted(_result(model, path, mode, m0, t, excl, allow_beyond_validity), brine)


def cool(brine, start_c: float, end_c: float, mode: str = "equilibrium", model=None, exclude=(),
         allow_beyond_validity: bool = False) -> PathResult:
    """Cooling (or heating, when ``end_c > start_c``) of a brine at fixed water.

    The brine is first equilibrated at ``start_c``; solids that form stay in equilibrium mode
    and are harvested in fractional mode.

    Parameters
    ----------
    exclude : sequence of str, optional
        Solids kept out of the path (e.g. ``["anhydrite", "polyhalite"]``: solids that do not form on
        the time scale of the process); recorded on the result.
    allow_beyond_validity : bool
        By default the path stops where the liquid leaves the database's validity (ionic strength
        above its limit, or a temperature outside the range of a Pitzer parameter of the ions
        present), with ``stop_reason`` "validity limit"; True continues, with warnings.
    """
    model = _model(model)
    t0, t1 = _temp(start_c, "start_c"), _temp(end_c, "end_c")
    if t0 == t1:
        raise InputError("end_c", end_c, f"a temperature different from start_c = {t0:g} °C")
    m0 = _initial(model, brine)
    excl, cands = _exclusion(model, exclude)
    path = run_programme(model, m0, 1.0, [(t0, 0.0), (t1, 0.0)], mode, None, cands, allow_beyond_validity)
    return _noted(_result(model, path, mode, m0, t0, excl, allow_beyond_validity), brine)


def heat(brine, start_c: float, end_c: float, mode: str = "equilibrium", model=None, exclude=(),
         allow_beyond_validity: bool = False) -> PathResult:
    """Heating of a brine at fixed water (see :func:`cool`)."""
    if float(end_c) <= float(start_c):
        raise InputError("end_c", end_c, f"a temperature above start_c = {start_c}")
    return cool(brine, start_c, end_c, mode, model, exclude, allow_beyond_validity)


def programme(brine, nodes, mode: str = "fractional", model=None, exclude=(),
              allow_beyond_validity: bool = False) -> PathResult:
    """A path through a programme of (temp_c, water_removed_fraction) nodes, linear between them.

    E.g. a day–night pond: ``[(30, 0), (15, 0.05), (30, 0.10), (15, 0.15)]``. Invariant points
    are classified on its isothermal evaporating segments only.

    Parameters
    ----------
    exclude : sequence of str, optional
        Solids kept out of the path (e.g. ``["anhydrite", "polyhalite"]``: solids that do not form on
        the time scale of the process); recorded on the result.
    allow_beyond_validity : bool
        By default the path stops where the liquid leaves the database's validity (ionic strength
        above its limit, or a temperature outside the range of a Pitzer parameter of the ions
        present), with ``stop_reason`` "validity limit"; True continues, with warnings.
    """
    model = _model(model)
    if not nodes or len(nodes) < 2:
        raise InputError("nodes", nodes, "at least two (temp_c, water_removed_fraction) nodes")
    clean = []
    last = -1.0
    for i, node in enumerate(nodes):
        try:
            t, r = node
        except (TypeError, ValueError):
            raise InputError(f"nodes[{i}]", node, "a pair (temp_c, water_removed_fraction)") from None
        t = _temp(t, f"nodes[{i}] temp_c")
        r = _fraction(r, f"nodes[{i}] water_removed_fraction")
        if r < last:
            raise InputError(f"nodes[{i}] water_removed_fraction", r, f"a value >= the previous one ({last:g})")
        last = r
        clean.append((t, r))
    m0 = _initial(model, brine)
    excl, cands = _exclusion(model, exclude)
    path = run_programme(model, m0, 1.0, clean, mode, None, cands, allow_beyond_validity)
    return _noted(_result(model, path, mode, m0, clean[0][0], excl, allow_beyond_validity), brine)
