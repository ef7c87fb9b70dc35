"""The thermodynamic database: species, Pitzer parameters and solids.

Files (in ``data/``, layout of phasekit, see DEVELOPERS.md): ``species.csv``,
``pitzer_binary.csv``, ``pitzer_mixing.csv``, ``model.toml`` and, for solids,
``solids.csv``. Every row carries its source and validity range.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from phasekit.chemistry import species as chem
from phasekit.data_files import data_dir, read_csv, read_toml
from phasekit.errors import InputError

BINARY_PARAMETERS = ("beta0", "beta1", "beta2", "cphi", "alpha1", "alpha2")


class Database:
    """Tables of the thermodynamic database.

    Parameters
    ----------
    directory : path, optional
        Directory holding the files; the embedded database by default.
    """

    def __init__(self, directory: Path | None = None):
        self.directory = Path(directory) if directory is not None else data_dir()
        self.species = list(chem.SPECIES)
        self.charges = {s: chem.SPECIES[s].charge for s in self.species}
        self.binary = read_csv("pitzer_binary.csv", self.directory)
        self.mixing = read_csv("pitzer_mixing.csv", self.directory)
        self.mixing["species3"] = self.mixing["species3"].fillna("")
        settings = read_toml("model.toml", self.directory)["model"]
        self.ionic_strength_max = float(settings["ionic_strength_max"])
        solids_path = self.directory / "solids.csv"
        self.solids = read_csv("solids.csv", self.directory) if solids_path.exists() else pd.DataFrame()
        self._validate()

    def with_tables(self, **tables) -> Database:
        """A copy of this database with some tables replaced (``binary``, ``mixing``, ``solids``).

        The embedded files are never changed; overlays and fits build databases this way.
        """
        new = object.__new__(Database)
        new.__dict__.update(self.__dict__)
        for name, table in tables.items():
            if name not in ("binary", "mixing", "solids"):
                raise InputError("table", name, "'binary', 'mixing' or 'solids'")
            setattr(new, name, table.reset_index(drop=True).copy())
        new._validate()
        return new

    def parse_species(self, name) -> str:
        """Canonical species name (raises :class:`InputError` if unknown)."""
        return chem.parse_species(name)

    def _validate(self):
        for row in self.binary.itertuples():
            for field, value in (("cation", row.cation), ("anion", row.anion)):
                if value not in self.charges:
                    raise InputError(f"pitzer_binary.csv {field}", value, f"one of {self.species}")
            if self.charges[row.cation] <= 0 or self.charges[row.anion] >= 0:
                raise InputError("pitzer_binary.csv", f"{row.cation}-{row.anion}", "a cation then an anion")
            if row.parameter not in BINARY_PARAMETERS:
                raise InputError("pitzer_binary.csv parameter", row.parameter, f"one of {BINARY_PARAMETERS}")
            if not isinstance(row.source, str) or not row.source.strip():
                raise InputError("pitzer_binary.csv source", row.source, "a named source")
        for row in self.mixing.itertuples():
            s1, s2 = row.species1, row.species2
            if s1 not in self.charges or s2 not in self.charges:
                raise InputError("pitzer_mixing.csv species", f"{s1}-{s2}", f"species among {self.species}")
            if (self.charges[s1] > 0) != (self.charges[s2] > 0):
                raise InputError("pitzer_mixing.csv", f"{s1}-{s2}", "two ions of the same sign")
            if row.kind == "psi":
                s3 = row.species3
                if s3 not in self.charges or (self.charges[s3] > 0) == (self.charges[s1] > 0):
                    raise InputError("pitzer_mixing.csv species3", s3, "an ion of the opposite sign")
            elif row.kind != "theta":
                raise InputError("pitzer_mixing.csv kind", row.kind, "'theta' or 'psi'")
            if not isinstance(row.source, str) or not row.source.strip():
                raise InputError("pitzer_mixing.csv source", row.source, "a named source")


class PendingDatabase(Database):
    """A database whose tables (``binary``, ``mixing``, ``solids``) are written on first access.

    A model whose coefficient arrays were changed in place of its tables (Monte Carlo samples,
    fits: :func:`phasekit.fitting.with_parameters`) carries one: its other attributes are those
    of ``base``, and ``make_tables()`` (picklable, e.g. a functools.partial of a module-level
    function) returns every table, edited or not, passed through :meth:`Database.with_tables` (so checked
    as before) when one of them is first read.
    """

    _TABLES = ("binary", "mixing", "solids")

    def __init__(self, base: Database, make_tables):
        self.__dict__.update({k: v for k, v in base.__dict__.items() if k not in self._TABLES})
        self._make_tables = make_tables

    def __getattr__(self, name):
        # only called for attributes not set: the tables, before their first access
        if name not in self._TABLES or "_make_tables" not in self.__dict__:
            raise AttributeError(name)
        tables = self._make_tables()  # every table, edited or not
        full = Database.with_tables(self, **{t: tables[t] for t in self._TABLES})
        for t in self._TABLES:
            self.__dict__[t] = full.__dict__[t]
        return self.__dict__[name]
