"""Locate and read the files of the embedded database.

An installed package carries ``data/`` as the sub-package ``phasekit.data``;
a source checkout reads the top-level ``data/`` directory beside ``phasekit/``.
"""

from __future__ import annotations

import tomllib
from functools import lru_cache
from pathlib import Path

import pandas as pd


@lru_cache(maxsize=1)
def data_dir() -> Path:
    """Directory of the embedded database."""
    here = Path(__file__).resolve().parent
    candidates = [here / "data", here.parent / "data"]
    for c in candidates:
        if (c / "species.csv").is_file():
            return c
    raise FileNotFoundError(f"phasekit database not found in {candidates}")


def read_csv(name: str, directory: Path | None = None) -> pd.DataFrame:
    """Read a CSV of the database; lines starting with '#' are comments."""
    path = (directory or data_dir()) / name
    return pd.read_csv(path, comment="#", skipinitialspace=True, keep_default_na=False, na_values=[""])


def read_toml(name: str, directory: Path | None = None) -> dict:
    """Read a TOML file of the database."""
    path = (directory or data_dir()) / name
    with open(path, "rb") as fh:
        return tomllib.load(fh)
