"""Mass balances and crop grades of paths, pond trains and conversion cycles.

Mass balance (every stream in kg per tonne of feed):

    feed = crops + bittern + water evaporated (+ seepage, + water added as an input)

* a brine of ``W`` kg of water with molalities m_i (mol/kg) weighs W (1 + Σ m_i M_i / 1000) kg,
  M_i the molar mass of ion i in g/mol (from ``periodictable``, :mod:`phasekit.chemistry.species`);
* a crop of n_k mol of solid k weighs n_k M_k / 1000 kg, M_k from its stoichiometry, water of
  crystallization included;
* ``closure`` = inputs - outputs, kg per tonne of feed. It is zero up to the solver's mass-balance
  residual (below 1e-9 of the feed: ``tests/unit/test_balance.py``).

Grades of a crop (the fertilizer trade's conventions):

* **KCl %** (KCl equivalent) = 100 n_K M(KCl) / m_crop: the crop's potassium written as KCl;
  for a sylvite–halite crop it is its sylvite content;
* **K2O %** = 100 (n_K / 2) M(K2O) / m_crop = 0.6317 × KCl %: the same potassium written as the
  oxide, the basis on which potash fertilizers are sold (pure sylvite: 63.2 % K2O);
* **purity** = mass of the crop's main solid / mass of the crop (the main solid is the one of
  largest mass).

n_K is mol of potassium in the crop and m_crop its mass (g), water of crystallization included.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER, SPECIES, formula_mass

#: definitions of the grades, shown with every ``.grades`` table
GRADE_DEFINITIONS = (
    "KCl % = 100 n_K M(KCl) / m_crop (potassium written as KCl); K2O % = 100 (n_K/2) M(K2O) / m_crop "
    "(= 0.6317 KCl %); purity = mass of the main solid / mass of the crop; m_crop includes water of "
    "crystallization"
)
BALANCE_COLUMNS = ["stream", "kind", "kg_per_t_feed"]


def brine_mass(molalities, water_kg: float) -> float:
    """kg of a brine of ``water_kg`` kg of water at ``molalities`` (mapping species -> mol/kg)."""
    return float(water_kg) * (1.0 + sum(v * SPECIES[s].molar_mass for s, v in molalities.items()) / 1000.0)


def solid_mass_g(stoichiometry: dict) -> float:
    """g/mol of a solid from its stoichiometry (ions and "H2O")."""
    return float(sum(v * (M_WATER * 1000.0 if k == "H2O" else SPECIES[k].molar_mass)
                     for k, v in stoichiometry.items()))


def balance_frame(inputs: list, outputs: list) -> pd.DataFrame:
    """Mass-balance table from ``(stream, kg)`` inputs and outputs, scaled to kg per tonne of the
    inputs; the last row is the closure (inputs - outputs)."""
    total_in = sum(kg for _, kg in inputs)
    if not total_in > 0:
        return pd.DataFrame(columns=BALANCE_COLUMNS)
    scale = 1000.0 / total_in
    rows = [{"stream": s, "kind": "in", "kg_per_t_feed": kg * scale} for s, kg in inputs]
    rows += [{"stream": s, "kind": "out", "kg_per_t_feed": kg * scale} for s, kg in outputs]
    closure = math.fsum([kg * scale for _, kg in inputs] + [-kg * scale for _, kg in outputs])
    rows.append({"stream": "closure (in - out)", "kind": "closure", "kg_per_t_feed": closure})
    return pd.DataFrame(rows, columns=BALANCE_COLUMNS)


def closure_of(frame: pd.DataFrame) -> float:
    """The closure (kg per tonne of feed) of a mass-balance table."""
    rows = frame[frame["kind"] == "closure"]
    return float(rows["kg_per_t_feed"].iloc[0]) if len(rows) else float("nan")


_M_KCL = SPECIES["K"].molar_mass + SPECIES["Cl"].molar_mass
_M_K2O = formula_mass("K2O")


def grade_row(crop_mol: dict, stoich_of) -> dict:
    """Grades of a crop given as {solid: mol}; ``stoich_of(solid)`` gives its stoichiometry."""
    grams = {s: n * solid_mass_g(stoich_of(s)) for s, n in crop_mol.items() if n > 0}
    total = sum(grams.values())
    if not total > 0:
        return {"crop_g": 0.0, "main_solid": "", "purity": np.nan, "KCl_percent": np.nan, "K2O_percent": np.nan}
    n_k = sum(n * stoich_of(s).get("K", 0.0) for s, n in crop_mol.items() if n > 0)
    main = max(grams, key=grams.get)
    return {"crop_g": total, "main_solid": main, "purity": grams[main] / total,
            "KCl_percent": 100.0 * n_k * _M_KCL / total, "K2O_percent": 100.0 * n_k / 2.0 * _M_K2O / total}


def grades_frame(crops: list, stoich_of) -> pd.DataFrame:
    """One row per ``(crop name, {solid: mol})``: crop_g, main_solid, purity, KCl_percent, K2O_percent."""
    rows = [{"crop": name, **grade_row(mol, stoich_of)} for name, mol in crops]
    out = pd.DataFrame(rows, columns=["crop", "crop_g", "main_solid", "purity", "KCl_percent", "K2O_percent"])
    out.attrs["definitions"] = GRADE_DEFINITIONS
    return out


def as_dict(model, m: np.ndarray) -> dict:
    """{species: molality} of an array over the model's species."""
    return {s: float(v) for s, v in zip(model.species, m) if v > 0}
