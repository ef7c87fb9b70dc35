"""Aqueous species: names as analyses write them, charges, molar masses.

Molar masses come from the standard atomic weights of the ``periodictable``
package; no atomic-weight table is kept here.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

import periodictable

from phasekit.data_files import read_csv
from phasekit.errors import InputError

#: molar mass of water, kg/mol (from the same atomic weights)
M_WATER = periodictable.formula("H2O").mass / 1000.0


@dataclass(frozen=True)
class Species:
    """An aqueous species.

    Attributes
    ----------
    name : str
        Name as analyses write it (``"Na"``, ``"SO4"``).
    formula : str
        Chemical formula without charge.
    charge : int
        Charge in elementary charges.
    molar_mass : float
        g/mol.
    """

    name: str
    formula: str
    charge: int
    molar_mass: float


def _load_species() -> dict[str, Species]:
    table = read_csv("species.csv")
    out = {}
    for row in table.itertuples():
        mass = periodictable.formula(row.formula).mass
        out[row.species] = Species(row.species, row.formula, int(row.charge), float(mass))
    return out


#: all species of the database, by name
SPECIES: dict[str, Species] = _load_species()

_CHARGE_RE = re.compile(r"^\^?(?:(?P<n1>\d*)(?P<s1>[+-])|(?P<s2>[+-]+)|(?P<s3>[+-])(?P<n3>\d+))?$")


@lru_cache(maxsize=512)
def parse_species(text: str) -> str:
    """Return the canonical name of a species written in any accepted form.

    Accepts ``Na``, ``Na+``, ``Mg2+``, ``Mg+2``, ``Mg++``, ``SO4^2-``, ``SO4--``,
    ``SO42-``; case is not significant.

    Raises
    ------
    InputError
        If the species is unknown or the written charge disagrees with it.
    """
    expected = f"one of {sorted(SPECIES)} (charged forms such as 'Mg2+' accepted)"
    if not isinstance(text, str):
        raise InputError("species", text, expected)
    s = text.strip()
    if s in SPECIES:
        return s
    # the longest known name that starts the text; the rest must be a charge
    for base in sorted(SPECIES, key=len, reverse=True):
        if s.lower().startswith(base.lower()):
            m = _CHARGE_RE.match(s[len(base):])
            if m is not None:
                break
    else:
        raise InputError("species", text, expected)
    if m.group("s1"):
        z = int(m.group("n1") or 1) * (1 if m.group("s1") == "+" else -1)
    elif m.group("s2"):
        signs = m.group("s2")
        if len(set(signs)) != 1:
            raise InputError("species", text, "a charge written as '2+', '++' or '+2'")
        z = len(signs) * (1 if signs[0] == "+" else -1)
    elif m.group("s3"):
        z = int(m.group("n3")) * (1 if m.group("s3") == "+" else -1)
    else:
        z = SPECIES[base].charge
    if z != SPECIES[base].charge:
        raise InputError("species", text, f"charge {SPECIES[base].charge:+d} for {base}")
    return base


def is_species(name) -> bool:
    """True if ``name`` is a species of the database in any accepted spelling."""
    try:
        parse_species(name)
    except InputError:
        return False
    return True


def charge(name: str) -> int:
    """Charge of a species (any accepted spelling)."""
    return SPECIES[parse_species(name)].charge


def molar_mass(name: str) -> float:
    """Molar mass of a species in g/mol (any accepted spelling)."""
    return SPECIES[parse_species(name)].molar_mass


@lru_cache(maxsize=256)
def formula_mass(formula: str) -> float:
    """Molar mass in g/mol of a neutral formula such as ``"MgCl2(H2O)6"``."""
    try:
        return float(periodictable.formula(formula).mass)
    except Exception as exc:  # periodictable raises several kinds
        raise InputError("formula", formula, "a chemical formula such as 'KCl' or 'MgSO4(H2O)7'") from exc
