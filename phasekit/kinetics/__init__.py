"""Dissolution kinetics of salts: how long a salt takes to dissolve, by particle size, agitation
and temperature.

Film theory (rate = k A Δc) with the driving force to saturation from phasekit's equilibrium
model at the current brine composition, Sherwood-number correlations for k, shrinking
particles in size classes, and a batch of brine that approaches saturation.

>>> from phasekit import kinetics as kin                                    # doctest: +SKIP
>>> r = kin.dissolve({"sylvite": 2.0}, kin.sieve([100, 200, 400, 800], [0.3, 0.5, 0.2]),
...                  {"Na": 2.0, "Cl": 2.0}, brine_volume_m3=0.02, temp_c=25, power_w_kg=0.5)
>>> r.history, r.time_to(0.9)

Units: sizes in µm where a distribution is built (``sieve``, ``lognormal`` ...), SI elsewhere
(m, m³, kg, s, W/kg, Pa·s); temperatures in °C; brine compositions in mol/kg water.

Modules: :mod:`~phasekit.kinetics.properties` (water, diffusion coefficients, brine density,
solids), :mod:`~phasekit.kinetics.transfer` (Sherwood correlations),
:mod:`~phasekit.kinetics.saturation` (driving force), :mod:`~phasekit.kinetics.sizes` (size
distributions), :mod:`~phasekit.kinetics.batch` (the batch model).
"""

from phasekit.kinetics.batch import DissolutionResult, dissolve, leach
from phasekit.kinetics.properties import find_solid, salt_diffusivity, water_viscosity
from phasekit.kinetics.saturation import (
    EquilibriumSaturation,
    SolubilityProductSaturation,
    equilibrium_saturation_index,
    film_driving_force,
)
from phasekit.kinetics.sizes import SizeDistribution, lognormal, rosin_rammler, sieve, single
from phasekit.kinetics.transfer import agitation

__all__ = [
    "DissolutionResult",
    "EquilibriumSaturation",
    "SizeDistribution",
    "SolubilityProductSaturation",
    "agitation",
    "dissolve",
    "equilibrium_saturation_index",
    "film_driving_force",
    "find_solid",
    "leach",
    "lognormal",
    "rosin_rammler",
    "salt_diffusivity",
    "sieve",
    "single",
    "water_viscosity",
]
