"""Process paths: evaporation, cooling and heating, mixing, dissolution, pond trains."""

from phasekit.paths.evaporation import cool, evaporate, heat, programme
from phasekit.paths.mixing import dissolve, mix
from phasekit.paths.ponds import Pond, pond_train

__all__ = ["Pond", "cool", "dissolve", "evaporate", "heat", "mix", "pond_train", "programme"]
