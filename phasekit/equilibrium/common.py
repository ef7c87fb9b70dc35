"""Helpers shared by the equilibrium modules: brine input and composition arrays."""

from __future__ import annotations

import numpy as np
import pandas as pd

from phasekit.errors import InputError


def molalities_of(brine) -> dict:
    """The molality mapping of a Brine, or of a plain mapping (validated by the model later)."""
    if hasattr(brine, "molalities"):
        return dict(brine.molalities)
    if isinstance(brine, dict) or hasattr(brine, "items"):
        return dict(brine)
    raise InputError("brine", type(brine).__name__, "a phasekit Brine or a mapping of species to mol/kg water")


def composition_array(model, brine) -> np.ndarray:
    """Validated molality vector (n_species,) of one brine."""
    m, _, _ = model._as_array(molalities_of(brine))
    return m[0]


def make_brine(model, m: np.ndarray):
    """A Brine (or a dict if the Brine class is unavailable) from a molality vector."""
    comp = {s: float(v) for s, v in zip(model.species, m) if v > 0}
    try:
        from phasekit.chemistry.brine import Brine
    except ImportError:  # pragma: no cover - the chemistry layer always has Brine
        return comp
    return Brine(comp)


def frame_array(model, df: pd.DataFrame) -> np.ndarray:
    """Molality array (N, n_species) of a DataFrame of compositions."""
    m, _, _ = model._as_array(df)
    return m


def excluded_solids(model, exclude, field: str = "exclude") -> list:
    """Canonical names of the solids kept out, from a name, a comma-separated string or a sequence.

    Mineral names and salt formulas are accepted (``"anhydrite"``, ``"CaSO4"``); an unknown
    name is an InputError naming ``field``. Returns the names in database order, each once.
    """
    if exclude is None:
        return []
    items = exclude.split(",") if isinstance(exclude, str) else list(exclude)
    keep = set()
    for item in items:
        if not isinstance(item, str):
            raise InputError(field, item, "solid names (e.g. ['anhydrite', 'polyhalite'])")
        if not item.strip():
            continue
        try:
            keep.add(model.solids.resolve(item.strip()))
        except InputError:
            raise InputError(field, item, f"a solid of the database: {', '.join(model.solids.names)}") from None
    return [n for n in model.solids.names if n in keep]


def candidate_indices(model, exclude_names) -> list | None:
    """Indices of the solids allowed to form (None: all of them)."""
    if not exclude_names:
        return None
    out = set(exclude_names)
    return [k for k, n in enumerate(model.solids.names) if n not in out]
