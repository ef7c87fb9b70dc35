"""Answers to the practical questions about a brine and one solid.

* how many grams of a solid can still dissolve in the brine (saturation with that solid alone);
* if more is added, how much stays undissolved (the full equilibrium, other solids included);
* to what temperature the brine must be heated for a given excess to dissolve (root-finding
  over temperature, scipy.optimize.brentq, on the saturation index of the fully dissolved mix).
"""

from __future__ import annotations

import warnings

import numpy as np
from scipy.optimize import brentq

from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.common import composition_array
from phasekit.equilibrium.saturation import LN10, _solid_mass
from phasekit.errors import InputError, RangeError, ValidityWarning
from phasekit.thermo.water import T_MAX_C, T_MIN_C


def _model(model):
    from phasekit.model import default_model

    return model or default_model()


def _grams(value, field):
    try:
        g = float(value)
    except (TypeError, ValueError):
        raise InputError(field, value, "a mass in g per kg of the brine's water") from None
    if not np.isfinite(g) or g < 0:
        raise InputError(field, value, "a mass >= 0 in g per kg of the brine's water")
    return g


def dissolvable_grams(brine, solid: str, temp_c: float, model=None) -> float:
    """Grams of ``solid`` per kg of the brine's water that can still dissolve (negative: must crystallize)."""
    model = _model(model)
    name = model.solids.resolve(solid)
    sat = model.saturation(brine, temp_c)
    if name not in sat.index:
        raise InputError("solid", solid, "a solid whose ions are all in the brine")
    return float(sat.loc[name, "dissolvable_g_per_kg_water"])


def undissolved(brine, solid: str, grams: float, temp_c: float, model=None) -> dict:
    """Add ``grams`` of ``solid`` per kg of the brine's water and equilibrate.

    Returns a mapping with ``undissolved_g`` of the added solid, ``solids_g`` (all solids
    present at equilibrium, g per kg of the brine's water) and the equilibrium result.
    """
    model = _model(model)
    name = model.solids.resolve(solid)
    g = _grams(grams, "grams")
    mol = g / _solid_mass(model.solids[name])
    res = model.equilibrate(brine, temp_c, add_solids={name: mol})
    masses = res.solids_mass_g(model)
    return {"undissolved_g": masses.get(name, 0.0), "solids_g": masses, "equilibrium": res}


def temperature_to_dissolve(brine, solid: str, grams: float, t_min_c: float = T_MIN_C,
                            t_max_c: float = 100.0, model=None) -> float:
    """Lowest temperature at which ``grams`` of ``solid`` (per kg of the brine's water) dissolve.

    Root of SI_solid(T) = 0 for the brine with the solid fully dissolved in it. Raises
    :class:`RangeError` if no temperature in [t_min_c, t_max_c] does it (e.g. a solid whose
    solubility falls with temperature, or too large an excess).
    """
    model = _model(model)
    name = model.solids.resolve(solid)
    g = _grams(grams, "grams")
    k = model.solids.index[name]
    m0 = composition_array(model, brine)
    mol = g / _solid_mass(model.solids[name])
    w = 1.0 + model.solids.nw[k] * mol * M_WATER
    m = (m0 + model.solids.nu[k] * mol) / w
    for f, v in (("t_min_c", t_min_c), ("t_max_c", t_max_c)):
        if not (np.isfinite(v) and T_MIN_C <= v <= T_MAX_C):
            raise RangeError(f, v, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")

    def si(t):
        ln_g, _, ln_aw, _, _ = model.compute(m[None, :], t)
        return float((model.solids.ln_iap(m[None, :], ln_g, ln_aw)[0, k] - model.solids.ln_k(t)[k]) / LN10)

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        lo, hi = si(t_min_c), si(t_max_c)
        if lo <= 0:
            return float(t_min_c)
        if hi > 0:
            raise RangeError("grams", g, f"an excess of {name} that dissolves below {t_max_c:g} °C "
                             f"(SI is still {hi:.3f} there)")
        return float(brentq(si, t_min_c, t_max_c, xtol=1e-8))
