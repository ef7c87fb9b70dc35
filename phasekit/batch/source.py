"""Input tables of a batch run: reading a CSV or XLSX file, and checking its columns.

Cells are read as text (CSV and XLSX, by :mod:`phasekit.chemistry.tables`) so that every worker
parses each value the same way, with Python's correctly rounded float(). A file larger than the size limit (:data:`MAX_INPUT_MB`, which the
caller may raise) is refused before it is read: at about 60 bytes per analysis, 64 MB is a million
analyses, an hour of work on two cores; split such a file, or raise the limit knowingly.
"""

from __future__ import annotations

import os
from pathlib import Path

import pandas as pd

from phasekit.chemistry.species import is_species, parse_species
from phasekit.chemistry.tables import PROBLEM_COLUMN, read_table_file
from phasekit.errors import InputError

#: largest input file read by default, in MB (10**6 bytes)
MAX_INPUT_MB = 64.0
SUFFIXES = (".csv", ".xlsx", ".xlsm")


def read_source(source, max_mb: float = MAX_INPUT_MB, sheet=None, notes: list | None = None) -> pd.DataFrame:
    """The raw cells of a table of analyses (read by :mod:`phasekit.chemistry.tables`).

    Parameters
    ----------
    source : str, path or pandas.DataFrame
        A ``.csv`` or ``.xlsx`` file, or a DataFrame (used as it is).
    max_mb : float
        Refuse files larger than this (MB), before they are read.
    sheet : int, str or None
        Sheet of an XLSX file (name, or number from 1); by default the one sheet of analyses.
    notes : list, optional
        Receives what the reader decided (separator, decimal comma, sheet).

    Returns
    -------
    pandas.DataFrame
        Column names stripped of spaces; cells as text (empty cells ``""``). A file's rows that
        cannot be read as written (a ragged row) are kept, with the reason in the column
        :data:`~phasekit.chemistry.tables.PROBLEM_COLUMN`.

    Raises
    ------
    InputError
        Missing, empty, oversized or unreadable file, a duplicated column, several sheets of
        analyses without ``sheet``, or a table without rows.
    """
    if isinstance(source, pd.DataFrame):
        df = source.copy()
        df.columns = [str(c).strip() for c in df.columns]
        if len(set(df.columns)) != len(df.columns):
            dup = next(c for c in df.columns if list(df.columns).count(c) > 1)
            raise InputError("column", dup, "each column name once in the header")
        if len(df) == 0:
            raise InputError("input", "the table: a header without rows", "at least one row of analyses")
        return df
    if not isinstance(source, str | os.PathLike):
        raise InputError("input", type(source).__name__, "the path of a .csv or .xlsx file, or a DataFrame")
    if Path(source).suffix.lower() not in SUFFIXES:
        raise InputError("input", str(source), "a .csv or .xlsx file")
    table = read_table_file(source, max_mb, sheet)
    if notes is not None:
        notes.extend(table.notes)
    return table.with_problem_column() if table.problems else table.frame


def plan_columns(df: pd.DataFrame, id_column=None, ignore_columns=(), density_column=None):
    """Species columns and the id column of a table.

    The id column is ``id_column`` or, if None, the first column when its name is not a species
    (e.g. ``sample``). Every other column must be a species, the density column or one of
    ``ignore_columns``.

    Returns
    -------
    (species_columns, id_column) : (tuple of str, str or None)

    Raises
    ------
    InputError
        A named column that the table lacks, an unknown column, two columns of one species, or no
        species column.
    """
    columns = [c for c in df.columns if c != PROBLEM_COLUMN]
    ignore = [str(c).strip() for c in ignore_columns]
    for field, name in (("id_column", id_column), ("density_column", density_column)):
        if name is not None and name not in columns:
            raise InputError(field, name, f"one of the columns {columns}")
    for name in ignore:
        if name not in columns:
            raise InputError("ignore_columns", name, f"one of the columns {columns}")
    if id_column is None and columns and columns[0] != density_column and columns[0] not in ignore \
            and not is_species(columns[0]):
        id_column = columns[0]
    species: list[str] = []
    seen: dict[str, str] = {}
    for c in columns:
        if c in (id_column, density_column) or c in ignore:
            continue
        try:
            name = parse_species(c)
        except InputError as err:
            raise InputError("column", c, f"a species column ({err.expected}), the id column (the first "
                                          "column, or --id-column), or a column named in --ignore-columns") from None
        if name in seen:
            raise InputError("column", c, f"one column per species ({name} is also column {seen[name]!r})")
        seen[name] = c
        species.append(c)
    if not species:
        raise InputError("columns", columns, "at least one species column (Na, K, Mg, Ca, Cl, SO4 ...)")
    return tuple(species), id_column


def row_labels(df: pd.DataFrame, id_column) -> tuple[list, list[str]]:
    """Labels naming the rows in messages: the sample ids if unique, else row numbers (from 1).

    Returns (labels, warnings).
    """
    numbers = list(range(1, len(df) + 1))
    if id_column is None:
        return numbers, []
    ids = df[id_column]
    text = [None if pd.isna(v) else str(v).strip() for v in ids]
    if any(t is None or t == "" for t in text):
        return numbers, [f"some rows have no {id_column}: rows are named by their number (from 1) in messages"]
    if len(set(text)) != len(text):
        seen: dict[str, int] = {}
        for pos, t in enumerate(text, start=1):
            if t in seen:
                return numbers, [f"{id_column} {t!r} is in rows {seen[t]} and {pos}: rows are named by their "
                                 "number (from 1) in messages"]
            seen[t] = pos
    return text, []
