"""Benchmarks of the dissolution kinetics (issue: dissolution-rate module).

Targets: one solid in 24 size classes dissolved to completion (default model) under 2 s; a
two-solid leach (sylvite + halite, 12 classes each, 10 min residence) under 2 s; one film
driving force from a cold start (default model) under 5 ms. Prints figures only; never part of
the tests. Most of the time goes to the brine density model, called 5–7 times per right-hand
side to turn the film's molarities into molalities.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report  # noqa: E402

from phasekit import kinetics as kin  # noqa: E402
from phasekit.kinetics.properties import BrineVolume  # noqa: E402


def main():
    quiet()
    sizes = kin.lognormal(300, 1.6, n_classes=24)
    run = lambda: kin.dissolve({"sylvite": 0.05}, sizes, {"Na": 2.0, "Cl": 2.0}, water_kg=1.0,  # noqa: E731
                               power_w_kg=0.5)
    run()
    report("dissolve: sylvite, 24 classes, to completion", median_time(run, repeat=3), 2.0, "s")
    ore = {"sylvite": 0.3, "halite": 0.65}
    grains = kin.rosin_rammler(600, 2.0, n_classes=12)
    lch = lambda: kin.leach(1.0, ore, grains, {"Na": 5.9, "Cl": 5.9}, water_kg=2.0,  # noqa: E731
                            residence_s=600.0, power_w_kg=0.5, viscosity_pa_s=1.6e-3)
    report("leach: sylvinite, 2 x 12 classes, 10 min", median_time(lch, repeat=3), 2.0, "s")
    vol = BrineVolume(25.0)
    one = lambda: kin.film_driving_force(kin.equilibrium_saturation_index, {"Na": 5.0, "Cl": 5.0},  # noqa: E731
                                         "sylvite", vol)
    report("film driving force: sylvite in NaCl brine (cold start)", median_time(one, repeat=5, number=20) * 1e3,
           5.0, "ms")


if __name__ == "__main__":
    main()
