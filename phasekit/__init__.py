"""phasekit: solid–liquid equilibria of salt brines with the Pitzer model."""

from phasekit.errors import ConvergenceError, InputError, PhasekitError, RangeError, ValidityWarning
from phasekit.equilibrium.solubility import polytherm, solubility
from phasekit.model import Model, default_model

__version__ = "0.1.0"

__all__ = [
    "ConvergenceError",
    "InputError",
    "Model",
    "PhasekitError",
    "RangeError",
    "ValidityWarning",
    "default_model",
    "polytherm",
    "solubility",
]
