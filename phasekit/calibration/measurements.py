"""Published measurements of saturated solutions, read from ``data/reference/measured_*.csv``.

Layout of those files (phasekit's own; each file's header comments cite every publication and say
where it was read)::

    system,temp_c,kind,solids,units,composition,value,uncertainty,role,reference,read_at,from_memory

``kind`` is "invariant" or "saturation" (a liquid saturated with the '+'-separated ``solids``),
"univariant", or a property of the liquid ("water_activity", "osmotic_coefficient",
"vapour_pressure", with ``value``). ``composition`` lists ``salt=value`` or ``ion=value`` pairs,
separated by ';', in ``units``: "mass %" (of the saturated solution), "mol/kg" (per kg water),
"g/100 g H2O" or "mol/1000 mol H2O". ``role`` is "fit" (read by the regression) or "check" (read
only by the validation tests and report), chosen before any model was run. A transition point of one
salt's solids ("invariant", two solids) and the water activity over a saturated solution (with
``solids``) may leave the composition empty: they fix a temperature or an activity, not a composition.

:func:`read_measurements` gives one row per measurement with the composition converted to
molalities of the database's species (``molalities``, a mapping).
"""

from __future__ import annotations

import math
from pathlib import Path

import pandas as pd

from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.chemistry.species import SPECIES
from phasekit.data_files import data_dir
from phasekit.errors import InputError

COLUMNS = ("system", "temp_c", "kind", "solids", "units", "composition", "value", "uncertainty", "role",
           "reference", "read_at", "from_memory")
SOLUBILITY_KINDS = ("invariant", "saturation", "univariant")
PROPERTY_KINDS = ("water_activity", "osmotic_coefficient", "vapour_pressure")
M_WATER_G = 18.01528  # g/mol, molar mass of water (IUPAC 2013 atomic weights)
UNITS = ("mass %", "mol/kg", "g/100 g H2O", "mol/1000 mol H2O")


def _amounts(text: str, where: str) -> dict:
    out = {}
    for part in str(text).split(";"):
        part = part.strip()
        if not part:
            continue
        key, sep, val = part.partition("=")
        if not sep:
            raise InputError(f"{where} composition", text, "pairs 'salt=value' separated by ';'")
        try:
            x = float(val)
        except ValueError:
            raise InputError(f"{where} composition", part, "a number after '='") from None
        if not math.isfinite(x) or x < 0:
            raise InputError(f"{where} composition", part, "a finite value >= 0")
        out[key.strip()] = x
    if not out:
        raise InputError(f"{where} composition", text, "at least one 'salt=value' pair")
    return out


def _component(key: str):
    """(ions per unit, molar mass g/mol) of a salt formula or a single ion."""
    if key in SPECIES:
        return {key: 1.0}, SPECIES[key].molar_mass
    return {k: float(v) for k, v in parse_salt(key).items()}, salt_formula_mass(key)


def to_molalities(composition: str, units: str, where: str = "row") -> dict:
    """Species molalities (mol/kg water) of a composition written as in the measurement files.

    Parameters
    ----------
    composition : str
        ``"K2SO4=10.21;MgSO4=21.57"`` (salts) or ``"K=1.2;Cl=1.2"`` (ions).
    units : str
        One of "mass %", "mol/kg", "g/100 g H2O", "mol/1000 mol H2O".
    where : str
        Names the row in error messages.

    Returns
    -------
    dict
        ``{species: mol/kg}``.
    """
    amounts = _amounts(composition, where)
    parts = {k: _component(k) for k in amounts}
    if units == "mol/kg":
        mol_per_kg = dict(amounts)
    elif units == "g/100 g H2O":
        mol_per_kg = {k: 10.0 * v / parts[k][1] for k, v in amounts.items()}
    elif units == "mol/1000 mol H2O":
        mol_per_kg = {k: v / M_WATER_G for k, v in amounts.items()}  # 1000 mol of water = M_WATER_G kg
    elif units == "mass %":
        water = 100.0 - sum(amounts.values())
        if water <= 0:
            raise InputError(f"{where} composition", composition, "mass percentages summing to less than 100")
        mol_per_kg = {k: 1000.0 * v / (parts[k][1] * water) for k, v in amounts.items()}
    else:
        raise InputError(f"{where} units", units, ", ".join(UNITS))
    m: dict = {}
    for k, mol in mol_per_kg.items():
        for ion, n in parts[k][0].items():
            m[ion] = m.get(ion, 0.0) + n * mol
    return m


def measurement_files(directory: Path | None = None) -> list[Path]:
    """The measurement files of the reference set, in name order."""
    return sorted((Path(directory) if directory else data_dir() / "reference").glob("measured_*.csv"))


def read_measurements(files=None) -> pd.DataFrame:
    """All measurements of the reference set as one table.

    Parameters
    ----------
    files : list of path, optional
        The files to read; :func:`measurement_files` by default.

    Returns
    -------
    pandas.DataFrame
        The file columns plus ``file``, ``line`` (the row's place, for messages), ``solid_list``
        (tuple of solid names, empty for properties), ``molalities`` (mapping) and
        ``memory`` (bool: the value was recalled, not read).

    Raises
    ------
    InputError
        A row whose kind, role, units or composition cannot be read (naming the file and line).
    """
    frames = []
    for path in files if files is not None else measurement_files():
        df = pd.read_csv(path, comment="#", dtype=str, keep_default_na=False)
        missing = [c for c in COLUMNS if c not in df.columns]
        if missing:
            raise InputError(f"{Path(path).name} columns", list(df.columns), f"the columns {', '.join(COLUMNS)}")
        df["file"] = Path(path).name
        df["line"] = range(1, len(df) + 1)
        frames.append(df)
    if not frames:
        return pd.DataFrame(columns=[*COLUMNS, "file", "line", "solid_list", "molalities", "memory"])
    df = pd.concat(frames, ignore_index=True)
    df = df[df["system"].str.strip() != ""].reset_index(drop=True)
    for c in df.columns:
        if df[c].dtype == object:
            df[c] = df[c].str.strip()
    mol, solids = [], []
    for row in df.itertuples():
        where = f"{row.file} row {row.line}"
        if row.kind not in SOLUBILITY_KINDS + PROPERTY_KINDS:
            raise InputError(f"{where} kind", row.kind, ", ".join(SOLUBILITY_KINDS + PROPERTY_KINDS))
        if row.role not in ("fit", "check"):
            raise InputError(f"{where} role", row.role, "'fit' or 'check'")
        # a transition temperature (two solids of one salt) or the water activity over a saturated solution
        # may come without the composition: those rows check the model (see phasekit.calibration.report)
        bare = not row.composition and row.solids and row.kind in ("invariant", "water_activity")
        mol.append({} if bare else to_molalities(row.composition, row.units, where))
        solids.append(tuple(s.strip() for s in row.solids.split("+") if s.strip()))
    df["temp_c"] = pd.to_numeric(df["temp_c"])
    df["value"] = pd.to_numeric(df["value"].where(df["value"] != "", None), errors="raise")
    df["molalities"] = mol
    df["solid_list"] = solids
    df["memory"] = df["from_memory"].str.lower().isin(("yes", "true", "1"))
    return df


def binary_solubility_table(measurements: pd.DataFrame | None = None) -> pd.DataFrame:
    """Solubilities of single salts in water from the reference set, one row per measurement.

    Parameters
    ----------
    measurements : pandas.DataFrame, optional
        From :func:`read_measurements` (all files by default).

    Returns
    -------
    pandas.DataFrame
        ``salt``, ``solid``, ``temp_c``, ``mass_percent`` (of the anhydrous salt in the saturated
        solution, converted from the publication's unit where needed), ``role``, ``source`` (the
        reference key and the file) and ``memory``; rows of the "<salt>-H2O" systems of kind
        "saturation" only.
    """
    meas = read_measurements() if measurements is None else measurements
    rows = []
    for r in meas.itertuples():
        parts = r.system.split("-")
        if r.kind != "saturation" or len(parts) != 2 or parts[1] != "H2O" or len(r.solid_list) != 1:
            continue
        salt = parts[0]
        ions = parse_salt(salt)
        ion = next(iter(ions))
        m = r.molalities.get(ion, 0.0) / ions[ion]
        grams = m * salt_formula_mass(salt)
        rows.append({"salt": salt, "solid": r.solid_list[0], "temp_c": float(r.temp_c),
                     "mass_percent": 100.0 * grams / (1000.0 + grams), "role": r.role,
                     "source": f"{r.reference} ({r.file})", "memory": bool(r.memory)})
    return pd.DataFrame(rows, columns=["salt", "solid", "temp_c", "mass_percent", "role", "source", "memory"])
