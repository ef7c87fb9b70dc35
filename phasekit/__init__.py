"""phasekit: solid–liquid equilibria of salt brines with the Pitzer model.

The public names are loaded on first use (PEP 562), so that ``import phasekit`` (and the
``phasekit`` command's help) does not pay for numpy, pandas, scipy, numba and the model.
"""

from __future__ import annotations

import importlib

__version__ = "0.1.0"

#: public name -> module that defines it
_WHERE = {
    "Brine": "phasekit.chemistry.brine",
    "isotherm": "phasekit.diagrams",
    "read_diagram": "phasekit.diagrams",
    "reciprocal_isotherm": "phasekit.diagrams",
    "seawater_isotherm": "phasekit.diagrams",
    "ternary_polytherm": "phasekit.diagrams",
    "boiling_point": "phasekit.equilibrium.colligative",
    "freezing_point": "phasekit.equilibrium.colligative",
    "polytherm": "phasekit.equilibrium.solubility",
    "solubility": "phasekit.equilibrium.solubility",
    "ConvergenceError": "phasekit.errors",
    "InputError": "phasekit.errors",
    "PhasekitError": "phasekit.errors",
    "RangeError": "phasekit.errors",
    "ValidityWarning": "phasekit.errors",
    "Model": "phasekit.model",
    "default_model": "phasekit.model",
    "load_model": "phasekit.model",
    "Pond": "phasekit.paths",
    "cool": "phasekit.paths",
    "dissolve": "phasekit.paths",
    "evaporate": "phasekit.paths",
    "heat": "phasekit.paths",
    "hot_cold_cycle": "phasekit.paths",
    "mix": "phasekit.paths",
    "pond_train": "phasekit.paths",
    "programme": "phasekit.paths",
}

__all__ = [
    "Brine",
    "ConvergenceError",
    "InputError",
    "Model",
    "PhasekitError",
    "RangeError",
    "ValidityWarning",
    "Pond",
    "boiling_point",
    "cool",
    "default_model",
    "dissolve",
    "evaporate",
    "freezing_point",
    "heat",
    "hot_cold_cycle",
    "load_model",
    "mix",
    "pond_train",
    "programme",
    "polytherm",
    "solubility",
    "isotherm",
    "read_diagram",
    "reciprocal_isotherm",
    "seawater_isotherm",
    "ternary_polytherm",
]


def __getattr__(name: str):
    where = _WHERE.get(name)
    if where is None:
        try:  # a subpackage (phasekit.thermo, ...) reached as an attribute
            return importlib.import_module(f"{__name__}.{name}")
        except ModuleNotFoundError as exc:
            if exc.name != f"{__name__}.{name}":
                raise
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(where), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
