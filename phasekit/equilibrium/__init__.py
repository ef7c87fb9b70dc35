"""Saturation indices and the solid–liquid equilibrium solver."""
