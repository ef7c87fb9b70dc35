"""Where the diagram view gets its diagrams and their figures: the library, once per
(system, temperature) for the diagram and once per (system, temperature, coordinates, units)
for its figure, each with the database chosen (:mod:`webapp.database`). Nothing is computed here.

Library functions used (``phasekit.diagrams``, ``phasekit.plotting``): ``isotherm(salts, temp_c)``,
``reciprocal_isotherm(temp_c, anion=...)`` (``"SO4"`` or ``"NO3"``), ``seawater_isotherm(temp_c)``; ``ternary_figure``,
``rectangular_figure(result, units=...)``, ``jaenecke_figure``; the path projections
``plotting.overlay.ternary_path`` and ``projection_path``. They are imported when first used:
if one is missing, :class:`DiagramUnavailable` says so plainly and the view keeps working.
"""

from __future__ import annotations

import importlib
from functools import lru_cache

from webapp import database
from webapp.systems import RECIPROCAL_ANION, get_system


class DiagramUnavailable(Exception):
    """The library does not provide this kind of diagram (yet)."""


def library(module: str, name: str):
    """``<module>.<name>`` of the library, or :class:`DiagramUnavailable`."""
    try:
        fn = getattr(importlib.import_module(module), name)
    except (ImportError, AttributeError):
        raise DiagramUnavailable(f"This diagram is not available yet: this version of the library has no "
                                 f"{module}.{name}.") from None
    return fn


@lru_cache(maxsize=96)
def diagram(system_key: str, temp_c: float, db_key: tuple = (database.EMBEDDED,)):
    """The library's diagram of a system at a temperature with the database of ``db_key``
    (:func:`webapp.database.key_of`; cached, errors are not cached)."""
    system = get_system(system_key)
    model = database.model_by_key(db_key)
    if system.kind == "ternary":
        return library("phasekit.diagrams", "isotherm")(list(system.salts), temp_c=temp_c, model=model)
    if system.kind in RECIPROCAL_ANION:
        return library("phasekit.diagrams", "reciprocal_isotherm")(temp_c=temp_c, anion=RECIPROCAL_ANION[system.kind],
                                                                   model=model)
    return library("phasekit.diagrams", "seawater_isotherm")(temp_c=temp_c, model=model)


@lru_cache(maxsize=96)
def base_figure(system_key: str, temp_c: float, coords: str, units: str, db_key: tuple = (database.EMBEDDED,)) -> dict:
    """The library's figure of the diagram, as a plotly dictionary (cached)."""
    system = get_system(system_key)
    result = diagram(system_key, temp_c, db_key)
    model = database.model_by_key(db_key)
    if system.kind != "ternary":
        fig = library("phasekit.plotting", "jaenecke_figure")(result, model=model)
    elif coords == "triangular":
        fig = library("phasekit.plotting", "ternary_figure")(result, model=model)
    else:
        fig = library("phasekit.plotting", "rectangular_figure")(result, units=units, model=model)
    return fig.to_plotly_json()
