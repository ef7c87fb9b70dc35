"""Brine analyses: molalities, unit conversions, charge balance, tables of analyses.

A :class:`Brine` holds the molality (mol per kg of water) of each species. Analyses arrive in
other units; the conversions are

* per kg of **solution** (``mg/kg``, ``g/kg``, ``mass%``): 1 kg of solution holds the dissolved
  ions (sum of the given masses, S) and 1 kg - S of water, so
  m_i = (c_i / M_i) / (1 kg - S);
* per **litre** of solution (``mg/L``, ``g/L``): a litre weighs rho kilograms, so the amount per kg
  of solution is c_i / rho and the previous rule applies. rho is the density given by the user
  (kg/L = g/cm3) or, if none is given, the density model of :mod:`phasekit.chemistry.density`,
  iterated to consistency (the density depends on the composition, which depends on the density).

Charge balance of an analysis (the usual percentage error of water analysis):

    CB = 100 (sum_cations z m - sum_anions |z| m) / (sum_cations z m + sum_anions |z| m)

An analysis whose |CB| exceeds :data:`CHARGE_BALANCE_WARN_PERCENT` (5 %) carries a warning: 5 % is
the acceptance limit of common practice for major-ion analyses (APHA Standard Methods for the
Examination of Water and Wastewater, section 1030 E, for anion sums above 10 meq/L; from
memory). Above :data:`CHARGE_BALANCE_MAX_PERCENT` (50 %, a cation/anion equivalent ratio of 3 or
1/3) it is refused: no analysis, even one that misses a major ion, is that far off unless units or
columns are mixed up. A brine is never balanced silently: :meth:`Brine.balance` (or
``balance_on=`` of the constructors from analyses) does it and records it.

The charge-balance rule (:data:`BALANCE_RULE`; the same in the library, the command line and the
app): the ion adjusted is the **major ion of the side that is short** — the anion with the most
equivalents when the cations are in excess, the cation with the most equivalents when the anions
are (``on="auto"``, the default) — and it is only ever **increased**: the usual completion of an
analysis by difference. A named ion (``on="Cl"``) obeys the same rule: it must be of the side that
is short. Lowering an ion is possible in the library only, with ``allow_decrease=True``. Every
balanced brine records what was changed, on which ion and by how much (:attr:`Brine.balance_change`
and a line in :attr:`Brine.warnings`), and every path, pond train and app view shows that line.
"""

from __future__ import annotations

import math
import numbers
import re
import warnings
from collections.abc import Iterable, Mapping
from pathlib import Path

import numpy as np
import pandas as pd

from phasekit.chemistry.density import estimate_density
from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.chemistry.species import M_WATER, SPECIES, parse_species
from phasekit.errors import AnalysisWarning, ConvergenceError, InputError, PhasekitError, RangeError, ValidityWarning
from phasekit.validate import MAX_MOLALITY, decimal_text

#: the one charge-balance rule of library, CLI and app, in words (README "Charge balance")
BALANCE_RULE = ("an unbalanced analysis is made neutral by increasing the major ion of the side that is short "
                "(the anion with the most equivalents when cations are in excess, else the cation); no ion is lowered")
#: |charge balance| (%) above which an analysis carries a warning (see the module docstring)
CHARGE_BALANCE_WARN_PERCENT = 5.0
#: |charge balance| (%) above which an analysis is refused (see the module docstring)
CHARGE_BALANCE_MAX_PERCENT = 50.0
#: highest mass fraction of dissolved solids accepted. The most soluble salt of the species
#: table at up to 100 °C, KNO3, saturates near 71 % at 100 °C (CRC Handbook, aqueous
#: solubility of inorganic compounds, from memory); 80 % leaves room and still catches unit slips.
MAX_SOLUTE_FRACTION = 0.80
#: densities (kg/L) accepted for per-litre analyses: from warm dilute water (0.958 at 100 °C)
#: to well above the densest brine of the species table
DENSITY_MIN, DENSITY_MAX = 0.95, 2.0
#: a given density further than this (%) from the model's estimate carries a warning; the model's
#: expected error is below 0.5 % (phasekit.chemistry.density), so a larger gap points to a density
#: in other units, another sample, or an incomplete analysis
DENSITY_MISMATCH_PERCENT = 3.0

# unit -> (basis, factor to grams, or to mol for "mol/kg")
_UNITS = {
    "mol/kg": ("water", 1.0),
    "mg/kg": ("solution", 1e-3),
    "g/kg": ("solution", 1.0),
    "mass%": ("solution", 10.0),
    "mg/L": ("litre", 1e-3),
    "g/L": ("litre", 1.0),
    "meq/L": ("litre", 1.0),  # converted to g/L first: c_i M_i / (1000 |z_i|)
}
_UNIT_ALIASES = {"mg/l": "mg/L", "g/l": "g/L", "meq/l": "meq/L", "mmol(eq)/l": "meq/L", "wt%": "mass%", "mass %": "mass%", "mol/kgw": "mol/kg"}
_UNITS_TEXT = ("one of 'mol/kg' (per kg water), 'mg/kg', 'g/kg', 'mass%' (per kg solution), 'mg/L', 'g/L', "
               "'meq/L' (per litre of solution)")

_HYDRATE = re.compile(r"^(?P<salt>[^·•.*(]+(?:\([^)]*\)\d*)?)\s*(?:[·•.*]\s*(?P<n1>\d*)\s*H2O|\(H2O\)(?P<n2>\d+))$")


# ---------------------------------------------------------------------------- helpers
def _unit(units) -> tuple[str, str, float]:
    if not isinstance(units, str):
        raise InputError("units", units, _UNITS_TEXT)
    u = units.strip()
    u = _UNIT_ALIASES.get(u.lower(), u) if u not in _UNITS else u
    if u.lower() == "ppm":
        raise InputError("units", units, "'mg/kg' (per kg solution) or 'mg/L' — 'ppm' is ambiguous")
    if u not in _UNITS:
        raise InputError("units", units, _UNITS_TEXT)
    basis, factor = _UNITS[u]
    return u, basis, factor


def _number(field: str, value, what: str, missing: str = "error") -> float:
    """A finite number >= 0 from a user value (numbers or numeric text)."""
    if isinstance(value, str):
        blank = not value.strip()
    else:
        try:
            blank = bool(pd.isna(value))
        except (TypeError, ValueError):  # array-like: not a single value
            blank = False
    if blank:
        if missing == "zero":
            return 0.0
        raise InputError(field, value, f"{what} (the value is missing; write 0 if the species is absent)")
    if isinstance(value, bool | np.bool_):
        raise InputError(field, value, what)
    if isinstance(value, str):
        try:
            x = decimal_text(value)
        except ValueError:
            raise InputError(field, value, what + "; thousands may be grouped as 31,000") from None
    elif isinstance(value, numbers.Real):
        x = float(value)
    else:
        raise InputError(field, value, what)
    if not math.isfinite(x) or x < 0:
        raise InputError(field, value, what)
    return x


def _species_values(values, field: str, what: str, missing: str = "error") -> dict[str, float]:
    """Canonical {species: value} from a mapping keyed by any accepted spelling."""
    if isinstance(values, Brine) or not isinstance(values, Mapping | pd.Series):
        raise InputError(field, type(values).__name__, "a mapping of species to values, e.g. {'Na': 1.0, 'Cl': 1.0}")
    if len(values) == 0:
        raise InputError(field, dict(values), "at least one species, e.g. {'Na': 1.0, 'Cl': 1.0}")
    out: dict[str, float] = {}
    given: dict[str, object] = {}
    for key, v in values.items():
        try:
            name = parse_species(key)
        except InputError as err:
            raise InputError(f"{field}[{key!r}]", key, err.expected) from None
        if name in out:
            raise InputError(f"{field}[{key!r}]", key, f"one entry per species ({name} is also given as {given[name]!r})")
        out[name] = _number(f"{field}[{key!r}]", v, what, missing)
        given[name] = key
    return {s: out[s] for s in SPECIES if s in out}


def _check_temp(temp_c) -> float:
    if isinstance(temp_c, bool) or not isinstance(temp_c, numbers.Real) or not math.isfinite(float(temp_c)):
        raise InputError("temp_c", temp_c, "a temperature in °C")
    return float(temp_c)


def _check_density(density, field: str = "density") -> float:
    what = f"a density in kg/L (= g/cm3) from {DENSITY_MIN:g} to {DENSITY_MAX:g}"
    x = _number(field, density, what)
    if not DENSITY_MIN <= x <= DENSITY_MAX:
        hint = " (kg/m3? divide by 1000)" if 950 <= x <= 2000 else ""
        raise InputError(field, density, what + hint)
    return x


def _equivalents(m: Mapping[str, float]) -> tuple[float, float]:
    cat = sum(v * SPECIES[s].charge for s, v in m.items() if SPECIES[s].charge > 0)
    an = sum(-v * SPECIES[s].charge for s, v in m.items() if SPECIES[s].charge < 0)
    return cat, an


def _molal_from_solution_basis(grams: dict[str, float], units: str, factor: float) -> dict[str, float]:
    """Molalities from grams of each ion per kg of solution."""
    total = sum(grams.values())
    if total >= MAX_SOLUTE_FRACTION * 1000.0:
        raise InputError(
            "values", f"total {total / factor:.6g} {units} ({total / 10:.4g} mass% of solution)",
            f"dissolved solids below {MAX_SOLUTE_FRACTION * 100:g} % of the solution mass "
            "(a kg of solution cannot hold more than a kg of salt; check the units)",
        )
    water_kg = (1000.0 - total) / 1000.0
    return {s: g / SPECIES[s].molar_mass / water_kg for s, g in grams.items()}


# ---------------------------------------------------------------------------- the class
class Brine:
    """A brine: the molality of each dissolved species.

    Parameters
    ----------
    molalities : mapping
        mol per kg of water by species, in any spelling accepted by
        :func:`phasekit.chemistry.species.parse_species` (``Na``, ``Mg2+``, ``SO4--``).

    Attributes
    ----------
    warnings : list of str
        What is doubtful about the analysis behind this brine (charge imbalance, density
        estimate outside its data, explicit balancing). Empty for a brine built from molalities.
    conversion_density : float or None
        kg/L used to convert a per-litre analysis, else None.

    Raises
    ------
    InputError
        On an empty mapping, an unknown species, a species given twice, or a value that is not
        a finite number >= 0.

    Examples
    --------
    >>> b = Brine({"Na": 1.0, "Cl": 1.0})
    >>> b.ionic_strength
    1.0
    """

    def __init__(self, molalities: Mapping[str, float]):
        self._m = _species_values(molalities, "molalities", "a finite molality >= 0 (mol/kg water)")
        self.warnings: list[str] = []
        self.conversion_density: float | None = None
        self.balance_change: dict | None = None

    # ------------------------------------------------------------------ constructors
    @classmethod
    def from_analysis(cls, values: Mapping[str, float], units: str = "mg/kg", density=None, temp_c: float = 25.0,
                      balance_on: str | None = None, missing: str = "error") -> Brine:
        """A brine from an analysis in the given units.

        Parameters
        ----------
        values : mapping
            Amount of each species (``Na``, ``Mg2+``, ``SO4`` ...) in ``units``.
        units : str
            ``"mol/kg"`` (per kg water); ``"mg/kg"``, ``"g/kg"``, ``"mass%"`` (per kg of solution);
            ``"mg/L"``, ``"g/L"``, ``"meq/L"`` (per litre of solution; meq/L is c_i M_i / (1000 |z_i|) g/L).
            Numeric text may group thousands with commas ("31,000").
        density : float, optional
            Density of the solution in kg/L (= g/cm3), used by per-litre units. If omitted, the
            density model of :mod:`phasekit.chemistry.density` gives it at ``temp_c``. Ignored by
            the other units.
        temp_c : float
            Temperature in °C at which the litre was measured (density model only).
        balance_on : str, optional
            ``"auto"`` (the charge-balance rule) or an ion: balance the charge (:meth:`balance`);
            recorded in :attr:`warnings` and :attr:`balance_change`. With it,
            an imbalance above :data:`CHARGE_BALANCE_MAX_PERCENT` is not refused.
        missing : {"error", "zero"}
            What a missing value (None, NaN, empty text) means: an error (default) or zero.

        Returns
        -------
        Brine

        Raises
        ------
        InputError
            On unknown units or species, a missing, negative or non-numeric value, dissolved
            solids of :data:`MAX_SOLUTE_FRACTION` of the solution or more, a density outside
            0.95–2.0 kg/L, or a charge imbalance above :data:`CHARGE_BALANCE_MAX_PERCENT`.

        Warns
        -----
        AnalysisWarning
            Charge imbalance above :data:`CHARGE_BALANCE_WARN_PERCENT`; a given density far from
            the model's.
        ValidityWarning
            The density model is used outside its data.
        """
        if missing not in ("error", "zero"):
            raise InputError("missing", missing, "'error' or 'zero'")
        u, basis, factor = _unit(units)
        what = f"a finite number >= 0 ({u})"
        vals = _species_values(values, "values", what, missing)
        t = _check_temp(temp_c)
        notes: list[tuple[str, type]] = []
        used_density = None
        if basis == "water":
            m = dict(vals)
        elif basis == "solution":
            m = _molal_from_solution_basis({s: v * factor for s, v in vals.items()}, u, factor)
        else:
            if u == "meq/L":  # milliequivalents per litre: mol/L = meq/L / (1000 |z|)
                per_litre = {s: v / (1000.0 * abs(SPECIES[s].charge)) * SPECIES[s].molar_mass for s, v in vals.items()}
            else:
                per_litre = {s: v * factor for s, v in vals.items()}  # g/L
            if density is not None:
                used_density = _check_density(density)
                m = cls._from_litre(per_litre, used_density, u, factor)
                cls._compare_density(m, used_density, t, notes)
            else:
                m, used_density, dwarn = cls._from_litre_model(per_litre, t, u, factor)
                notes.extend((w, ValidityWarning) for w in dwarn)
        for s, x in m.items():
            if not x <= MAX_MOLALITY:
                raise InputError(f"values[{s!r}]", vals[s], f"{what} that gives at most {MAX_MOLALITY:g} mol/kg water "
                                 f"(it gives {x:.3g} mol/kg; check the units)")
        brine = cls._make(m)
        brine.conversion_density = used_density
        brine._check_analysis(balance_on, notes)
        for text, category in notes:
            brine.warnings.append(text)
            warnings.warn(text, category, stacklevel=2)
        if balance_on is not None:
            balanced = brine.balance(on=balance_on)
            balanced.conversion_density = used_density
            return balanced
        return brine

    @classmethod
    def from_salts(cls, salts: Mapping[str, float], units: str = "mass%", density=None, temp_c: float = 25.0) -> Brine:
        """A brine made by dissolving salts, given as amounts of each salt in ``units``.

        Parameters
        ----------
        salts : mapping
            Amount of each salt, e.g. ``{"NaCl": 26.4}``. Formulas are one cation and one anion
            of the species table (``NaCl``, ``MgCl2``, ``Na2SO4``, ``Mg(NO3)2`` ...); a hydrate may
            be written ``MgSO4·7H2O``, ``MgSO4.7H2O`` or ``MgSO4(H2O)7`` (its water joins the
            solvent; mass units only). Molar masses come from ``periodictable``.
        units, density, temp_c :
            As for :meth:`from_analysis`; ``"mol/kg"`` is mol of salt per kg of water.

        Returns
        -------
        Brine
        """
        u, basis, _ = _unit(units)
        if u == "meq/L":
            raise InputError("units", units, "mass or molal units for salts (mass%, g/kg, mg/kg, g/L, mg/L, mol/kg); "
                             "meq/L is for an analysis as ions (Brine.from_analysis)")
        if isinstance(salts, Brine) or not isinstance(salts, Mapping | pd.Series) or len(salts) == 0:
            raise InputError("salts", salts if isinstance(salts, Mapping) else type(salts).__name__,
                             "a non-empty mapping of salt formulas to amounts, e.g. {'NaCl': 26.4}")
        ions: dict[str, float] = {}
        for key, amount in salts.items():
            field = f"salts[{key!r}]"
            ion_stoich, mass, n_water = cls._salt(key, field)
            x = _number(field, amount, f"a finite number >= 0 ({u})")
            if basis == "water":
                if n_water:
                    raise InputError(field, key, "an anhydrous salt for 'mol/kg' (mol of salt per kg water)")
                for s, nu in ion_stoich.items():
                    ions[s] = ions.get(s, 0.0) + nu * x
            else:
                moles = x / mass  # per the unit's basis, in the unit's mass scale
                for s, nu in ion_stoich.items():
                    ions[s] = ions.get(s, 0.0) + nu * moles * SPECIES[s].molar_mass
        return cls.from_analysis(ions, units=u, density=density, temp_c=temp_c)

    @staticmethod
    def _salt(text, field) -> tuple[dict[str, int], float, int]:
        if not isinstance(text, str):
            raise InputError(field, text, "a salt formula such as 'NaCl' or 'MgSO4·7H2O'")
        s = text.strip()
        n_water = 0
        hit = _HYDRATE.match(s)
        if hit is not None:
            s = hit.group("salt").strip()
            n = hit.group("n1") if hit.group("n1") is not None else hit.group("n2")
            n_water = int(n) if n else 1
            if n_water < 1:
                raise InputError(field, text, "a hydrate with at least one water molecule")
        try:
            stoich = parse_salt(s)
        except InputError as err:
            raise InputError(field, text, err.expected + "; hydrates as 'MgSO4·7H2O'") from None
        return stoich, salt_formula_mass(s) + n_water * M_WATER * 1000.0, n_water

    @staticmethod
    def _from_litre(per_litre: dict[str, float], rho: float, units: str, factor: float) -> dict[str, float]:
        total = sum(per_litre.values())
        if total >= MAX_SOLUTE_FRACTION * 1000.0 * rho:
            raise InputError(
                "values", f"total {total / factor:.6g} {units} at density {rho:g} kg/L",
                f"dissolved solids below {MAX_SOLUTE_FRACTION * 100:g} % of the mass of a litre "
                f"({MAX_SOLUTE_FRACTION * 1000 * rho:.4g} g/L at this density; check the units and the density)",
            )
        return _molal_from_solution_basis({s: g / rho for s, g in per_litre.items()}, units, factor)

    @classmethod
    def _from_litre_model(cls, per_litre, t, units, factor):
        """Iterate density and composition to consistency (a contraction: converges in a few steps)."""
        total = sum(per_litre.values())
        rho = min(max(1.0 + 0.0007 * total, 1.0), DENSITY_MAX)
        for _ in range(100):
            if total >= MAX_SOLUTE_FRACTION * 1000.0 * rho:
                raise InputError(
                    "values", f"total {total / factor:.6g} {units}",
                    f"dissolved solids below {MAX_SOLUTE_FRACTION * 100:g} % of the mass of a litre at the "
                    f"model's density ({rho:.4g} kg/L); check the units, or give the measured density",
                )
            m = _molal_from_solution_basis({s: g / rho for s, g in per_litre.items()}, units, factor)
            try:
                est = estimate_density(m, t)
            except RangeError as err:
                if err.field == "temp_c":
                    raise
                raise InputError(
                    "values", f"total {total / factor:.6g} {units}",
                    f"a brine within the density model's data ({err.expected}); check the units, or give "
                    "the measured density (a litre of it would hold more salt than the model covers)",
                ) from None
            if abs(est.value - rho) < 1e-12:
                return m, est.value, est.warnings
            rho = est.value
        raise ConvergenceError(f"density iteration did not converge (last {rho:.6g} kg/L)", {"density": rho})

    @staticmethod
    def _compare_density(m, rho, t, notes):
        try:
            est = estimate_density(m, t)
        except PhasekitError:
            return
        gap = 100.0 * (rho - est.value) / est.value
        if abs(gap) > DENSITY_MISMATCH_PERCENT:
            notes.append((f"given density {rho:g} kg/L differs by {gap:+.1f} % from the model's {est.value:.4f} kg/L "
                          f"at {t:g} °C (check its units, the sample, and the analysis)", AnalysisWarning))

    def _check_analysis(self, balance_on, notes):
        cb = self.charge_balance()
        if abs(cb) > CHARGE_BALANCE_MAX_PERCENT and balance_on is None:
            raise InputError(
                "charge balance", f"{cb:+.1f} %",
                f"an imbalance within ±{CHARGE_BALANCE_MAX_PERCENT:g} % (check the units and columns), or "
                "balance_on='<ion>' to balance it explicitly",
            )
        if abs(cb) > CHARGE_BALANCE_WARN_PERCENT:
            advice = "check the analysis" if balance_on else "check the analysis, or balance it explicitly with .balance(on=...)"
            notes.append((f"charge balance {cb:+.1f} % exceeds ±{CHARGE_BALANCE_WARN_PERCENT:g} %: {advice}",
                          AnalysisWarning))

    @classmethod
    def _make(cls, m: dict[str, float]) -> Brine:
        b = cls.__new__(cls)
        b._m = {s: float(m[s]) for s in SPECIES if s in m}
        b.warnings = []
        b.conversion_density = None
        b.balance_change = None
        return b

    # ------------------------------------------------------------------ tables
    @classmethod
    def read_table(cls, source, units: str = "mg/kg", id_column: str | None = None, density_column: str | None = None,
                   temp_c: float = 25.0, ignore_columns: Iterable[str] = (), missing: str = "error",
                   sheet_name=None, max_mb: float = 64.0) -> dict:
        """Read many analyses, one per row, from a DataFrame, a CSV or an XLSX file.

        Parameters
        ----------
        source : pandas.DataFrame, str or path
            The table; a path ending in ``.csv`` or ``.xlsx`` (read with openpyxl).
        units : str
            Units of every species column (see :meth:`from_analysis`).
        id_column : str, optional
            Column of sample ids (the keys of the result); row labels otherwise.
        density_column : str, optional
            Column of densities in kg/L for per-litre units; an empty cell uses the model.
        temp_c : float
            °C for the density model.
        ignore_columns : iterable of str
            Columns that are neither species, ids nor densities (dates, pond names, notes).
        missing : {"error", "zero"}
            What an empty species cell means (see :meth:`from_analysis`).
        sheet_name : str or int, optional
            Sheet of an XLSX file (name, or number from 1); by default its one sheet of analyses.
        max_mb : float
            Refuse a file larger than this (MB) before it is read.

        Returns
        -------
        dict
            ``{sample id: Brine or InputError}`` in the order of the rows. A row with a bad value is
            kept, as the :class:`~phasekit.errors.InputError` that names its row, column, value and
            what would be accepted. A summary warning names the rows with errors or warnings.

        Raises
        ------
        InputError
            For the table as a whole: unreadable source, unknown or duplicated columns, duplicated
            sample ids, no species column, no rows.
        """
        from phasekit.chemistry.tables import PROBLEM_COLUMN

        u, basis, _ = _unit(units)
        df = cls._read_frame(source, sheet_name, max_mb)
        problems = df[PROBLEM_COLUMN].tolist() if PROBLEM_COLUMN in df.columns else [""] * len(df)
        df = df.drop(columns=[PROBLEM_COLUMN], errors="ignore")
        columns = [str(c).strip() for c in df.columns]
        df = df.copy()
        df.columns = columns
        ignore = {str(c).strip() for c in ignore_columns}
        special = {c for c in (id_column, density_column) if c is not None}
        for c, name in (("id_column", id_column), ("density_column", density_column)):
            if name is not None and name not in columns:
                raise InputError(c, name, f"one of the columns {columns}")
        for c in ignore:
            if c not in columns:
                raise InputError("ignore_columns", c, f"one of the columns {columns}")
        if len(set(columns)) != len(columns):
            dup = next(c for c in columns if columns.count(c) > 1)
            raise InputError("columns", dup, "each column name once")
        species_cols = {}
        for c in columns:
            if c in special or c in ignore:
                continue
            try:
                name = parse_species(c)
            except InputError as err:
                raise InputError("column", c, f"a species column ({err.expected}), the id or density column, "
                                              "or a column listed in ignore_columns") from None
            if name in species_cols.values():
                other = next(k for k, v in species_cols.items() if v == name)
                raise InputError("column", c, f"one column per species ({name} is also column {other!r})")
            species_cols[c] = name
        if not species_cols:
            raise InputError("columns", columns, "at least one species column")
        if len(df) == 0:
            raise InputError("source", "a table without rows", "at least one row of analyses")
        out: dict = {}
        seen: dict = {}
        for pos, (label, row) in enumerate(df.iterrows()):
            sid = row[id_column] if id_column is not None else label
            bad_id = id_column is not None and (sid is None or (isinstance(sid, float) and math.isnan(sid))
                                                or (isinstance(sid, str) and not sid.strip()))
            if bad_id:
                key = f"row {pos + 1}"
                out[key] = InputError(f"row {pos + 1}: {id_column}", sid, "a sample id")
                continue
            if isinstance(sid, str):
                sid = sid.strip()
            if sid in seen:
                raise InputError(id_column or "index", sid, f"unique sample ids ({sid!r} is in rows {seen[sid]} and {pos + 1})")
            seen[sid] = pos + 1
            if problems[pos]:
                out[sid] = InputError(f"row {sid!r}", f"row {pos + 1}", f"a row that can be read ({problems[pos]})")
                continue
            values = {c: row[c] for c in species_cols}
            dens = None
            if density_column is not None:
                d = row[density_column]
                blank = d is None or (isinstance(d, float) and math.isnan(d)) or (isinstance(d, str) and not d.strip())
                dens = None if blank else d
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    if dens is not None and basis == "litre":
                        dens = _check_density(dens, density_column)
                    out[sid] = cls.from_analysis(values, units=u, density=dens, temp_c=temp_c, missing=missing)
            except InputError as err:
                field = err.field.replace("values[", "column[", 1)
                out[sid] = InputError(f"row {sid!r}: {field}", err.value, err.expected)
            except PhasekitError as err:
                out[sid] = err
        errors = [k for k, v in out.items() if not isinstance(v, Brine)]
        warned = [k for k, v in out.items() if isinstance(v, Brine) and v.warnings]
        if errors:
            warnings.warn(f"{len(errors)} of {len(out)} rows could not be read (their entries are errors): "
                          f"{_short(errors)}", AnalysisWarning, stacklevel=2)
        if warned:
            warnings.warn(f"{len(warned)} of {len(out)} rows carry warnings (see each Brine's .warnings): "
                          f"{_short(warned)}", AnalysisWarning, stacklevel=2)
        return out

    @staticmethod
    def _read_frame(source, sheet_name, max_mb) -> pd.DataFrame:
        from phasekit.chemistry.tables import read_table_file

        if isinstance(source, pd.DataFrame):
            return source
        if not isinstance(source, str | Path):
            raise InputError("source", type(source).__name__, "a pandas DataFrame or the path of a .csv or .xlsx file")
        path = Path(source)
        if path.suffix.lower() not in (".csv", ".xlsx", ".xlsm"):
            raise InputError("source", str(source), "a .csv or .xlsx file, or a pandas DataFrame")
        if not path.is_file():
            raise InputError("source", str(source), "the path of an existing file")
        table = read_table_file(path, max_mb, sheet=sheet_name, option="max_mb")
        return table.with_problem_column() if table.problems else table.frame

    # ------------------------------------------------------------------ properties
    @property
    def molalities(self) -> dict[str, float]:
        """mol per kg of water by species (a new plain dict)."""
        return dict(self._m)

    @property
    def species(self) -> tuple[str, ...]:
        """Species of the brine, in the order of the species table."""
        return tuple(self._m)

    @property
    def ionic_strength(self) -> float:
        """I = 1/2 sum m_i z_i^2, mol/kg water."""
        return 0.5 * sum(v * SPECIES[s].charge ** 2 for s, v in self._m.items())

    @property
    def cation_equivalents(self) -> float:
        """sum z m over cations, eq per kg water."""
        return _equivalents(self._m)[0]

    @property
    def anion_equivalents(self) -> float:
        """sum |z| m over anions, eq per kg water."""
        return _equivalents(self._m)[1]

    @property
    def grams_per_kg_water(self) -> dict[str, float]:
        """g of each species per kg of water."""
        return {s: v * SPECIES[s].molar_mass for s, v in self._m.items()}

    @property
    def solute_mass_per_kg_water(self) -> float:
        """g of dissolved species per kg of water."""
        return sum(self.grams_per_kg_water.values())

    @property
    def total_dissolved_solids(self) -> float:
        """Dissolved species in g per kg of **solution** (sum of the ions; not an evaporation residue)."""
        s = self.solute_mass_per_kg_water
        return 1000.0 * s / (1000.0 + s)

    @property
    def mass_percent(self) -> dict[str, float]:
        """Mass % of each species in the solution."""
        return {s: 100.0 * w for s, w in self.to_mass_fractions().items() if s != "H2O"}

    def to_mass_fractions(self) -> dict[str, float]:
        """Mass fraction of each species and of water (key ``"H2O"``) in the solution; they sum to 1."""
        g = self.grams_per_kg_water
        total = 1000.0 + sum(g.values())
        out = {s: v / total for s, v in g.items()}
        out["H2O"] = 1000.0 / total
        return out

    def to_units(self, units: str, density=None, temp_c: float = 25.0) -> dict[str, float]:
        """The composition in any unit of :meth:`from_analysis` (its inverse).

        Per-litre units use ``density`` (kg/L) or, if omitted, the density model at ``temp_c``.
        """
        u, basis, factor = _unit(units)
        if basis == "water":
            return self.molalities
        g = self.grams_per_kg_water
        total = 1000.0 + sum(g.values())
        per_kg_solution = {s: 1000.0 * v / total for s, v in g.items()}
        if basis == "solution":
            return {s: v / factor for s, v in per_kg_solution.items()}
        rho = _check_density(density) if density is not None else self.density(_check_temp(temp_c))
        if u == "meq/L":
            return {s: v * rho * 1000.0 * abs(SPECIES[s].charge) / SPECIES[s].molar_mass
                    for s, v in per_kg_solution.items()}
        return {s: v * rho / factor for s, v in per_kg_solution.items()}

    def density(self, temp_c: float = 25.0) -> float:
        """Density in kg/L from :mod:`phasekit.chemistry.density` (warns outside its data)."""
        est = estimate_density(self._m, _check_temp(temp_c))
        for w in est.warnings:
            warnings.warn(w, ValidityWarning, stacklevel=2)
        return est.value

    # ------------------------------------------------------------------ charge balance
    def charge_balance(self) -> float:
        """Charge balance error in %: 100 (cations - anions) / (cations + anions), in equivalents.

        0 for a brine without ions.
        """
        cat, an = _equivalents(self._m)
        if cat + an == 0.0:
            return 0.0
        cb = 100.0 * (cat - an) / (cat + an)
        return 0.0 if abs(cb) < 1e-12 else cb

    def balance_ion(self) -> str | None:
        """The ion the charge-balance rule adjusts (module description): the major ion, in
        equivalents, of the side that is short (the rule of ``phasekit batch`` too; ties, which
        real analyses do not have, go to the name last in alphabetical order).
        None for a neutral brine. Without any ion of the short side, Cl (anions short) or Na."""
        cb = self.charge_balance()
        if cb == 0.0:
            return None
        side = [s for s in self._m if (SPECIES[s].charge < 0) == (cb > 0) and self._m[s] > 0]
        if not side:
            return "Cl" if cb > 0 else "Na"
        return max(side, key=lambda s: (abs(SPECIES[s].charge) * self._m[s], s))

    def balance(self, on: str = "auto", allow_decrease: bool = False) -> Brine:
        """A new brine, electrically neutral, made so by changing the amount of one ion.

        Parameters
        ----------
        on : str
            ``"auto"`` (default): the charge-balance rule of the module description, the major ion
            of the side that is short, increased. Or the ion to adjust (any accepted spelling; it
            need not be in the brine yet). A neutral brine is returned unchanged.
        allow_decrease : bool
            By default the ion is only increased (the usual "by difference" completion of an
            analysis). Allow decreasing it when the ion itself is in excess.

        Returns
        -------
        Brine
            With the adjustment recorded in :attr:`warnings`.

        Raises
        ------
        InputError
            If balancing on ``on`` would need decreasing it (unless ``allow_decrease``), or a
            negative amount of it.
        """
        if isinstance(on, str) and on.strip().lower() == "auto":
            name = self.balance_ion()
            if name is None:
                b = Brine._make(self._m)
                b.warnings = list(self.warnings)
                b.conversion_density = self.conversion_density
                b.balance_change = None
                return b
        else:
            try:
                name = parse_species(on)
            except InputError as err:
                raise InputError("on", on, err.expected + ", or 'auto'") from None
        z = SPECIES[name].charge
        cat, an = _equivalents(self._m)
        excess = cat - an  # eq/kg water
        delta = excess / -z  # mol/kg change of the ion that cancels the excess
        old = self._m.get(name, 0.0)
        new = old + delta
        cb = self.charge_balance()
        if delta < 0 and not allow_decrease:
            side = "anions" if excess < 0 else "cations"
            raise InputError(
                "on", on,
                f"an ion of the sign that is short: the brine has an excess of {side} ({cb:+.2f} %), so "
                f"balancing on {name} would remove {-delta:.6g} mol/kg of it; balance on an ion of the other "
                "sign, or pass allow_decrease=True",
            )
        if new < 0:
            raise InputError(
                "on", on,
                f"an ion that can absorb the imbalance: balancing on {name} needs {new:.6g} mol/kg "
                f"(a negative amount; the brine holds {old:.6g} mol/kg); balance on another ion",
            )
        m = dict(self._m)
        m[name] = new
        b = Brine._make(m)
        b.warnings = list(self.warnings)
        b.conversion_density = self.conversion_density
        rel = f", {100.0 * delta / old:+.3g} %" if old > 0 else ""
        b.warnings.append(f"balanced on {name}: {old:.6g} -> {new:.6g} mol/kg ({delta:+.4g} mol/kg{rel}; "
                          f"charge balance was {cb:+.2f} %)")
        b.balance_change = {"ion": name, "from_mol_per_kg": old, "to_mol_per_kg": new, "change_mol_per_kg": delta,
                            "charge_balance_before_percent": cb}
        return b

    @property
    def balance_note(self) -> str:
        """The line saying how the brine was made neutral ("" if it was not changed)."""
        return next((w for w in reversed(self.warnings) if w.startswith("balanced on ")), "")

    # ------------------------------------------------------------------ derived brines
    def scaled(self, factor: float) -> Brine:
        """The brine concentrated (factor > 1) or diluted by ``factor``: every molality times it.

        ``factor`` is the concentration factor of the design notes: initial mass of water / mass of
        water now. No solid is allowed to form here; see the equilibrium layer for that.
        """
        f = _number("factor", factor, "a finite concentration factor > 0")
        if f == 0:
            raise InputError("factor", factor, "a finite concentration factor > 0")
        b = Brine._make({s: v * f for s, v in self._m.items()})
        b.warnings = list(self.warnings)
        return b

    # ------------------------------------------------------------------ display
    def __repr__(self) -> str:
        body = ", ".join(f"{s}={v:.6g}" for s, v in self._m.items())
        return f"Brine({body} mol/kg water; charge balance {self.charge_balance():+.2f} %)"


def _short(keys: list, n: int = 10) -> str:
    text = ", ".join(repr(k) for k in keys[:n])
    return text + (f" and {len(keys) - n} more" if len(keys) > n else "")
