"""phasekit: solid–liquid equilibria of salt brines with the Pitzer model."""

from phasekit.chemistry.brine import Brine
from phasekit.diagrams import isotherm, read_diagram, reciprocal_isotherm, seawater_isotherm, ternary_polytherm
from phasekit.equilibrium.colligative import boiling_point, freezing_point
from phasekit.equilibrium.solubility import polytherm, solubility
from phasekit.errors import ConvergenceError, InputError, PhasekitError, RangeError, ValidityWarning
from phasekit.model import Model, default_model, load_model
from phasekit.paths import Pond, cool, dissolve, evaporate, heat, hot_cold_cycle, mix, pond_train, programme

__version__ = "0.1.0"

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
