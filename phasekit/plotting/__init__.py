"""Figures: plotly for the app, matplotlib/python-ternary for reports."""
