"""Solids of the database: stoichiometry and solubility products ln K(T).

Each solid dissolves as  solid = Σ ν_i ion_i + n_w H2O(l), with

    ln K(T) = Σ ν_i ln(m_i γ_i) + n_w ln a_w        (at saturation)

ln K(T) uses the temperature function of :mod:`phasekit.thermo.tempfn`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from phasekit.errors import InputError
from phasekit.thermo import tempfn


def _norm(name: str) -> str:
    """Normalize a solid name or formula for lookup: case, dots and spaces."""
    return re.sub(r"[\s·.*•]", "", str(name)).lower().replace("(h2o)", "h2o")


@dataclass(frozen=True)
class Solid:
    """One solid of the database."""

    name: str
    formula: str
    stoichiometry: dict  # ions and "H2O"
    coeffs: tuple
    t_min_c: float
    t_max_c: float
    source: str

    @property
    def ions(self) -> dict:
        return {k: v for k, v in self.stoichiometry.items() if k != "H2O"}

    @property
    def water(self) -> float:
        return float(self.stoichiometry.get("H2O", 0.0))


def parse_stoichiometry(text: str, species: list[str]) -> dict:
    """Parse ``"K:1 Mg:1 Cl:3 H2O:6"`` into a mapping."""
    out = {}
    for part in str(text).split():
        k, _, v = part.partition(":")
        if k != "H2O" and k not in species:
            raise InputError("solids.csv stoichiometry", text, f"ions among {species} and H2O")
        out[k] = float(v)
    return out


class SolidSet:
    """All solids of a database, with vectorized ln K and ion activity products.

    Parameters
    ----------
    table : pandas.DataFrame
        Rows of ``data/solids.csv``.
    species : list of str
        Species order of the activity model.
    """

    def __init__(self, table, species: list[str]):
        self.species = list(species)
        self.solids: list[Solid] = []
        for row in table.itertuples():
            st = parse_stoichiometry(row.stoichiometry, self.species)
            self.solids.append(
                Solid(row.solid, row.formula, st, (row.a0, row.a1, row.a2, row.a3, row.a4),
                      float(row.t_min_c), float(row.t_max_c), str(row.source))
            )
        self.names = [s.name for s in self.solids]
        self.index = {n: i for i, n in enumerate(self.names)}
        self._lookup = {}
        for s in self.solids:
            self._lookup[_norm(s.name)] = s.name
            self._lookup.setdefault(_norm(s.formula), s.name)
        ns = len(self.species)
        sp_index = {s: i for i, s in enumerate(self.species)}
        self.nu = np.zeros((len(self.solids), ns))  # ions per formula unit
        self.nw = np.zeros(len(self.solids))  # hydrate water per formula unit
        for k, s in enumerate(self.solids):
            for ion, n in s.ions.items():
                self.nu[k, sp_index[ion]] = n
            self.nw[k] = s.water
        self.coeffs = np.array([s.coeffs for s in self.solids], dtype=float)
        self.t_range = np.array([[s.t_min_c, s.t_max_c] for s in self.solids], dtype=float)
        # solids made of water only (ice) have no ions
        self.has_ions = self.nu.sum(axis=1) > 0

    def resolve(self, name: str) -> str:
        """Canonical solid name from a mineral name or formula (any case, '·' optional)."""
        key = _norm(name)
        if key in self._lookup:
            return self._lookup[key]
        raise InputError("solid", name, f"a solid of the database: {', '.join(self.names)}")

    def __getitem__(self, name: str) -> Solid:
        return self.solids[self.index[self.resolve(name)]]

    def ln_k(self, temp_c) -> np.ndarray:
        """ln K of every solid at ``temp_c`` (scalar -> (n_solids,), array -> (N, n_solids))."""
        return tempfn.basis(np.asarray(temp_c, dtype=float) + 273.15) @ self.coeffs.T

    def ln_iap(self, m, ln_gamma, ln_aw) -> np.ndarray:
        """ln ion activity product of every solid for rows of compositions, (N, n_solids).

        A solid with an absent ion gets -inf.
        """
        with np.errstate(divide="ignore"):
            ln_a = np.log(m) + ln_gamma
        ln_a = np.where(m > 0, ln_a, -1e300)
        out = ln_a @ self.nu.T + ln_aw[:, None] * self.nw[None, :]
        return np.where(out < -1e200, -np.inf, out)
