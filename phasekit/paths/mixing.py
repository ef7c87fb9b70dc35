"""Mixing of brines and dissolution of solids (leaching), with the resulting equilibrium."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER, SPECIES
from phasekit.equilibrium.common import composition_array, make_brine
from phasekit.equilibrium.saturation import _solid_mass
from phasekit.equilibrium.solver import result_from_state, solve_robust
from phasekit.errors import InputError
from phasekit.paths.evaporation import _model, _temp


def _solution_mass(model, m) -> float:
    """kg of solution per kg of water for molalities ``m``."""
    return 1.0 + float(sum(v * SPECIES[s].molar_mass for s, v in zip(model.species, m))) / 1000.0


def mix(brine_a, brine_b, ratio: float, temp_c: float = 25.0, model=None):
    """Mix two brines and equilibrate the mixture.

    Parameters
    ----------
    ratio : float
        Mass fraction of brine A in the mixture (by mass of solution), 0..1.

    Returns
    -------
    EquilibriumResult
        Amounts per kg of the mixture's water; ``.mixture`` holds the mixed brine before any
        solid forms and ``.mass_fraction_a`` the ratio.
    """
    model = _model(model)
    t = _temp(temp_c, "temp_c")
    try:
        x = float(ratio)
    except (TypeError, ValueError):
        raise InputError("ratio", ratio, "a mass fraction of brine A from 0 to 1") from None
    if not np.isfinite(x) or x < 0 or x > 1:
        raise InputError("ratio", ratio, "a mass fraction of brine A from 0 to 1")
    ma, mb = composition_array(model, brine_a), composition_array(model, brine_b)
    # kg of water from each brine per kg of mixture
    wa = x / _solution_mass(model, ma)
    wb = (1 - x) / _solution_mass(model, mb)
    b = (ma * wa + mb * wb) / (wa + wb)
    model._check(b[None, :], t, None)
    st = solve_robust(model, b, 1.0, t)
    res = result_from_state(model, st, t)
    res.mixture = make_brine(model, b)
    res.mass_fraction_a = x
    return res


@dataclass
class DissolutionResult:
    """What dissolves and what stays when solids are put into a brine or water.

    Attributes
    ----------
    table : pandas.DataFrame
        Per solid: added, undissolved and dissolved mass (g per kg of the solvent's water) and
        the dissolved fraction; solids formed anew (e.g. by incongruent dissolution) appear with
        added = 0.
    equilibrium : EquilibriumResult
    """

    table: pd.DataFrame
    equilibrium: object


def dissolve(solids: dict, temp_c: float, brine=None, units: str = "g", model=None) -> DissolutionResult:
    """Dissolve a solid mixture (e.g. sylvinite ore) in water or a brine at ``temp_c``.

    Parameters
    ----------
    solids : dict
        Solid name -> amount per kg of the solvent's water, in g (``units="g"``) or mol.
    brine : Brine or mapping, optional
        The solvent (pure water if omitted), mol per kg water.
    """
    model = _model(model)
    t = _temp(temp_c, "temp_c")
    if not solids:
        raise InputError("solids", solids, "at least one solid with an amount")
    if units not in ("g", "mol"):
        raise InputError("units", units, "'g' or 'mol'")
    m0 = composition_array(model, brine) if brine is not None else np.zeros(len(model.species))
    b = m0.copy()
    water = 1.0
    added = {}
    for name, amount in solids.items():
        s = model.solids.resolve(name)
        try:
            a = float(amount)
        except (TypeError, ValueError):
            raise InputError(f"solids[{name!r}]", amount, f"an amount in {units} per kg water") from None
        if not np.isfinite(a) or a < 0:
            raise InputError(f"solids[{name!r}]", amount, f"an amount >= 0 in {units} per kg water")
        mol = a / _solid_mass(model.solids[s]) if units == "g" else a
        k = model.solids.index[s]
        b += model.solids.nu[k] * mol
        water += model.solids.nw[k] * mol * M_WATER
        added[s] = added.get(s, 0.0) + mol
    if not np.any(b > 0):
        raise InputError("solids", solids, "a positive amount of at least one solid")
    st = solve_robust(model, b, water, t)
    res = result_from_state(model, st, t)
    rows = []
    for s in sorted(set(added) | set(res.solids)):
        mass = _solid_mass(model.solids[s])
        a = added.get(s, 0.0) * mass
        left = res.solids.get(s, 0.0) * mass
        rows.append({"solid": s, "added_g": a, "undissolved_g": left, "dissolved_g": a - left,
                     "dissolved_fraction": (a - left) / a if a > 0 else np.nan})
    return DissolutionResult(pd.DataFrame(rows).set_index("solid"), res)
