"""Write the double salts' ln K temperature functions (phasekit.calibration.double_salts).

    python scripts/regress_database.py            # rewrite their rows of data/solids.csv
    python scripts/regress_database.py --dry-run  # report only

Run after scripts/calibrate_solids.py (the estimate adds up the single salts' coefficients that it writes).
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from phasekit.calibration.double_salts import fit_double_salts, load_settings  # noqa: E402
from phasekit.calibration.tables import rewrite_csv  # noqa: E402
from phasekit.errors import ValidityWarning  # noqa: E402
from phasekit.model import Model  # noqa: E402
from phasekit.thermo.database import Database  # noqa: E402

DATA = ROOT / "data"


def main(dry_run: bool = False) -> None:
    model = Model(Database(DATA))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        res = fit_double_salts(model, load_settings(DATA))
    updates = {}
    for solid, co in res.coeffs.items():
        lo, hi = res.ranges[solid]
        old = model.db.solids.set_index("solid").loc[solid, "source"]
        first = old.split(";")[0]
        a0 = first.removeprefix("a0 ").split(" (log K")[0]
        a0_txt = f"a0 {a0} (log K at 25 degC, from memory)" if "Harvie" in a0 else first
        print(f"{solid:<12s} a1..a4 {co[1]:+.4g} {co[2]:+.4g} {co[3]:+.6g} {co[4]:+.6g}   valid {lo:g}-{hi:g} °C")
        updates[(solid,)] = {"a1": float(co[1]), "a2": float(co[2]), "a3": float(co[3]), "a4": float(co[4]),
                             "t_min_c": f"{lo:g}", "t_max_c": f"{hi:g}",
                             "source": f"{a0_txt}; {res.sources[solid]}"}
    if res.regression is not None:
        r = res.regression
        print("\nregression residuals (ln m): before -> after")
        for row in r.residuals.itertuples():
            print(f"   {row.system:<20s} {row.temp_c:6.2f} °C {row.solid:<12s} {row.before:+.4f} -> {row.after:+.4f}"
                  f"  ({row.reference})")
    for note in res.notes:
        print("note:", note)
    if not dry_run:
        n = rewrite_csv(DATA / "solids.csv", ("solid",), updates)
        print(f"wrote data/solids.csv ({n} rows changed)")


if __name__ == "__main__":
    main(dry_run="--dry-run" in sys.argv)
