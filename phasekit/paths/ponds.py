"""Trains of evaporation ponds (or crystallizer stages).

Each pond has a temperature and an end condition: a fraction of its inflow's water to
evaporate, a concentration factor, or "until a named solid (or any solid of a set) saturates".
The solids that form in a pond stay in it (equilibrium within the pond) and are harvested;
the brine at the end condition is passed to the next pond.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.equilibrium.common import candidate_indices, excluded_solids, make_brine
from phasekit.equilibrium.saturation import LN10
from phasekit.errors import InputError
from phasekit.paths.engine import run_programme
from phasekit.paths.evaporation import _initial, _model, _result, _temp


@dataclass
class Pond:
    """One pond: ``name``, ``temp_c`` and exactly one end condition.

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
    """

    name: str
    temp_c: float
    water_removed: float | None = None
    concentration_factor: float | None = None
    until_saturated: object = None
    mode: str = "equilibrium"


@dataclass
class PondTrainResult:
    """Harvest of each pond and the brine passed on.

    Attributes
    ----------
    harvest : pandas.DataFrame
        Rows (pond, solid): mol and g per kg of the first pond's inflow water, and the purity
        (mass fraction of the solid in that pond's harvest).
    ponds : pandas.DataFrame
        Per pond: inflow and outflow concentration factor, water evaporated, main solid and its purity.
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


def pond_train(brine, ponds: list, model=None, exclude=(), allow_beyond_validity: bool = False) -> PondTrainResult:
    """Run a train of ponds on a brine; amounts per kg of the first pond's inflow water.

    ``exclude``: solids kept out of every pond (e.g. anhydrite, which does not form in solar
    ponds on their time scale: gypsum does). ``allow_beyond_validity``: by default a pond whose
    brine reaches the database's validity limit stops there, and so does the train.
    """
    model = _model(model)
    if not ponds:
        raise InputError("ponds", ponds, "at least one pond")
    m = _initial(model, brine)
    excl = excluded_solids(model, exclude)
    cands = candidate_indices(model, excl)
    train_complete, train_reason, warns = True, "end of train", []
    water = 1.0  # kg of the train's initial water carried by the current brine
    harvest_rows, pond_rows, paths = [], [], {}
    for i, p in enumerate(ponds):
        if not isinstance(p, Pond):
            try:
                p = Pond(**p)
            except TypeError as exc:
                raise InputError(f"ponds[{i}]", p, "a Pond or a mapping with name, temp_c and one end condition") \
                    from exc
        t = _temp(p.temp_c, f"ponds[{i}].temp_c")
        conds = [c for c in (p.water_removed, p.concentration_factor, p.until_saturated) if c is not None]
        if len(conds) != 1:
            raise InputError(f"ponds[{i}] ({p.name})", conds, "exactly one end condition")
        frac = 1.0
        stop = None
        if p.water_removed is not None:
            frac = float(p.water_removed)
            if not 0 < frac < 1:
                raise InputError(f"ponds[{i}].water_removed", p.water_removed, "a fraction between 0 and 1")
        elif p.concentration_factor is not None:
            cf = float(p.concentration_factor)
            if not cf > 1:
                raise InputError(f"ponds[{i}].concentration_factor", p.concentration_factor, "a number > 1")

            def stop(path, st, cf=cf):
                return 1.0 / st.w >= cf
        else:
            names = [p.until_saturated] if isinstance(p.until_saturated, str) else list(p.until_saturated)
            idx = [model.solids.index[model.solids.resolve(n)] for n in names]
            for n in names:
                if model.solids.resolve(n) in excl:
                    raise InputError(f"ponds[{i}].until_saturated", n, "a solid that is not excluded")

            def stop(path, st, idx=idx):
                return any(k in st.active or st.si[k] > -1e-9 / LN10 for k in idx)
        if p.mode not in ("equilibrium", "fractional"):
            raise InputError(f"ponds[{i}].mode", p.mode, "'equilibrium' or 'fractional'")
        path = run_programme(model, m, 1.0, [(t, 0.0), (t, frac)], p.mode, stop, cands, allow_beyond_validity)
        res = _result(model, path, p.mode, m, t, excl, allow_beyond_validity)
        end = res.end_point
        paths[p.name] = res
        warns += [f"{p.name}: {w}" for w in res.warnings]
        last = path.records[-1]
        amounts = last["amounts"] * water
        masses = {n: model.solids[n] for n in model.solids.names}
        from phasekit.equilibrium.saturation import _solid_mass

        g = {n: amounts[k] * _solid_mass(masses[n]) for k, n in enumerate(model.solids.names) if amounts[k] > 0}
        total = sum(g.values())
        for n, grams in g.items():
            harvest_rows.append({"pond": p.name, "solid": n, "mol": amounts[model.solids.index[n]], "g": grams,
                                 "purity": grams / total if total > 0 else np.nan})
        main = max(g, key=g.get) if g else ""
        cf_out = 1.0 / last["w"]
        pond_rows.append({"pond": p.name, "temp_c": t, "inflow_water_kg": water, "outflow_water_kg": water * last["w"],
                          "evaporated_kg": water * (last["r"]), "concentration_factor": cf_out,
                          "cumulative_concentration_factor": 1.0 / (water * last["w"]),
                          "harvest_g": total, "main_solid": main,
                          "purity": g[main] / total if g else np.nan, "stop_reason": res.stop_reason,
                          "end": end})
        water = water * last["w"]
        m = last["m"]
        if not res.complete:
            train_complete, train_reason = False, res.stop_reason
            if i < len(ponds) - 1:
                warns.append(f"the train stops at pond {p.name} ({res.stop_reason}); the ponds after it are not run")
            break
        if last["w"] <= 1e-6:
            break
    harvest = pd.DataFrame(harvest_rows, columns=["pond", "solid", "mol", "g", "purity"])
    return PondTrainResult(harvest, pd.DataFrame(pond_rows), paths, make_brine(model, m), train_complete,
                           train_reason, excl, list(dict.fromkeys(warns)))
