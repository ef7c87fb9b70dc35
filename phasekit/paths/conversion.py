"""Hot/cold crystallization cycles of conversion processes (e.g. NaNO3 + KCl → KNO3 + NaCl).

A conversion makes one salt of a reciprocal pair from the other two: potassium nitrate from
sodium nitrate and potassium chloride, with sodium chloride as by-product. It works where the
two products form the stable pair (the diagonal KNO3–NaCl of the Jänecke square, see
:func:`phasekit.reciprocal_isotherm` with ``anion="NO3"``) and their solubilities depend on
temperature very differently: halite's hardly at all, niter's steeply. One cycle, per kg of
the feed brine's water (the classical scheme of the conversion-saltpetre process, described
e.g. in Ullmann's Encyclopedia of Industrial Chemistry, "Potassium Compounds"; from memory):

1. **hot stage** — evaporate the feed at ``hot_c`` with the solids in equilibrium with the
   liquor, until the solid wanted from the cold stage (``cold_solid``, niter) is on the point of
   saturating (root of its saturation index in the water left); the solids formed (``hot_solid``,
   halite; any other is reported with the purity) are separated hot;
2. **dilution** — add back just enough water that ``hot_solid`` stays dissolved when the
   mother liquor is cooled (root of its saturation index at ``cold_c``), or a given amount;
3. **cold stage** — cool to ``cold_c``; ``cold_solid`` crystallizes (equilibrium at ``cold_c``)
   and is separated; the cold mother liquor is the recycle.

Whether the hot stage gives pure halite depends on the feed: the liquor leaves the halite
corner of the square along a straight ray and must meet the niter field before the sylvite
(or nitratine) field. A feed with some sodium nitrate in excess of the equivalent amount, or
with recycle liquor, keeps it there; the result reports the purity of each crop.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.optimize import brentq

from phasekit.equilibrium.common import composition_array, excluded_solids
from phasekit.equilibrium.saturation import _solid_mass
from phasekit.equilibrium.solver import solve_robust
from phasekit.errors import ConvergenceError, InputError, RangeError, ValidityWarning
from phasekit.paths.balance import as_dict, balance_frame, brine_mass, grades_frame, solid_mass_g
from phasekit.paths.evaporation import _model, _temp

#: smallest water left in the hot stage, kg per kg of feed water
W_MIN = 1e-3
#: factor of the water left between two trials when the hot stage's end is bracketed
STEP = 0.9


@dataclass
class CycleResult:
    """Streams of one hot/cold cycle, per kg of feed water.

    Attributes
    ----------
    stages : pandas.DataFrame
        One row per stage (``hot``, ``dilution``, ``cold``): ``temp_c``, ``water_kg`` (water
        evaporated, + ; added, −), ``solids_g`` separated, ``main_solid`` and its ``purity``
        (mass fraction of the crop).
    hot_solids, cold_solids : dict
        g of each solid separated in the hot and the cold stage.
    hot_liquor, recycle : dict
        Molalities of the hot mother liquor (before dilution) and of the cold mother liquor.
    hot_water_kg, recycle_water_kg : float
        Their water, kg.
    yields : dict
        Fraction of each ion of the cold solid fed that is recovered in the cold crop (e.g. K
        and NO3 in niter).
    database : str
        Database the cycle was computed with.
    warnings : list of str
    exclude : list of str
        Solids kept out of the cycle.
    mass_balance : pandas.DataFrame
        ``stream``, ``kind`` (in, out, closure), ``kg_per_t_feed``: feed brine + water added =
        hot crop + cold crop + water evaporated + cold mother liquor, and the closure (in - out);
        see :mod:`phasekit.paths.balance`. The feed is the feed brine and the water added.
    grades : pandas.DataFrame
        The hot and the cold crop: ``crop_g``, ``main_solid``, ``purity``, ``KCl_percent``,
        ``K2O_percent`` (definitions in ``grades.attrs["definitions"]``).
    """

    stages: pd.DataFrame
    hot_solids: dict
    cold_solids: dict
    hot_liquor: dict
    hot_water_kg: float
    recycle: dict
    recycle_water_kg: float
    yields: dict
    database: str = "embedded database"
    warnings: list = field(default_factory=list)
    exclude: list = field(default_factory=list)
    mass_balance: pd.DataFrame = field(default_factory=pd.DataFrame)
    grades: pd.DataFrame = field(default_factory=pd.DataFrame)


def _state(model, b, water, t, exclude=()):
    cands = [k for k, name in enumerate(model.solids.names) if name not in exclude]
    return solve_robust(model, b, water, t, candidates=cands)


def _crop(model, st) -> dict:
    """g of each solid present in an equilibrium state."""
    return {model.solids.names[k]: float(st.n[k] * _solid_mass(model.solids.solids[k]))
            for k in st.active if st.n[k] > 0}


def _purity(crop: dict) -> tuple:
    total = sum(crop.values())
    if not total:
        return "", np.nan
    main = max(crop, key=crop.get)
    return main, crop[main] / total


def hot_cold_cycle(feed, hot_c: float = 90.0, cold_c: float = 20.0, hot_solid: str = "halite",
                   cold_solid: str = "niter", dilution="auto", model=None, exclude=(),
                   allow_beyond_validity: bool = False) -> CycleResult:
    """One hot/cold cycle of a conversion process (see the module description).

    Parameters
    ----------
    feed : Brine or mapping
        The feed brine (molalities); per kg of its water.
    hot_c, cold_c : float
        Temperatures of the evaporating crystallizer and of the cooling crystallizer, °C.
    hot_solid, cold_solid : str
        Solid harvested hot (whose solubility changes little with temperature) and solid
        harvested cold (steep solubility), by name or salt formula.
    dilution : "auto" or float
        Water added to the hot mother liquor before cooling, kg per kg of feed water; "auto" adds
        the least that keeps ``hot_solid`` dissolved at ``cold_c``.
    exclude : sequence of str
        Solids kept out of every stage (recorded on the result); not the hot or the cold solid.
    allow_beyond_validity : bool
        By default a cycle whose hot or cold liquor lies above the database's ionic-strength limit
        is refused (RangeError naming the ionic strength); True computes it, with warnings.

    Returns
    -------
    CycleResult

    Raises
    ------
    InputError
        Unknown solids, ``cold_c`` not below ``hot_c``, a feed lacking the ions of the cold solid,
        a feed already saturated with the cold solid at ``hot_c``, or a bad dilution.
    """
    model = _model(model)
    th, tc = _temp(hot_c, "hot_c"), _temp(cold_c, "cold_c")
    if not th > tc:
        raise InputError("cold_c", cold_c, f"a temperature below hot_c = {th:g} °C")
    hs, cs = model.solids.resolve(hot_solid), model.solids.resolve(cold_solid)
    if hs == cs:
        raise InputError("cold_solid", cold_solid, f"a solid other than the hot solid ({hs})")
    k_hs, k_cs = model.solids.index[hs], model.solids.index[cs]
    excl = tuple(excluded_solids(model, exclude))
    for name in (hs, cs):
        if name in excl:
            raise InputError("exclude", name, f"solids other than the hot and the cold solid ({hs}, {cs})")
    rng = model.solids.t_range
    for field_name, t, ks in (("hot_c", th, (k_hs, k_cs)), ("cold_c", tc, (k_cs,))):
        for k in ks:
            lo, hi = rng[k]
            if not lo <= t <= hi:
                raise RangeError(field_name, t, f"a temperature within the data of {model.solids.names[k]}: "
                                 f"{lo:g}–{hi:g} °C")
    m0 = composition_array(model, feed)
    for ion in model.solids.solids[k_cs].ions:
        if m0[model.index[ion]] <= 0:
            raise InputError("feed", f"{ion} = 0", f"a feed containing the ions of {cs}")
    notes: list = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ValidityWarning)
        # 1. hot stage: water left at which the cold solid saturates
        def cold_si_hot(w):
            return float(_state(model, m0, w, th, exclude=(cs, *excl)).si[k_cs])

        if cold_si_hot(1.0) >= 0:
            raise InputError("feed", "saturated with " + cs + f" at {th:g} °C",
                             f"a feed undersaturated with {cs} at hot_c (dilute it)")
        # bracket in small steps: far beyond the saturation the activity model may turn back
        hi, lo = 1.0, STEP
        while cold_si_hot(lo) < 0:
            if lo <= W_MIN:
                raise InputError("feed", f"never saturates with {cs} at {th:g} °C",
                                 f"a feed from which {cs} can crystallize")
            hi, lo = lo, max(lo * STEP, W_MIN)
        w_hot = brentq(cold_si_hot, lo, hi, xtol=1e-10, rtol=1e-10)
        hot = _state(model, m0, w_hot, th, exclude=(cs, *excl))
        hot_solids = _crop(model, hot)
        b = hot.m * hot.w  # mother liquor, mol

        # 2. dilution: least water that keeps the hot solid dissolved at the cold temperature
        def hot_si_cold(add):
            return float(_state(model, b, hot.w + add, tc, exclude=(hs, *excl)).si[k_hs])

        if dilution == "auto":
            add = 0.0
            if hot_si_cold(0.0) > 0:
                hi = hot.w
                while hot_si_cold(hi) > 0:
                    hi *= 2.0
                    if hi > 100.0:
                        raise InputError("dilution", "auto", "a cycle in which the hot solid can be kept dissolved")
                add = brentq(hot_si_cold, 0.0, hi, xtol=1e-10, rtol=1e-10)
        else:
            try:
                add = float(dilution)
            except (TypeError, ValueError):
                add = -1.0
            if not np.isfinite(add) or add < 0:
                raise InputError("dilution", dilution, "'auto' or kg of water per kg of feed water (>= 0)")
        # 3. cold stage
        cold = _state(model, b, hot.w + add, tc, exclude=excl)
    notes += [str(w.message) for w in caught if issubclass(w.category, ValidityWarning)]
    i_max = float(model.db.ionic_strength_max)
    for st, t, label in ((hot, th, "hot liquor"), (cold, tc, "cold liquor")):
        ion = model.compute(st.m[None, :], t)[3]
        if ion[0] > i_max and not allow_beyond_validity:
            raise RangeError(f"ionic strength of the {label}", round(float(ion[0]), 4),
                             f"a cycle whose liquors stay within the database's validity limit of {i_max:g} mol/kg "
                             "(a lower hot temperature, a larger dilution, or allow_beyond_validity=True / "
                             "--beyond-validity to compute it anyway, with warnings)")
        notes += model._validity(st.m[None, :], t, ion)
    notes = list(dict.fromkeys(notes))
    if not cold.n[k_cs] > 0:
        raise ConvergenceError(f"{cs} does not crystallize on cooling to {tc:g} °C", state=cold)
    cold_solids = _crop(model, cold)
    yields = {ion: float(cold.n[k_cs] * nu / m0[model.index[ion]])
              for ion, nu in model.solids.solids[k_cs].ions.items()}
    hm, hp = _purity(hot_solids)
    cm, cp = _purity(cold_solids)
    for stage, crop, main in (("hot", hot_solids, hs), ("cold", cold_solids, cs)):
        others = sorted(s for s in crop if s != main)
        if others:
            verb = "crystallizes" if len(others) == 1 else "crystallize"
            notes.append(f"{stage} stage: {', '.join(others)} {verb} with {main}")
    stages = pd.DataFrame([
        {"stage": "hot", "temp_c": th, "water_kg": 1.0 - hot.w, "solids_g": sum(hot_solids.values()),
         "main_solid": hm, "purity": hp},
        {"stage": "dilution", "temp_c": th, "water_kg": -add if add else 0.0, "solids_g": 0.0, "main_solid": "",
         "purity": np.nan},
        {"stage": "cold", "temp_c": tc, "water_kg": 0.0, "solids_g": sum(cold_solids.values()), "main_solid": cm,
         "purity": cp},
    ])
    liquor = {s: float(v) for s, v in zip(model.species, hot.m) if v > 0}
    recycle = {s: float(v) for s, v in zip(model.species, cold.m) if v > 0}
    mb, grades = _balance(model, m0, w_hot, add, hot, cold)
    return CycleResult(stages, hot_solids, cold_solids, liquor, float(hot.w), recycle, float(cold.w), yields,
                       getattr(model, "label", "embedded database"), notes, list(excl), mb, grades)


def _balance(model, m0, w_hot, add, hot, cold):
    """Feed brine + water added = hot crop + cold crop + water evaporated + cold mother liquor.

    ``w_hot`` is the water (liquid and of crystallization) left after the hot evaporation, so the
    water evaporated is 1 - w_hot per kg of feed water."""
    names = model.solids.names
    crops = []
    outputs = []
    for label, st in (("hot crop", hot), ("cold crop", cold)):
        mol = {names[k]: float(st.n[k]) for k in st.active if st.n[k] > 0}
        crops.append((label, mol))
        outputs += [(f"{label}: {n}", x * solid_mass_g(model.solids[n].stoichiometry) / 1000.0) for n, x in mol.items()]
    outputs += [("water evaporated", 1.0 - float(w_hot)), ("cold mother liquor", brine_mass(as_dict(model, cold.m),
                                                                                          float(cold.w)))]
    inputs = [("feed brine", brine_mass(as_dict(model, m0), 1.0))]
    if add:
        inputs.append(("water added", float(add)))
    return balance_frame(inputs, outputs), grades_frame(crops, lambda n: model.solids[n].stoichiometry)
