"""Fit halite's ln K(T) to a published solubility correlation and save it as an example overlay.

    python scripts/make_example_overlay.py            # rewrite the two files below
    python scripts/make_example_overlay.py --dry-run  # fit and report only

Data: Potter, Babcock & Brown 1977, "A new method for determining the solubility of salts in
aqueous solutions at elevated temperatures", J. Res. U.S. Geol. Survey 5, 389-395: the solubility
of NaCl, w = 26.218 + 0.0072 t + 0.000106 t^2 (mass-% NaCl, t in degC, 0-800 degC; +-0.05; read in the
abstract on the USGS publications page, as data/reference/measured_binaries.csv says),
fitted by them to their own and earlier measurements. The table is that correlation at 0-100 degC
every 10 degC (data/reference/halite_solubility_pbb1977.csv). The fit (phasekit.fitting.fit_ln_k,
terms a0, a3, a4, with the embedded Pitzer parameters of NaCl) is written as the overlay
data/overlays/halite_pbb1977.toml, an example of the user's own data: it is never applied unless
asked for (``pk.load_model(overlays=[...])``, ``phasekit ... --overlay FILE``).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from phasekit.fitting import fit_ln_k  # noqa: E402
from phasekit.overlay import overlay_from_fit  # noqa: E402

TABLE = ROOT / "data" / "reference" / "halite_solubility_pbb1977.csv"
OVERLAY = ROOT / "data" / "overlays" / "halite_pbb1977.toml"
SOURCE = ("Potter, Babcock & Brown 1977, J. Res. U.S. Geol. Survey 5, 389: w(NaCl) = 26.218 + 0.0072 t + "
          "0.000106 t^2 mass-% (read in the abstract, USGS publications page), at 0-100 degC")


def table() -> pd.DataFrame:
    t = np.arange(0.0, 101.0, 10.0)
    w = 26.218 + 0.0072 * t + 0.000106 * t**2
    return pd.DataFrame({"salt": "NaCl", "temp_c": t, "mass_percent": np.round(w, 3), "source": SOURCE})


def main(argv) -> int:
    data = table()
    fit = fit_ln_k("halite", data, terms=("a0", "a3", "a4"))
    print(f"halite ln K fit to {fit.n_points} points: rms {fit.rms:.2e}, dof {fit.dof}")
    for k, v in fit.parameters.items():
        print(f"  {k} = {v:.6g} ± {fit.stderr[k]:.2g}")
    if "--dry-run" in argv:
        return 0
    header = ("# Solubility of NaCl (halite) in water, 0-100 degC, from the correlation of " + SOURCE + ".\n"
              "# Written by scripts/make_example_overlay.py; fitted into data/overlays/halite_pbb1977.toml.\n")
    TABLE.write_text(header + data.to_csv(index=False))
    overlay_from_fit(fit, OVERLAY, name="halite after Potter, Babcock & Brown 1977 (example)",
                     source="fitted in this project (scripts/make_example_overlay.py) to " + SOURCE,
                     solid="halite", t_range=(0.0, 100.0))
    print(f"wrote {TABLE.relative_to(ROOT)} and {OVERLAY.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
