"""Figures: plotly for the app, matplotlib / python-ternary for reports."""

from phasekit.plotting.figures import (
    jaenecke_figure,
    polytherm_figure,
    rectangular_figure,
    save_figure,
    ternary_figure,
)
from phasekit.plotting.publication import save_jaenecke, save_polytherm, save_rectangular, save_ternary

__all__ = [
    "jaenecke_figure",
    "polytherm_figure",
    "rectangular_figure",
    "save_figure",
    "save_jaenecke",
    "save_polytherm",
    "save_rectangular",
    "save_ternary",
    "ternary_figure",
]
