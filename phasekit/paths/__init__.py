"""Process paths: evaporation, cooling and heating, mixing, dissolution, pond trains, hot/cold cycles."""

from phasekit.paths.conversion import CycleResult, hot_cold_cycle
from phasekit.paths.evaporation import cool, evaporate, heat, programme
from phasekit.paths.ion_loss import IonLossPoint, ion_loss_point
from phasekit.paths.mixing import dissolve, mix
from phasekit.paths.ponds import Pond, pond_train

__all__ = ["CycleResult", "IonLossPoint", "Pond", "cool", "dissolve", "evaporate", "heat", "hot_cold_cycle",
           "ion_loss_point", "mix", "pond_train", "programme"]
