"""Salt formulas such as ``NaCl``, ``MgCl2``, ``Na2SO4`` or ``Mg(NO3)2`` as ion stoichiometry."""

from __future__ import annotations

import re
from functools import lru_cache

from phasekit.chemistry.species import SPECIES, formula_mass
from phasekit.errors import InputError

_CATIONS = sorted((s for s, v in SPECIES.items() if v.charge > 0), key=len, reverse=True)
_ANIONS = sorted((s for s, v in SPECIES.items() if v.charge < 0), key=len, reverse=True)


@lru_cache(maxsize=256)
def parse_salt(formula: str) -> dict:
    """Ion stoichiometry of a simple salt formula.

    ``"Na2SO4"`` -> ``{"Na": 2, "SO4": 1}``; ``"Mg(NO3)2"`` -> ``{"Mg": 1, "NO3": 2}``.

    Raises
    ------
    InputError
        If the formula is not one cation and one anion of the database, or not neutral.
    """
    text = str(formula).strip()
    expected = "a salt of one cation and one anion of the database, e.g. 'NaCl', 'Na2SO4', 'Mg(NO3)2'"
    for c in _CATIONS:
        for a in _ANIONS:
            pat = rf"^{c}(\d*)(?:\({a}\)(\d+)|{a}(\d*))$"
            m = re.match(pat, text)
            if m:
                nc = int(m.group(1) or 1)
                na = int(m.group(2) or m.group(3) or 1)
                if nc * SPECIES[c].charge + na * SPECIES[a].charge != 0:
                    raise InputError("salt", formula, "an electrically neutral formula")
                return {c: nc, a: na}
    raise InputError("salt", formula, expected)


def salt_formula_mass(formula: str) -> float:
    """Molar mass (g/mol) of an anhydrous salt formula."""
    ions = parse_salt(formula)
    return sum(n * SPECIES[s].molar_mass for s, n in ions.items()) if ions else formula_mass(formula)
