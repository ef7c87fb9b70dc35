"""Crystallization paths drawn on diagrams: the ``path`` argument of every figure function.

A path is a pandas DataFrame with one row per step, in order, and one column per species
holding the liquid's molality (mol per kg water): ``Na``, ``K``, ``Mg``, ``Cl``, ``SO4`` ...
(any spelling :func:`phasekit.chemistry.species.parse_species` accepts; other columns are
ignored). Several paths: a mapping ``{label: DataFrame}``. The species that a diagram does
not show are dropped (for a ternary diagram, the composition is expressed in its two salts
by least squares on its ions).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER, parse_species
from phasekit.errors import InputError


def path_frames(path) -> list:
    """``[(label, DataFrame)]`` from a DataFrame, a mapping of them, or None."""
    if path is None:
        return []
    if isinstance(path, pd.DataFrame):
        return [("path", path)]
    if isinstance(path, dict):
        out = []
        for k, v in path.items():
            if not isinstance(v, pd.DataFrame):
                raise InputError(f"path[{k!r}]", type(v).__name__, "a pandas DataFrame of liquid molalities per species")
            out.append((str(k), v))
        return out
    raise InputError("path", type(path).__name__,
                     "a pandas DataFrame (one row per step, liquid molality per species) or a mapping of them")


def molality_array(model, df: pd.DataFrame, field: str = "path") -> np.ndarray:
    """(N, n_species) molalities from the species columns of ``df``."""
    m = np.zeros((len(df), len(model.species)))
    found = False
    for c in df.columns:
        try:
            s = parse_species(str(c))
        except InputError:
            continue
        m[:, model.index[s]] = pd.to_numeric(df[c], errors="coerce").to_numpy(dtype=float)
        found = True
    if not found or len(df) == 0:
        raise InputError(field, list(df.columns), "a non-empty DataFrame with liquid molality columns named by "
                         "species, e.g. 'Na', 'K', 'Cl'")
    if not np.all(np.isfinite(m)) or np.any(m < 0):
        raise InputError(field, "non-finite or negative molality", "molalities >= 0 in mol per kg water")
    return m


def ternary_path(model, salts, df: pd.DataFrame, field: str = "path") -> dict:
    """Mass per cent, g per 100 g water and molality of both salts along a path."""
    from phasekit.diagrams.systems import TernarySystem
    from phasekit.diagrams.ternary import composition_columns

    sysm = TernarySystem(model, salts)
    m = molality_array(model, df, field)
    sm = np.clip(sysm.salts_of_molalities(m), 0.0, None)
    return composition_columns(sysm, sm)


def projection_path(model, system: str, df: pd.DataFrame, field: str = "path") -> tuple:
    """Plot coordinates (x, y) of a path on a Jänecke projection."""
    m = molality_array(model, df, field)
    idx = model.index
    if system == "reciprocal":
        na, k, cl, so4 = m[:, idx["Na"]], m[:, idx["K"]], m[:, idx["Cl"]], m[:, idx["SO4"]]
        with np.errstate(divide="ignore", invalid="ignore"):
            return k / (na + k), 2 * so4 / (cl + 2 * so4)
    if system == "reciprocal_nitrate":
        na, k, cl, no3 = m[:, idx["Na"]], m[:, idx["K"]], m[:, idx["Cl"]], m[:, idx["NO3"]]
        with np.errstate(divide="ignore", invalid="ignore"):
            return k / (na + k), no3 / (cl + no3)
    k2, mg, so4 = m[:, idx["K"]] / 2, m[:, idx["Mg"]], m[:, idx["SO4"]]
    p = k2 + mg + so4
    with np.errstate(divide="ignore", invalid="ignore"):
        fm, fs = mg / p, so4 / p
    return fm + 0.5 * fs, np.sqrt(3.0) / 2.0 * fs


__all__ = ["M_WATER", "molality_array", "path_frames", "projection_path", "ternary_path"]
