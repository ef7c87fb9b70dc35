"""Water properties, the Pitzer activity model and solid solubility products."""
