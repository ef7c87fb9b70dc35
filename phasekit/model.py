"""The model object of the public API: the activity model plus the solids of one database."""

from __future__ import annotations

from functools import lru_cache

from phasekit.thermo.database import Database
from phasekit.thermo.pitzer import PitzerModel
from phasekit.thermo.solids import SolidSet


class Model(PitzerModel):
    """Activity model and solids of one database (the embedded one by default).

    Parameters
    ----------
    database : Database, optional
        Tables of parameters and solids; the embedded database by default.
    """

    def __init__(self, database: Database | None = None):
        super().__init__(database if database is not None else Database())
        self.solids = SolidSet(self.db.solids, self.species)
        #: names of the database overlays applied (empty for the embedded database)
        self.overlays: list = []

    def with_overlays(self, *overlays) -> Model:
        """A new model with overlay files applied (see :mod:`phasekit.overlay`)."""
        from phasekit.overlay import apply_overlays

        return apply_overlays(self, overlays)

    @property
    def label(self) -> str:
        """Database in use, shown on every result: "embedded database" or the overlays on it."""
        return "embedded database" + (" + overlay " + ", ".join(self.overlays) if self.overlays else "")

    def solid_stoichiometry(self, name: str) -> dict:
        """Ions and hydrate water of a solid, e.g. ``{"K": 1, "Mg": 1, "Cl": 3, "H2O": 6}`` for carnallite."""
        st = self.solids[name].stoichiometry
        return {k: int(v) if float(v).is_integer() else v for k, v in st.items()}

    # the equilibrium layer adds: saturation, vapour_pressure, equilibrate (see phasekit.equilibrium)
    def saturation(self, brine, temp_c: float, **kwargs):
        """Saturation state of every solid; see :func:`phasekit.equilibrium.saturation.saturation`."""
        from phasekit.equilibrium.saturation import saturation

        return saturation(self, brine, temp_c, **kwargs)

    def vapour_pressure(self, brine, temp_c: float):
        """Water vapour pressure of a brine, kPa: its water activity times that of pure water (IAPWS-IF97).

        Returns a :class:`~phasekit.equilibrium.colligative.VapourPressure` (``.pressure_kpa``,
        ``.pure_water_kpa``, ``.water_activity``, ``.warnings``; ``float(result)`` is in kPa); see
        :func:`phasekit.equilibrium.colligative.vapour_pressure` for the errors raised.
        """
        from phasekit.equilibrium.colligative import vapour_pressure

        return vapour_pressure(brine, temp_c, model=self)

    def equilibrate(self, brine, temp_c: float, **kwargs):
        """Stable assemblage; see :func:`phasekit.equilibrium.solver.equilibrate`."""
        from phasekit.equilibrium.solver import equilibrate

        return equilibrate(self, brine, temp_c, **kwargs)


@lru_cache(maxsize=1)
def default_model() -> Model:
    """The model on the embedded database, loaded once and cached."""
    return Model(Database())


def load_model(overlays=()) -> Model:
    """The embedded database with overlay files applied (the embedded model if none).

    ``overlays`` is a list of paths (or of overlays read by :func:`phasekit.overlay.read_overlay`);
    a single path is refused, not read one character at a time.
    """
    from phasekit.validate import paths_or_documents

    overlays = paths_or_documents("overlays", overlays, "overlay files")
    return default_model().with_overlays(*overlays) if overlays else default_model()
