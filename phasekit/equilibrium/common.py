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
