"""Phase diagrams: ternary isotherms, polytherms, reciprocal and halite-saturated projections."""

from phasekit.diagrams.export import LoadedDiagram, read_diagram
from phasekit.diagrams.polytherm import PolythermResult, ternary_polytherm
from phasekit.diagrams.projections import ProjectionResult, reciprocal_isotherm, seawater_isotherm
from phasekit.diagrams.ternary import IsothermResult, isotherm

__all__ = [
    "IsothermResult",
    "LoadedDiagram",
    "PolythermResult",
    "ProjectionResult",
    "isotherm",
    "read_diagram",
    "reciprocal_isotherm",
    "seawater_isotherm",
    "ternary_polytherm",
]
