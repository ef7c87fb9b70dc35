"""Trains of evaporation ponds (or crystallizer stages), with their design figures.

Each pond has a temperature and an end condition: a fraction of its inflow's water to
evaporate, a concentration factor, or "until a named solid (or any solid of a set) saturates".
The solids that form in a pond stay in it (equilibrium within the pond) and are harvested;
the brine at the end condition is passed to the next pond (less what seeps away).

Design (steady state; every flow is a yearly average)
-----------------------------------------------------
Symbols: Q0 the intake flow (m³/h), rho0 its density (t/m³ = kg/L: given, or from the density
model at the first pond's temperature), m_j molalities (mol/kg water), M_j molar masses (g/mol).

* brine per kg of its water: s = 1 + Σ m_j M_j / 1000 (kg/kg);
* water entering pond 1: W_1 = Q0 rho0 / s0 (t/h);
* pond i, computed on 1 kg of its inflow water: e_i = water evaporated (kg/kg), w_i = liquid
  water left (kg/kg), n_ik = mol of solid k harvested (per kg); water of crystallization is
  e_i + w_i - 1 short of 1;
* water evaporated: E_i = 24 W_i e_i (t/day = m³/day: a depth of evaporation is a depth of fresh
  water, 1 mm on 1 m² = 1 kg);
* net loss rate of the pond's surface: r_i = net_evaporation_mm_per_day - rain_mm_per_year / 365
  (mm/day; rain falling on the pond dilutes it and must be evaporated again);
* area: A_i = 1000 E_i / r_i (m²), or, for a pond given ``area_m2`` and no end condition, its
  evaporation is the area's: e_i = A_i r_i / (1000 × 24 W_i), the end condition it gives;
* seepage: a fraction sigma_i of the pond's end brine is lost through floor and dikes:
  seepage = sigma_i W_i w_i s_out (t/h), and W_{i+1} = (1 - sigma_i) W_i w_i;
* brine flow into the pond: B_i = W_i s_in / rho_in (m³/h), rho_in from the density model at
  the pond's temperature (the intake's for pond 1);
* residence time (ponds given ``depth_m``): A_i depth_i / (24 B_i) (days);
* crop: 24 × 365 × W_i Σ n_ik M_k / 10^6 (t/year), and per tonne of intake
  1000 (W_i / W_1) Σ n_ik M_k / (1000 s0) (kg/t).

Without an intake flow the flows follow from the one pond given both an area and an end condition
(W_i = A_i r_i / (1000 × 24 e_i)); with neither, ``design`` gives the figures per tonne of intake
only (areas and flows NaN).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.equilibrium.common import candidate_indices, excluded_solids, make_brine
from phasekit.equilibrium.saturation import LN10
from phasekit.errors import InputError
from phasekit.paths.balance import as_dict, balance_frame, brine_mass, grades_frame, solid_mass_g
from phasekit.paths.engine import run_programme
from phasekit.paths.evaporation import _density, _initial, _model, _result, _temp
from phasekit.validate import number

HOURS_PER_YEAR = 24.0 * 365.0


@dataclass
class Pond:
    """One pond: ``name``, ``temp_c`` and exactly one end condition (or an area, see below).

    Attributes
    ----------
    water_removed : float, optional
        Fraction of the inflow's water to evaporate.
    concentration_factor : float, optional
        Concentration factor (relative to the inflow) at which the brine is passed on.
    until_saturated : str or list of str, optional
        Pass the brine on when this solid (or any of these) reaches saturation.
    mode : str
        "equilibrium" (solids stay in the pond with the brine) or "fractional".
    area_m2 : float, optional
        Area of the brine surface. With an end condition (and no intake flow) it sets the train's
        flow; without one (the train given its intake flow) the area's evaporation sets how much
        water the pond removes.
    net_evaporation_mm_per_day : float, optional
        Depth of water the brine surface loses per day, yearly average (pan evaporation times the
        pan coefficient and the brine's own reduction: the user's figure), before rain.
    seepage_fraction : float
        Fraction of the pond's end brine lost through floor and dikes (0 to < 1).
    rain_mm_per_year : float
        Rain falling on the pond; subtracted from the evaporation (see the module description).
    depth_m : float, optional
        Brine depth, for the pond's brine volume and residence time.
    """

    name: str
    temp_c: float
    water_removed: float | None = None
    concentration_factor: float | None = None
    until_saturated: object = None
    mode: str = "equilibrium"
    area_m2: float | None = None
    net_evaporation_mm_per_day: float | None = None
    seepage_fraction: float = 0.0
    rain_mm_per_year: float = 0.0
    depth_m: float | None = None


@dataclass
class PondTrainResult:
    """Harvest of each pond, the brine passed on, the design figures and the mass balance.

    Attributes
    ----------
    harvest : pandas.DataFrame
        Rows (pond, solid): mol and g per kg of the first pond's inflow water, and the purity
        (mass fraction of the solid in that pond's harvest).
    ponds : pandas.DataFrame
        Per pond: inflow and outflow concentration factor, water evaporated, main solid and its purity.
    design : pandas.DataFrame
        One row per pond: ``area_m2``, ``net_loss_mm_per_day``, ``residence_days``,
        ``brine_in_m3_per_h``, ``brine_out_m3_per_h``, ``density_in_kg_per_l``,
        ``density_out_kg_per_l``, ``brine_volume_m3``, ``water_evaporated_m3_per_day``,
        ``seepage_t_per_day``, ``crop_t_per_year``, ``crop_kg_per_t_intake``, ``main_solid``,
        ``end_condition``, ``end_condition_met`` and ``note`` (what happened instead). The
        formulas are in the module description.
    mass_balance : pandas.DataFrame
        ``stream``, ``kind``, ``kg_per_t_feed`` and ``t_per_year`` (when the flow is known): intake =
        crops of every pond + water evaporated + seepage + bittern, and the closure.
    grades : pandas.DataFrame
        One row per pond's crop: ``crop_g``, ``main_solid``, ``purity``, ``KCl_percent``, ``K2O_percent``.
    intake : dict
        ``m3_per_h``, ``t_per_year``, ``density_kg_per_l`` and ``density_from`` (given or estimated).
    paths : dict
        Pond name -> PathResult.
    outflow : Brine
        The brine leaving the last pond.
    complete : bool
        False when a pond's path stopped early (solver failure, or the validity limit of the
        database): the train stops at that pond, whose partial path is kept.
    stop_reason : str
        "end of train", or the stop reason of the pond that stopped the train early.
    exclude : list of str
        Solids kept out of every pond.
    warnings : list of str
    """

    harvest: pd.DataFrame
    ponds: pd.DataFrame
    paths: dict
    outflow: object
    complete: bool = True
    stop_reason: str = "end of train"
    exclude: list = field(default_factory=list)
    warnings: list = field(default_factory=list)
    design: pd.DataFrame = field(default_factory=pd.DataFrame)
    mass_balance: pd.DataFrame = field(default_factory=pd.DataFrame)
    grades: pd.DataFrame = field(default_factory=pd.DataFrame)
    intake: dict = field(default_factory=dict)
    charge_balance_note: str = ""


def _opt(field_name, value, expected, lo=0.0, lo_open=True, hi=None):
    return None if value is None else number(field_name, value, expected, lo=lo, lo_open=lo_open, hi=hi)


def _condition_text(p) -> str:
    if p.water_removed is not None:
        return f"{100 * float(p.water_removed):.4g} % of the inflow's water evaporated"
    if p.concentration_factor is not None:
        return f"concentration factor {float(p.concentration_factor):g}"
    if p.until_saturated is not None:
        names = [p.until_saturated] if isinstance(p.until_saturated, str) else list(p.until_saturated)
        return "until " + " or ".join(names) + " saturates"
    return "the evaporation of its area"


def pond_train(brine, ponds: list, intake_m3_per_h=None, model=None, exclude=(), allow_beyond_validity: bool = False,
               intake_t_per_year=None, intake_density_kg_per_l=None) -> PondTrainResult:
    """Run a train of ponds on a brine; amounts per kg of the first pond's inflow water, design
    figures per hour, day and year when the intake flow is known (see the module description for
    every formula and its units).

    Parameters
    ----------
    brine : Brine or mapping (mol per kg water)
    ponds : list of Pond (or mappings of its fields)
    intake_m3_per_h, intake_t_per_year : float, optional
        The intake flow (one of them), m³ of brine per hour or tonnes of brine per year.
    intake_density_kg_per_l : float, optional
        The intake's measured density; by default the density model's at the first pond's temperature.
    exclude : sequence of str
        Solids kept out of every pond (e.g. anhydrite, which does not form in solar ponds on their
        time scale: gypsum does).
    allow_beyond_validity : bool
        By default a pond whose brine reaches the database's validity limit stops there, and so
        does the train.
    """
    model = _model(model)
    if not ponds:
        raise InputError("ponds", ponds, "at least one pond")
    m0 = _initial(model, brine)
    m = m0
    excl = excluded_solids(model, exclude)
    cands = candidate_indices(model, excl)
    clean = [_check_pond(model, i, p, excl) for i, p in enumerate(ponds)]
    if intake_m3_per_h is not None and intake_t_per_year is not None:
        raise InputError("intake_t_per_year", intake_t_per_year, "one intake flow: intake_m3_per_h or intake_t_per_year")
    q_given = _opt("intake_m3_per_h", intake_m3_per_h, "an intake flow > 0 (m³/h)")
    t_given = _opt("intake_t_per_year", intake_t_per_year, "an intake flow > 0 (t/year)")
    rho_given = _opt("intake_density_kg_per_l", intake_density_kg_per_l, "a density from 0.95 to 2 kg/L",
                     lo=0.95, lo_open=False, hi=2.0)
    s0 = brine_mass(as_dict(model, m0), 1.0)
    t_first = clean[0][1]
    rho0 = rho_given if rho_given is not None else _density(model, m0, t_first)
    flow_known = q_given is not None or t_given is not None
    if flow_known and not np.isfinite(rho0):
        raise InputError("intake_density_kg_per_l", None, "the intake's measured density (the density model does "
                         "not reach this brine)")
    w1 = None  # t/h of water into pond 1
    if q_given is not None:
        w1 = q_given * rho0 / s0
    elif t_given is not None:
        w1 = t_given / HOURS_PER_YEAR / s0
    setters = [i for i, (p, *_rest) in enumerate(clean) if p.area_m2 is not None and _has_condition(p)]
    if not flow_known and len(setters) > 1:
        raise InputError("ponds", ", ".join(clean[i][0].name for i in setters),
                         "at most one pond with both an area and an end condition when the intake flow is not given "
                         "(it sets the flow; the others' areas follow)")
    for i, (p, *_rest) in enumerate(clean):
        if p.area_m2 is not None and not _has_condition(p) and not flow_known:
            raise InputError(f"ponds[{i}].area_m2", p.area_m2, "an end condition as well, or the train's intake flow "
                             "(intake_m3_per_h) from which the area's evaporation sets the pond's end")
        if flow_known and p.area_m2 is not None and _has_condition(p):
            raise InputError(f"ponds[{i}] ({p.name})", "area_m2 and an end condition",
                             "one of them when the intake flow is given (the area then sets the end condition)")

    train_complete, train_reason, warns = True, "end of train", []
    water = 1.0  # kg of the train's initial water carried by the current brine into this pond
    harvest_rows, pond_rows, paths, runs = [], [], {}, []
    for i, (p, t, frac, stop, rate) in enumerate(clean):
        note_area = ""
        if p.area_m2 is not None and not _has_condition(p):
            w_in = w1 * water  # t/h
            frac = p.area_m2 * rate / 1000.0 / (24.0 * w_in)
            if frac >= 1.0:
                note_area = (f"its area evaporates {frac:.3g} times the water that reaches it: the pond runs to its end "
                             "point and part of its area stays dry")
                frac = 1.0
        path = run_programme(model, m, 1.0, [(t, 0.0), (t, frac)], p.mode, stop, cands, allow_beyond_validity)
        res = _result(model, path, p.mode, m, t, excl, allow_beyond_validity)
        paths[p.name] = res
        warns += [f"{p.name}: {w}" for w in res.warnings]
        last = path.records[-1]
        crop_mol = {model.solids.names[k]: float(n) * water for k, n in enumerate(last["amounts"]) if n > 0}
        g = {n: mol * solid_mass_g(model.solids[n].stoichiometry) for n, mol in crop_mol.items()}
        total = sum(g.values())
        for n, grams in g.items():
            harvest_rows.append({"pond": p.name, "solid": n, "mol": crop_mol[n], "g": grams,
                                 "purity": grams / total if total > 0 else np.nan})
        main = max(g, key=g.get) if g else ""
        pond_rows.append({"pond": p.name, "temp_c": t, "inflow_water_kg": water, "outflow_water_kg": water * last["w"],
                          "evaporated_kg": water * (last["r"]), "concentration_factor": 1.0 / last["w"],
                          "cumulative_concentration_factor": 1.0 / (water * last["w"]),
                          "harvest_g": total, "main_solid": main,
                          "purity": g[main] / total if g else np.nan, "stop_reason": res.stop_reason,
                          "end": res.end_point})
        met = res.stop_reason in _MET[_kind(p)]
        note = note_area
        if not met and not note:
            made = ", ".join(sorted(g, key=g.get, reverse=True)) or "nothing"
            note = (f"the end condition ({_condition_text(p)}) was never met: the pond stopped at its "
                    f"{res.stop_reason} after {100 * last['r']:.3g} % of its inflow water had evaporated, and "
                    f"harvested {made}" + (f" (its brine ends saturated with {last['solids'].replace('+', ', ')})"
                                           if last["solids"] else ""))
        if note:
            warns.append(f"{p.name}: {note}")
        runs.append({"pond": p, "t": t, "rate": rate, "water": water, "res": res, "last": last, "crop_mol": crop_mol,
                     "crop_g": total, "main": main, "met": met, "note": note, "m_in": m})
        water = water * last["w"] * (1.0 - p.seepage_fraction)
        m = last["m"]
        if not res.complete:
            train_complete, train_reason = False, res.stop_reason
            if i < len(clean) - 1:
                warns.append(f"the train stops at pond {p.name} ({res.stop_reason}); the ponds after it are not run")
            break
        if last["w"] <= 1e-6:
            break
    if w1 is None and setters and setters[0] < len(runs):
        k = setters[0]
        run = runs[k]
        e = float(run["last"]["r"])
        if e > 0 and run["rate"] is not None:
            w1 = run["pond"].area_m2 * run["rate"] / 1000.0 / (24.0 * e) / run["water"]
    design, intake = _design(model, runs, w1, s0, rho0, rho_given is not None, t_first)
    mb = _train_balance(model, runs, m0, s0, w1)
    grades = grades_frame([(r["pond"].name, r["crop_mol"]) for r in runs], lambda n: model.solids[n].stoichiometry)
    harvest = pd.DataFrame(harvest_rows, columns=["pond", "solid", "mol", "g", "purity"])
    return PondTrainResult(harvest, pd.DataFrame(pond_rows), paths, make_brine(model, m), train_complete,
                           train_reason, excl, list(dict.fromkeys(warns)), design, mb, grades, intake,
                           getattr(brine, "balance_note", "") or "")


#: stop reasons of a pond's path that mean its end condition was met
_MET = {"water_removed": ("end of programme",), "concentration_factor": ("end of programme", "end condition"),
        "until_saturated": ("end condition",), "area": ("end of programme",)}


def _kind(p) -> str:
    for name in ("water_removed", "concentration_factor", "until_saturated"):
        if getattr(p, name) is not None:
            return name
    return "area"


def _has_condition(p) -> bool:
    return any(c is not None for c in (p.water_removed, p.concentration_factor, p.until_saturated))


def _check_pond(model, i, p, excl):
    """(pond, temp, water fraction, stop function, net loss rate mm/day or None) of one pond."""
    if not isinstance(p, Pond):
        try:
            p = Pond(**p)
        except TypeError as exc:
            raise InputError(f"ponds[{i}]", p, "a Pond or a mapping with name, temp_c and one end condition") \
                from exc
    t = _temp(p.temp_c, f"ponds[{i}].temp_c")
    conds = [c for c in (p.water_removed, p.concentration_factor, p.until_saturated) if c is not None]
    if len(conds) > 1 or (not conds and p.area_m2 is None):
        raise InputError(f"ponds[{i}] ({p.name})", conds, "exactly one end condition (or an area and the train's "
                         "intake flow)")
    area = _opt(f"ponds[{i}].area_m2", p.area_m2, "an area > 0 (m²)")
    evap = _opt(f"ponds[{i}].net_evaporation_mm_per_day", p.net_evaporation_mm_per_day,
                "a net evaporation > 0 (mm/day)", hi=100.0)
    seep = number(f"ponds[{i}].seepage_fraction", p.seepage_fraction, "a fraction from 0 to below 1", lo=0.0, hi=1.0)
    if seep >= 1.0:
        raise InputError(f"ponds[{i}].seepage_fraction", p.seepage_fraction, "a fraction from 0 to below 1")
    rain = number(f"ponds[{i}].rain_mm_per_year", p.rain_mm_per_year, "a rainfall >= 0 (mm/year)", lo=0.0, hi=20000.0)
    depth = _opt(f"ponds[{i}].depth_m", p.depth_m, "a depth > 0 (m)", hi=100.0)
    rate = None
    if evap is not None:
        rate = evap - rain / 365.0
        if not rate > 0:
            raise InputError(f"ponds[{i}].rain_mm_per_year", p.rain_mm_per_year,
                             f"less rain than the pond evaporates ({evap:g} mm/day = {evap * 365:g} mm/year)")
    elif area is not None:
        raise InputError(f"ponds[{i}].net_evaporation_mm_per_day", None, "the net evaporation of a pond given its area")
    p = Pond(p.name, p.temp_c, p.water_removed, p.concentration_factor, p.until_saturated, p.mode, area, evap, seep,
             rain, depth)
    frac, stop = 1.0, None
    if p.water_removed is not None:
        frac = number(f"ponds[{i}].water_removed", p.water_removed, "a fraction between 0 and 1", lo=0.0, hi=1.0,
                      lo_open=True, text=True)
        if frac >= 1.0:
            raise InputError(f"ponds[{i}].water_removed", p.water_removed, "a fraction between 0 and 1")
    elif p.concentration_factor is not None:
        cf = number(f"ponds[{i}].concentration_factor", p.concentration_factor, "a number > 1", lo=1.0, lo_open=True,
                    text=True)
        # without water of crystallization the programme's end is the concentration factor exactly;
        # a hydrate takes water too, and the condition stops the pond first (at the step that reaches it)
        frac = 1.0 - 1.0 / cf

        def stop(path, st, cf=cf):
            return 1.0 / st.w >= cf
    elif p.until_saturated is not None:
        names = [p.until_saturated] if isinstance(p.until_saturated, str) else list(p.until_saturated)
        idx = [model.solids.index[model.solids.resolve(n)] for n in names]
        for n in names:
            if model.solids.resolve(n) in excl:
                raise InputError(f"ponds[{i}].until_saturated", n, "a solid that is not excluded")

        def stop(path, st, idx=idx):
            return any(k in st.active or st.si[k] > -1e-9 / LN10 for k in idx)
    if p.mode not in ("equilibrium", "fractional"):
        raise InputError(f"ponds[{i}].mode", p.mode, "'equilibrium' or 'fractional'")
    return p, t, frac, stop, rate


def _design(model, runs, w1, s0, rho0, rho_given, t_first):
    """Design table (module description) and the intake figures."""
    rows = []
    nan = float("nan")
    for r in runs:
        p, last, water = r["pond"], r["last"], r["water"]
        w_in = w1 * water if w1 is not None else nan  # t water/h
        s_in = brine_mass(as_dict(model, r["m_in"]), 1.0)
        s_out = brine_mass(as_dict(model, last["m"]), 1.0)
        rho_in = rho0 if r is runs[0] else _density(model, r["m_in"], r["t"])
        rho_out = _density(model, last["m"], r["t"])
        evap_m3_day = 24.0 * w_in * float(last["r"])
        area = 1000.0 * evap_m3_day / r["rate"] if r["rate"] is not None else nan
        if p.area_m2 is not None and r["rate"] is not None and not r["met"] and r["note"].startswith("its area"):
            area = p.area_m2
        b_in = w_in * s_in / rho_in
        b_out = w_in * float(last["w"]) * (1.0 - p.seepage_fraction) * s_out / rho_out
        volume = area * p.depth_m if p.depth_m is not None else nan
        crop_per_kg_water = r["crop_g"] / water / 1000.0 if water > 0 else 0.0  # kg per kg of the pond's inflow water
        rows.append({
            "pond": p.name, "temp_c": r["t"], "area_m2": area, "net_loss_mm_per_day": r["rate"] if r["rate"] is not None
            else nan, "residence_days": volume / (24.0 * b_in) if b_in > 0 else nan,
            "brine_in_m3_per_h": b_in, "brine_out_m3_per_h": b_out, "density_in_kg_per_l": rho_in,
            "density_out_kg_per_l": rho_out, "brine_volume_m3": volume,
            "water_evaporated_m3_per_day": evap_m3_day,
            "seepage_t_per_day": 24.0 * p.seepage_fraction * w_in * float(last["w"]) * s_out,
            "crop_t_per_year": HOURS_PER_YEAR * w_in * crop_per_kg_water,
            "crop_kg_per_t_intake": r["crop_g"] / s0, "main_solid": r["main"],
            "end_condition": _condition_text(p), "end_condition_met": bool(r["met"]), "note": r["note"]})
    known = w1 is not None
    intake = {"m3_per_h": w1 * s0 / rho0 if known else nan, "t_per_year": w1 * s0 * HOURS_PER_YEAR if known else nan,
              "density_kg_per_l": rho0,
              "density_from": "given" if rho_given else f"estimated by the density model at {t_first:g} °C"}
    return pd.DataFrame(rows), intake


def _train_balance(model, runs, m0, s0, w1):
    """Intake = crops + water evaporated + seepage + bittern, per kg of the intake's water."""
    outputs = []
    for r in runs:
        p, last, water = r["pond"], r["last"], r["water"]
        for n, mol in r["crop_mol"].items():
            outputs.append((f"{p.name}: {n}", mol * solid_mass_g(model.solids[n].stoichiometry) / 1000.0))
        outputs.append((f"{p.name}: water evaporated", water * float(last["r"])))
        if p.seepage_fraction > 0:
            outputs.append((f"{p.name}: seepage", p.seepage_fraction * brine_mass(as_dict(model, last["m"]),
                                                                                water * float(last["w"]))))
    last, water, p = runs[-1]["last"], runs[-1]["water"], runs[-1]["pond"]
    outputs.append(("bittern (brine left)", (1.0 - p.seepage_fraction) * brine_mass(as_dict(model, last["m"]),
                                                                                    water * float(last["w"]))))
    mb = balance_frame([("intake brine", s0)], outputs)
    if w1 is not None:
        mb["t_per_year"] = mb["kg_per_t_feed"] / 1000.0 * w1 * s0 * HOURS_PER_YEAR
    return mb

