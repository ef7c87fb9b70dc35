"""Transport and volumetric properties for dissolution kinetics.

Water
    Density from IAPWS-95 (Wagner & Pruß 2002, J. Phys. Chem. Ref. Data 31, 387) through
    :func:`phasekit.thermo.water.water_density_permittivity`; viscosity from the IAPWS 2008
    release (Huber et al. 2009, J. Phys. Chem. Ref. Data 38, 101) through the ``iapws``
    package (``iapws._iapws._Viscosity``).

Diffusion coefficients of salts
    Nernst–Hartley equation for a salt of ions 1, 2 with charges z1, z2 (Robinson & Stokes
    1959, Electrolyte Solutions, 2nd ed., ch. 11)::

        D = (|z1| + |z2|) D1 D2 / (|z1| D1 + |z2| D2)

    from the limiting ionic diffusion coefficients at 25 °C of ``data/kinetics_ions.csv``
    (CRC Handbook), scaled in temperature as ``D ∝ T mu^-p`` with the viscosity mu of water
    and an exponent p per ion fitted to limiting ionic conductances at 0 and 100 °C (plain
    Stokes–Einstein, p = 1, misses those by up to -10 % and +19 %; see the file's header).
    These are infinite-dilution values: the concentration dependence of
    the salt diffusion coefficient (about ±10 % for 1:1 chlorides up to saturation, more for
    2:2 salts; Robinson & Stokes 1959, ch. 11, from memory) is not modelled.

Brine density and volumetric concentrations
    From phasekit's density model (:mod:`phasekit.chemistry.density`, Laliberté & Cooper
    2004 with Young's-rule mixing), through :class:`BrineVolume`, which also inverts it
    (molarities to molalities) for the film at the particle surface.

Solids
    Stoichiometry from phasekit's solids database (``default_model().solids``); crystal
    densities from ``data/kinetics_solids.csv`` (CRC Handbook, from memory). A salt formula
    (``"Na2SO4"``) stands for the stable solid of that salt at the temperature, as decided by
    :func:`phasekit.solubility`.
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass
from functools import lru_cache

from phasekit.chemistry.species import M_WATER, SPECIES, parse_species
from phasekit.data_files import read_csv
from phasekit.errors import ConvergenceError, InputError, PhasekitError, RangeError, ValidityWarning, warn_validity

#: temperature range (°C) of the transport properties
T_MIN_C = 0.0
T_MAX_C = 100.0


# ----------------------------------------------------------------------------- water
@lru_cache(maxsize=256)
def _water(temp_key: float) -> tuple[float, float]:
    from iapws._iapws import _Viscosity

    from phasekit.thermo.water import water_density_permittivity

    rho, _ = water_density_permittivity(temp_key)
    mu = float(_Viscosity(rho, temp_key + 273.15))
    return rho, mu


def check_temperature(temp_c, field: str = "temp_c") -> float:
    """Return ``temp_c`` as float, or raise if it is not a temperature of 0–100 °C."""
    t = as_number(temp_c, field, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")
    if not (T_MIN_C <= t <= T_MAX_C):
        raise RangeError(field, temp_c, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")
    return t


def water_density(temp_c: float) -> float:
    """Density of liquid water, kg/m³ (IAPWS-95 at 0.101325 MPa)."""
    return _water(round(check_temperature(temp_c), 9))[0]


def water_viscosity(temp_c: float) -> float:
    """Dynamic viscosity of liquid water, Pa·s (IAPWS 2008 at 0.101325 MPa)."""
    return _water(round(check_temperature(temp_c), 9))[1]


# ------------------------------------------------------------------------ ion table
@lru_cache(maxsize=1)
def _ion_table() -> dict[str, dict[str, float]]:
    table = read_csv("kinetics_ions.csv")
    out: dict[str, dict[str, float]] = {}
    for row in table.itertuples():
        out.setdefault(row.ion, {})[row.property] = float(row.value)
    return out


def _ion_row(ion: str) -> dict:
    name = parse_species(ion)
    try:
        return _ion_table()[name]
    except KeyError:
        raise InputError("ion", ion, f"an ion with transport data in kinetics_ions.csv: {sorted(_ion_table())}") from None


def ion_diffusivity_25c(ion: str) -> float:
    """Limiting diffusion coefficient of an ion at 25 °C, m²/s (CRC Handbook, from memory)."""
    return _ion_row(ion)["diffusivity_25c"]


def ion_diffusivity(ion: str, temp_c: float) -> float:
    """Limiting diffusion coefficient of an ion at ``temp_c``, m²/s.

    ``D(T) = D(25 °C) (T / 298.15 K) (mu(25 °C) / mu(T))^p`` with the ion's exponent p of
    ``kinetics_ions.csv`` (p = 1 would be Stokes–Einstein) and the IAPWS 2008 viscosity of water.
    """
    row = _ion_row(ion)
    t = check_temperature(temp_c)
    ratio = water_viscosity(25.0) / water_viscosity(t)
    return row["diffusivity_25c"] * (t + 273.15) / 298.15 * ratio ** row["viscosity_exponent"]


def nernst_hartley(d1: float, z1: int, d2: float, z2: int) -> float:
    """Diffusion coefficient of a binary electrolyte from those of its two ions.

    ``D = (|z1| + |z2|) D1 D2 / (|z1| D1 + |z2| D2)`` (Robinson & Stokes 1959, ch. 11).
    """
    a, b = abs(z1), abs(z2)
    return (a + b) * d1 * d2 / (a * d1 + b * d2)


def salt_diffusivity(cation: str, anion: str, temp_c: float = 25.0) -> float:
    """Diffusion coefficient (m²/s) of the salt of ``cation`` and ``anion`` at infinite dilution.

    Parameters
    ----------
    cation, anion : str
        Ion names (``"K"``, ``"SO4"``; charged spellings accepted).
    temp_c : float
        Temperature, °C (0–100).

    Notes
    -----
    Nernst–Hartley from the ionic values of :func:`ion_diffusivity` (CRC Handbook at 25 °C, with
    the temperature dependence of ``kinetics_ions.csv``). In a brine that carries an ion in common with
    the dissolving salt, the other ion tends towards its own tracer value (e.g. K⁺ 1.96e-9
    against KCl 1.99e-9 m²/s); the binary value is used.
    """
    c, a = parse_species(cation), parse_species(anion)
    zc, za = SPECIES[c].charge, SPECIES[a].charge
    if zc <= 0 or za >= 0:
        raise InputError("cation/anion", (cation, anion), "a cation and an anion, e.g. ('K', 'Cl')")
    return nernst_hartley(ion_diffusivity(c, temp_c), zc, ion_diffusivity(a, temp_c), za)


_NUMBER = re.compile(r"[-+]?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?")


def _first_number(text: str) -> float:
    m = _NUMBER.search(text)
    return float(m.group()) if m else 0.0


class BrineVolume:
    """Volumetric concentrations of a brine at one temperature.

    ``water_per_volume(m) = scale * rho(m) / (1 + sum_i m_i M_i)`` (kg of water per m³ of
    brine) with rho from :func:`phasekit.chemistry.density.estimate_density`; ``scale`` is 1,
    or the ratio of a measured to the modelled density of the initial brine, so that a measured
    density is reproduced. The density model's warnings are collected in :attr:`warnings`.

    Parameters
    ----------
    temp_c : float
    scale : float
        Correction factor of the density (default 1).
    """

    def __init__(self, temp_c: float, scale: float = 1.0):
        self.temp_c = check_temperature(temp_c)
        self.scale = float(scale)
        self._notes: dict[str, str] = {}
        self._last: tuple = (None, 0.0)
        self._last_cw: dict[str, float] = {}
        self._cw_slope: dict[str, float] = {}
        #: last slopes dSI/dΔ of the film solutions, by solid (warm starts, see saturation.py)
        self.slopes: dict[str, float] = {}

    def density(self, molalities: dict[str, float]) -> float:
        """kg/m³."""
        from phasekit.chemistry.density import estimate_density

        key = tuple(molalities.items())
        if key == self._last[0]:  # the bulk brine is asked for twice per step
            return self._last[1]
        est = estimate_density(molalities, self.temp_c)
        for w in est.warnings:
            self._note(w)
        rho = self.scale * 1000.0 * est.value
        self._last = (key, rho)
        return rho

    def _note(self, message: str) -> None:
        """Keep one warning per kind (numbers aside): the one with the largest first number."""
        key = _NUMBER.sub("#", message)
        old = self._notes.get(key)
        if old is None or _first_number(message) > _first_number(old):
            self._notes[key] = message

    @property
    def warnings(self) -> list[str]:
        """Warnings of the density model, one per kind (the most extreme composition)."""
        return list(self._notes.values())

    def water_per_volume(self, molalities: dict[str, float]) -> float:
        """kg of water per m³ of brine."""
        per_kg = 1.0 + sum(m * SPECIES[s].molar_mass / 1000.0 for s, m in molalities.items())
        return self.density(molalities) / per_kg

    def molarities(self, molalities: dict[str, float]) -> dict[str, float]:
        """mol/m³ of brine from mol/kg of water."""
        cw = self.water_per_volume(molalities)
        return {s: m * cw for s, m in molalities.items()}

    def molalities(self, molarities: dict[str, float], key: str = "") -> dict[str, float]:
        """mol/kg of water from mol/m³ of brine (inverse of :meth:`molarities`).

        Solves x = water_per_volume(c / x) for the water content x (kg/m³) by the secant method,
        from the last solution found under the same ``key`` (residual below 1e-13 x).

        Raises
        ------
        RangeError
            If the composition lies beyond the density model's data.
        ConvergenceError
            If no water content is found.
        """
        def g(x):
            return x - self.water_per_volume({s: c / x for s, c in molarities.items()})

        x0 = self._last_cw.get(key, 1000.0)
        g0 = g(x0)
        # a Newton step with the slope last seen (or a fixed-point step: water_per_volume
        # changes slowly with x), then secant steps
        x1 = x0 - g0 / self._cw_slope.get(key, 1.0)
        for _ in range(50):
            if abs(g0) <= 1e-13 * x0:
                self._last_cw[key] = x0
                return {s: c / x0 for s, c in molarities.items()}
            if not (x1 > 0 and math.isfinite(x1)):
                break
            g1 = g(x1)
            if g1 == g0:
                break
            slope = (g1 - g0) / (x1 - x0)
            if slope > 0:
                self._cw_slope[key] = slope
            x0, g0, x1 = x1, g1, x1 - g1 / slope
        raise ConvergenceError("no water content found for these molarities", {"molarities": dict(molarities)})


# --------------------------------------------------------------------------- solids
@dataclass(frozen=True)
class Solid:
    """A dissolving solid.

    Attributes
    ----------
    name : str
        Mineral name (``"sylvite"``), as in phasekit's solids database.
    formula : str
        Formula of the database (``"MgSO4·7H2O"``).
    ions : dict
        {ion: stoichiometric number}, from the database.
    hydrate_water : float
        mol H2O per formula unit, from the database.
    molar_mass : float
        kg/mol, from the stoichiometry.
    density : float
        Crystal density, kg/m³ (``data/kinetics_solids.csv``).
    source : str
        Source of the density.
    """

    name: str
    formula: str
    ions: dict
    hydrate_water: float
    molar_mass: float
    density: float
    source: str

    @property
    def molar_density(self) -> float:
        """mol of formula units per m³ of crystal."""
        return self.density / self.molar_mass

    @property
    def cation(self) -> str:
        return next(s for s in self.ions if SPECIES[s].charge > 0)

    @property
    def anion(self) -> str:
        return next(s for s in self.ions if SPECIES[s].charge < 0)

    def diffusivity(self, temp_c: float) -> float:
        """Diffusion coefficient of the salt, m²/s (see :func:`salt_diffusivity`)."""
        return salt_diffusivity(self.cation, self.anion, temp_c)


@lru_cache(maxsize=1)
def _density_table() -> dict:
    table = read_csv("kinetics_solids.csv")
    out = {}
    for r in table.itertuples():
        if r.density_units != "kg/m3":
            raise ValueError(f"kinetics_solids.csv: density of {r.solid} in {r.density_units}; expected kg/m3")
        out[r.solid] = r
    return out


@lru_cache(maxsize=64)
def _solid(name: str) -> Solid:
    import phasekit as pk

    db = pk.default_model().solids[name]
    row = _density_table()[name]
    ions = {parse_species(k): float(v) for k, v in db.ions.items()}
    mass = sum(nu * SPECIES[i].molar_mass for i, nu in ions.items()) / 1000.0 + db.water * M_WATER
    return Solid(name=name, formula=db.formula, ions=ions, hydrate_water=db.water, molar_mass=mass,
                 density=float(row.density), source=str(row.source))


def solids() -> dict[str, Solid]:
    """The solids phasekit.kinetics can dissolve (those with a crystal density), by name."""
    return {name: _solid(name) for name in _density_table()}


@lru_cache(maxsize=256)
def find_solid(name: str, temp_c: float, field: str = "solid") -> Solid:
    """The solid called ``name`` (mineral name), or the stable solid of salt ``name`` at ``temp_c``.

    Raises
    ------
    InputError
        If the name is neither a mineral name with a crystal density nor a salt formula.
    """
    import phasekit as pk

    known = _density_table()
    expected = f"a mineral name {sorted(known)} or a salt formula such as 'KCl' or 'Na2SO4'"
    if not isinstance(name, str) or not name.strip():
        raise InputError(field, name, expected)
    key = name.strip()
    if key.lower() in known:
        return _solid(key.lower())
    try:
        with warnings.catch_warnings():  # only the name of the stable solid is used here
            warnings.simplefilter("ignore", ValidityWarning)
            stable = pk.solubility(key, temp_c=temp_c).solid
    except PhasekitError:
        raise InputError(field, name, expected) from None
    if stable not in known:
        raise InputError(field, name, f"{expected} (no crystal density for {stable!r})")
    return _solid(stable)


# ------------------------------------------------------------------ input helpers
def as_number(value, field: str, expected: str) -> float:
    """``value`` as a finite float, or :class:`InputError` naming ``field``."""
    if isinstance(value, bool) or value is None:
        raise InputError(field, value, expected)
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(field, value, expected) from None
    if not math.isfinite(x):
        raise InputError(field, value, expected)
    return x


def positive(value, field: str, unit: str, allow_zero: bool = False) -> float:
    """``value`` as a float > 0 (or >= 0), or :class:`InputError` naming ``field``."""
    rel = ">= 0" if allow_zero else "> 0"
    expected = f"a finite number {rel} ({unit})"
    x = as_number(value, field, expected)
    if x < 0 or (x == 0 and not allow_zero):
        raise InputError(field, value, expected)
    return x


def check_brine(brine, field: str = "brine") -> dict[str, float]:
    """Canonical molalities {species: mol/kg water} of a brine given as a mapping or an object
    with ``.molalities``; refuses negative, non-finite or charge-unbalanced compositions."""
    if brine is None:
        return {}
    mol = getattr(brine, "molalities", brine)
    if not hasattr(mol, "items"):
        raise InputError(field, type(brine).__name__, "a mapping {species: mol/kg water} or a Brine")
    out: dict[str, float] = {}
    for k, v in mol.items():
        name = parse_species(k)
        x = as_number(v, f"{field}[{k!r}]", "a finite molality >= 0 (mol/kg water)")
        if x < 0:
            raise InputError(f"{field}[{k!r}]", v, "a finite molality >= 0 (mol/kg water)")
        if name not in _ion_table():
            raise InputError(f"{field}[{k!r}]", k, f"a species with transport data: {sorted(_ion_table())}")
        out[name] = out.get(name, 0.0) + x
    imbalance = sum(m * SPECIES[s].charge for s, m in out.items())
    total = sum(m * abs(SPECIES[s].charge) for s, m in out.items())
    if abs(imbalance) > 1e-6 * total + 1e-12:
        raise InputError(field, f"charge imbalance {imbalance:+.6g} eq/kg",
                         "an electrically neutral composition (balance the analysis first)")
    return out


def validity_warning(message: str, warnings_list: list) -> None:
    """Record ``message`` on a result and emit it as a :class:`ValidityWarning` (once)."""
    if message not in warnings_list:
        warnings_list.append(message)
        warn_validity(message)


__all__ = [
    "BrineVolume", "Solid", "check_temperature", "find_solid", "ion_diffusivity", "ion_diffusivity_25c",
    "nernst_hartley", "salt_diffusivity", "solids", "water_density", "water_viscosity",
]
