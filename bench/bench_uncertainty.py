"""Monte Carlo (issue 20): building a perturbed model, and the onset concentration factor of the
demo intake with 100 and 1,000 samples in this process. Prints medians and the load; asserts nothing.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report  # noqa: E402

import phasekit as pk  # noqa: E402
from phasekit.uncertainty import monte_carlo, onset_predictor, perturbed_model  # noqa: E402

#: invented intake brine of the demo works, mg/kg
INTAKE = {"Na": 10780.0, "K": 399.0, "Mg": 1290.0, "Ca": 412.0, "Cl": 19350.0, "SO4": 2710.0}
PARAMS = [(("theta", "Na", "K"), 0.003), (("psi", "Na", "K", "Cl"), 0.001), (("beta0", "Na", "Cl"), 0.001),
          (("solid", "halite", "a0"), 0.01)]


def main() -> None:
    quiet()
    model = pk.default_model()
    brine = pk.Brine.from_analysis(INTAKE, units="mg/kg")
    specs = [s for s, _ in PARAMS]
    deltas = np.full(len(specs), 1e-3)
    perturbed_model(model, specs, deltas)
    t_model = median_time(lambda: perturbed_model(model, specs, deltas), repeat=7, number=10)
    report("perturbed model (4 parameters), per sample", t_model * 1e3, 1.0, "ms")
    predict = onset_predictor(brine, 25.0)
    monte_carlo(predict, PARAMS, n=10, model=model)
    t100 = median_time(lambda: monte_carlo(predict, PARAMS, n=100, model=model), repeat=3)
    report("Monte Carlo onset, 100 samples, in process", t100, 0.3, "s")
    t1000 = median_time(lambda: monte_carlo(predict, PARAMS, n=1000, model=model), repeat=1)
    report("Monte Carlo onset, 1,000 samples, in process", t1000, 3.0, "s")


if __name__ == "__main__":
    main()
