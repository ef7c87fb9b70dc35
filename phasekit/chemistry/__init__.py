"""Species, formulas, charges and molar masses."""

from phasekit.chemistry.species import (
    SPECIES,
    charge,
    formula_mass,
    molar_mass,
    parse_species,
)

__all__ = ["SPECIES", "charge", "formula_mass", "molar_mass", "parse_species"]
