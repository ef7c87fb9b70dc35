"""The model object of the public API: activity model plus solids."""

from __future__ import annotations

from functools import lru_cache

from phasekit.thermo.database import Database
from phasekit.thermo.pitzer import PitzerModel


class Model(PitzerModel):
    """Activity model and solids of one database (the embedded one by default)."""


@lru_cache(maxsize=1)
def default_model() -> Model:
    """The model on the embedded database, loaded once and cached."""
    return Model(Database())
