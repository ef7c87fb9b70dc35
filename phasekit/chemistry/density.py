"""Density of brines at atmospheric pressure, from their composition.

Model
-----
Specific volumes of the solutes add (Laliberté & Cooper 2004, J. Chem. Eng. Data 49, 1141,
their mixing rule; it is Young's rule written on a mass basis, Young & Smith 1954,
J. Phys. Chem. 58, 716):

    1 / rho = w_w / rho_w(t) + sum_s w_s / rho_app,s(W, t)

w_w is the mass fraction of water, w_s that of salt s, W = 1 - w_w the total solute mass
fraction and rho_app,s the apparent density of salt s evaluated at the total W. The ions of a
brine are paired into neutral salts in proportion to their equivalent fractions: the salt of
cation c and anion a receives e_c e_a / E equivalents (e = z m, E the total equivalents of one
sign). Pairing is a convention for applying single-salt data to a mixture; it is the usual one
for Young's-rule mixing and it is exact for a single salt.

Apparent densities come from, in this order of preference:

1. the temperature-dependent equation of Laliberté & Cooper 2004 (``data/density/
   apparent_density_lc2004.csv``, NaCl and KCl):
   rho_app = (c0 W + c1) exp(1e-6 (t + c4)^2) / (W + c2 + c3 t);
2. single-salt densities at 20 °C (``data/density/single_salt_20c.csv``, CRC Handbook, from
   memory, low confidence), turned into the solute's apparent specific volume
   v = (1/rho - (1 - W)/rho_w(20 °C)) / W and interpolated linearly in W. The apparent specific
   volume is held at its 20 °C value at other temperatures;
3. for a pair with neither (CaSO4, Li2SO4, nitrates of Mg, Ca, Li), additivity of ionic
   volumes across a common-ion square, per equivalent and at the same W:
   v(MX) = v(MY) + v(NX) - v(NY), with N = Na and Y = Cl where possible (ionic additivity of
   apparent molar volumes, exact at infinite dilution: Millero 1971, Chem. Rev. 71, 147).

Water: Kell 1975 (J. Chem. Eng. Data 20, 97), ``data/density/water_kell1975.toml``.

Expected accuracy
-----------------
NaCl and KCl solutions, 0–100 °C: the Laliberté & Cooper equation with the recalled
coefficients reproduces the CRC Handbook 20 °C tables within 0.07 % (checked in
``tests/validation/test_density.py``). Salts of rule 2: the recalled table values carry about
±0.2 %. Holding the apparent volume at its 20 °C value adds an error that we estimate by
applying the same assumption to NaCl and KCl, whose temperature dependence is known: for 25 %
solutions -0.16 % at 15 °C, +0.25 % at 30 °C, -0.34 % at 10 °C and +0.41 % at 40 °C; for 5 %
solutions a quarter of that. 10–40 °C is the range of these rows; outside it a warning is given.
Rule 3 was tested on K2SO4, MgSO4 and KNO3 with their own rows hidden: within 0.11 % up to
10 % (0.17 % for 18 % MgSO4). Seawater (UNESCO 1981 equation of state) is reproduced within
0.13 kg/m3 at 15–40 °C; below 15 °C the model runs low, by 0.9 kg/m3 (0.09 %) at 0 °C for
salinity 35 (see the finding beside that check). Mixtures beyond the single-salt data carry a
warning, and beyond :data:`W_EXTRAPOLATION_MAX` times those data get no estimate.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np
import periodictable

from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.chemistry.species import SPECIES, parse_species
from phasekit.data_files import read_csv, read_toml
from phasekit.errors import InputError, RangeError, ValidityWarning

#: temperature range of the model, °C (liquid water at 0.101325 MPa)
T_MIN_C = 0.0
T_MAX_C = 100.0

#: salts whose share of the dissolved mass is below this fraction raise no validity warning:
#: a 20 % error in the apparent volume of such a term moves the density by less than 0.03 %.
WARN_SHARE_MIN = 0.01

#: a brine whose total solute mass fraction exceeds the highest of the data behind its salts by
#: more than this factor gets no estimate (RangeError): a single salt (one pair holding 95 % of
#: the solute mass or more; KCl saturated at 90 °C is 1.46 x its 20 °C data) by more than
#: W_EXTRAPOLATION_MAX, a mixture by more than
#: W_EXTRAPOLATION_MAX_MIXTURE. Mixtures may hold more salt than any single salt solution does
#: (bitterns do; a hot-leach liquor saturated with NaCl and KCl at 90 °C holds a mass fraction of
#: about 0.37, 1.45 x the NaCl data), but not without limit. Between the data and the limit the
#: estimate carries an "extrapolated" warning.
W_EXTRAPOLATION_MAX = 1.5
W_EXTRAPOLATION_MAX_MIXTURE = 1.6

_T_TABLE_REF = 20.0


@dataclass(frozen=True)
class DensityEstimate:
    """Density of a brine from the model.

    Attributes
    ----------
    value : float
        kg/L (= g/cm3).
    temp_c : float
        °C.
    warnings : list of str
        Where the composition or temperature lies outside the data behind the estimate.
    """

    value: float
    temp_c: float
    warnings: list = field(default_factory=list)


# ------------------------------------------------------------------ data
@lru_cache(maxsize=1)
def _water_coefficients():
    w = read_toml("density/water_kell1975.toml")["water"]
    return np.array(w["numerator"], dtype=float), float(w["denominator"]), float(w["t_min_c"]), float(w["t_max_c"])


def _rho_w_kg_m3(t: float) -> float:
    a, b, _, _ = _water_coefficients()
    return float(np.polyval(a[::-1], t) / (1.0 + b * t))


@lru_cache(maxsize=1)
def _lc_rows() -> dict:
    out = {}
    for row in read_csv("density/apparent_density_lc2004.csv").itertuples():
        _check_row("apparent_density_lc2004.csv", row, ("c0", "c1", "c2", "c3", "c4", "t_min_c", "t_max_c", "w_max"))
        ions = parse_salt(row.salt)
        out[_pair_key(ions)] = dict(
            salt=row.salt, c=(row.c0, row.c1, row.c2, row.c3, row.c4),
            t_min=float(row.t_min_c), t_max=float(row.t_max_c), w_max=float(row.w_max),
        )
    return out


@lru_cache(maxsize=1)
def _table_rows() -> dict:
    table = read_csv("density/single_salt_20c.csv")
    for row in table.itertuples():
        _check_row("single_salt_20c.csv", row, ("mass_percent", "density_g_cm3", "temp_c", "t_min_c", "t_max_c"))
    out = {}
    rho_w = _rho_w_kg_m3(_T_TABLE_REF) / 1000.0
    for salt, grp in table.groupby("salt", sort=False):
        grp = grp.sort_values("mass_percent")
        if not (grp["temp_c"] == _T_TABLE_REF).all():
            raise InputError(f"density/single_salt_20c.csv {salt} temp_c", grp["temp_c"].tolist(), "20 degC rows")
        w = grp["mass_percent"].to_numpy(dtype=float) / 100.0
        rho = grp["density_g_cm3"].to_numpy(dtype=float)
        v = (1.0 / rho - (1.0 - w) / rho_w) / w  # cm3 per g of solute
        out[_pair_key(parse_salt(salt))] = dict(
            salt=salt, w=w, v=v, t_min=float(grp["t_min_c"].min()), t_max=float(grp["t_max_c"].max()),
            w_max=float(w[-1]),
        )
    return out


def _check_row(name: str, row, numeric: tuple) -> None:
    """Every row names its source and holds finite numbers (DEVELOPERS.md)."""
    if not isinstance(row.source, str) or not row.source.strip():
        raise InputError(f"density/{name} source", row.source, f"a named source (row of {row.salt})")
    for col in numeric:
        v = getattr(row, col)
        if not isinstance(v, int | float) or not math.isfinite(v):
            raise InputError(f"density/{name} {col}", v, f"a finite number (row of {row.salt})")


def _pair_key(ions: dict) -> tuple[str, str]:
    c = next(s for s in ions if SPECIES[s].charge > 0)
    a = next(s for s in ions if SPECIES[s].charge < 0)
    return c, a


@lru_cache(maxsize=64)
def _salt_name(cation: str, anion: str) -> str:
    zc, za = SPECIES[cation].charge, -SPECIES[anion].charge
    g = math.gcd(zc, za)
    nc, na = za // g, zc // g

    def grp(name, n):
        if n == 1:
            return name
        atoms = periodictable.formula(SPECIES[name].formula).atoms
        poly = len(atoms) > 1 or any(k > 1 for k in atoms.values())
        return f"({name}){n}" if poly else f"{name}{n}"

    return grp(cation, nc) + grp(anion, na)


def _eq_mass(cation: str, anion: str) -> float:
    """g of salt per equivalent."""
    name = _salt_name(cation, anion)
    ions = parse_salt(name)
    return salt_formula_mass(name) / (ions[cation] * SPECIES[cation].charge)


# ------------------------------------------------------------------ apparent volumes
def _direct_v_eq(cation: str, anion: str, w_tot: float, t: float, notes: list) -> float | None:
    """Apparent volume in cm3 per equivalent of a salt with its own data, or None."""
    key = (cation, anion)
    lc = _lc_rows().get(key)
    if lc is not None:
        c0, c1, c2, c3, c4 = lc["c"]
        rho_app = (c0 * w_tot + c1) * math.exp(1e-6 * (t + c4) ** 2) / (w_tot + c2 + c3 * t) / 1000.0
        if not lc["t_min"] <= t <= lc["t_max"]:
            notes.append((key, "t", f"{lc['salt']} ({lc['t_min']:g}–{lc['t_max']:g} °C)"))
        if w_tot > lc["w_max"] + 1e-9:
            notes.append((key, "w", f"{lc['salt']} ({lc['w_max']:g})"))
        return _eq_mass(cation, anion) / rho_app
    tb = _table_rows().get(key)
    if tb is not None:
        w, v = tb["w"], tb["v"]
        if w_tot <= w[-1] + 1e-9:
            vs = float(np.interp(w_tot, w, v))
        else:
            vs = float(v[-1] + (v[-1] - v[-2]) / (w[-1] - w[-2]) * (w_tot - w[-1]))
            notes.append((key, "w", f"{tb['salt']} ({tb['w_max']:g})"))
        if not tb["t_min"] <= t <= tb["t_max"]:
            notes.append((key, "t20", f"{tb['salt']} ({tb['t_min']:g}–{tb['t_max']:g} °C)"))
        return vs * _eq_mass(cation, anion)
    return None


def _direct_w_max(cation: str, anion: str) -> float:
    for rows in (_lc_rows(), _table_rows()):
        if (cation, anion) in rows:
            return rows[(cation, anion)]["w_max"]
    raise KeyError((cation, anion))


def _v_eq(cation: str, anion: str, w_tot: float, t: float, notes: list) -> tuple[float, float]:
    """Apparent volume (cm3 per equivalent) of a pair, and the highest solute fraction of its data."""
    v = _direct_v_eq(cation, anion, w_tot, t, notes)
    if v is not None:
        return v, _direct_w_max(cation, anion)
    cations = ["Na"] + [s for s in SPECIES if SPECIES[s].charge > 0 and s != "Na"]
    anions = ["Cl"] + [s for s in SPECIES if SPECIES[s].charge < 0 and s != "Cl"]
    for n in cations:
        for y in anions:
            if n == cation or y == anion:
                continue
            trial: list = []
            parts = [_direct_v_eq(cation, y, w_tot, t, trial), _direct_v_eq(n, anion, w_tot, t, trial),
                     _direct_v_eq(n, y, w_tot, t, trial)]
            if all(p is not None for p in parts):
                notes.extend(((cation, anion), kind, f"{item} for {_salt_name(cation, anion)}")
                             for _, kind, item in trial)
                w_max = min(_direct_w_max(cation, y), _direct_w_max(n, anion), _direct_w_max(n, y))
                return parts[0] + parts[1] - parts[2], w_max
    raise InputError("molalities", f"{cation} with {anion}",
                     "species whose salts have density data (see data/density/); give the density instead")


# ------------------------------------------------------------------ public functions
def _check_temp(temp_c) -> float:
    try:
        t = float(temp_c)
    except (TypeError, ValueError):
        raise InputError("temp_c", temp_c, f"a temperature in °C from {T_MIN_C:g} to {T_MAX_C:g}") from None
    if not (math.isfinite(t) and T_MIN_C <= t <= T_MAX_C):
        raise RangeError("temp_c", temp_c, f"a temperature in °C from {T_MIN_C:g} to {T_MAX_C:g} (density model)")
    return t


def water_density(temp_c: float = 25.0) -> float:
    """Density of pure liquid water at 0.101325 MPa in kg/L (Kell 1975, eq. 16).

    Parameters
    ----------
    temp_c : float
        °C, from 0 to 100.
    """
    return _rho_w_kg_m3(_check_temp(temp_c)) / 1000.0


def _clean_molalities(molalities) -> dict[str, float]:
    if hasattr(molalities, "molalities") and not hasattr(molalities, "items"):
        molalities = molalities.molalities
    if not hasattr(molalities, "items"):
        raise InputError("molalities", type(molalities).__name__, "a mapping of species to mol/kg water, or a Brine")
    out: dict[str, float] = {}
    for k, v in molalities.items():
        name = parse_species(k)
        try:
            x = float(v)
        except (TypeError, ValueError):
            raise InputError(f"molalities[{k!r}]", v, "a number (mol/kg water)") from None
        if not (math.isfinite(x) and x >= 0):
            raise InputError(f"molalities[{k!r}]", v, "a finite molality >= 0")
        out[name] = out.get(name, 0.0) + x
    return out


def estimate_density(molalities, temp_c: float = 25.0) -> DensityEstimate:
    """Density of a brine and the warnings that apply to it (none are emitted).

    Parameters
    ----------
    molalities : mapping or Brine
        mol per kg water by species.
    temp_c : float
        °C, from 0 to 100.

    Returns
    -------
    DensityEstimate

    Raises
    ------
    InputError
        If the brine has ions of one sign only, or a species without density data.
    RangeError
        If the temperature is outside 0–100 °C, or the solute mass fraction exceeds
        :data:`W_EXTRAPOLATION_MAX` times the highest of the data behind its salts.
    """
    t = _check_temp(temp_c)
    m = _clean_molalities(molalities)
    solute_g = sum(x * SPECIES[s].molar_mass for s, x in m.items())  # per kg water
    rho_w = _rho_w_kg_m3(t) / 1000.0  # g/cm3
    if solute_g == 0.0:
        return DensityEstimate(rho_w, t, [])
    eq_c = {s: x * SPECIES[s].charge for s, x in m.items() if SPECIES[s].charge > 0 and x > 0}
    eq_a = {s: -x * SPECIES[s].charge for s, x in m.items() if SPECIES[s].charge < 0 and x > 0}
    if not eq_c or not eq_a:
        raise InputError("molalities", m, "cations and anions both present (the density model pairs them into salts)")
    e_mean = 0.5 * (sum(eq_c.values()) + sum(eq_a.values()))
    w_tot = solute_g / (1000.0 + solute_g)
    notes: list = []
    pair_mass = 0.0
    pair_volume = 0.0
    shares = {}
    w_data = 0.0
    for c, ec in eq_c.items():
        for a, ea in eq_a.items():
            n_eq = ec * ea / e_mean
            mass = n_eq * _eq_mass(c, a)
            v, w_max = _v_eq(c, a, w_tot, t, notes)
            pair_mass += mass
            pair_volume += n_eq * v
            shares[(c, a)] = (mass, w_max)
    for mass, w_max in shares.values():
        if mass / pair_mass >= WARN_SHARE_MIN:
            w_data = max(w_data, w_max)
    single = max(mass for mass, _ in shares.values()) / pair_mass >= 0.95
    limit = W_EXTRAPOLATION_MAX if single else W_EXTRAPOLATION_MAX_MIXTURE
    if w_tot > limit * w_data:
        raise RangeError(
            "molalities", f"total solute mass fraction {w_tot:.3f}",
            f"at most {limit:g} x {w_data:g} (the highest in the density data of its salts) "
            "for a density estimate; give the measured density",
        )
    # an unbalanced analysis pairs slightly more or less mass than it holds: scale to the ion mass
    solute_volume = pair_volume * solute_g / pair_mass
    rho = (1000.0 + solute_g) / (1000.0 / rho_w + solute_volume)
    warns = []
    items: dict[str, list] = {"w": [], "t": [], "t20": []}
    for key, kind, item in notes:
        if shares[key][0] / pair_mass >= WARN_SHARE_MIN and item not in items[kind]:
            items[kind].append(item)
    if items["w"]:
        warns.append(f"density: total solute mass fraction {w_tot:.3f} above the highest in the data of "
                     f"{', '.join(items['w'])}: extrapolated")
    if items["t"]:
        warns.append(f"density: temperature {t:g} °C outside the range of the parameters of {', '.join(items['t'])}")
    if items["t20"]:
        warns.append(f"density: temperature {t:g} °C outside the range where the apparent volumes of "
                     f"{', '.join(items['t20'])} are used at their 20 °C data values: uncertain by up to "
                     "~0.5 % or more")
    return DensityEstimate(float(rho), t, warns)


def solution_density(molalities, temp_c: float = 25.0) -> float:
    """Density of a brine in kg/L (= g/cm3) at ``temp_c`` and 0.101325 MPa.

    Emits a :class:`~phasekit.errors.ValidityWarning` for each warning of
    :func:`estimate_density`, which gives the model and its accuracy.
    """
    est = estimate_density(molalities, temp_c)
    for w in est.warnings:
        warnings.warn(w, ValidityWarning, stacklevel=2)
    return est.value
