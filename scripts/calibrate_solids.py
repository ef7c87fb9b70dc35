"""Calibrate ln K(T) of the single-salt solids on the 'fit' rows of the binary solubility data.

Reads data/reference/binary_solubility.csv, fits each solid with phasekit.fitting.fit_ln_k
(terms chosen by the number of points), and rewrites the matching rows of data/solids.csv,
marking them "fitted in this project to ...". The 'check' rows are never used here.

Run:  python scripts/calibrate_solids.py [--dry-run]
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from phasekit.data_files import read_csv  # noqa: E402
from phasekit.fitting import fit_ln_k  # noqa: E402
from phasekit.model import Model  # noqa: E402
from phasekit.thermo.database import Database  # noqa: E402


def terms_for(n: int) -> tuple:
    if n >= 5:
        return ("a0", "a3", "a4")
    if n >= 3:
        return ("a0", "a3")
    if n == 2:
        return ("a0", "a3")
    return ("a0",)


def main(dry_run: bool = False) -> None:
    model = Model(Database(ROOT / "data"))
    ref = read_csv("reference/binary_solubility.csv", ROOT / "data")
    fit = ref[ref["role"] == "fit"]
    lines = (ROOT / "data" / "solids.csv").read_text().splitlines()
    header = [ln for ln in lines if ln.startswith("#")]
    table = read_csv("solids.csv", ROOT / "data")
    for solid, rows in fit.groupby("solid", sort=False):
        terms = terms_for(len(rows))
        res = fit_ln_k(solid, rows[["salt", "temp_c", "mass_percent"]], terms=terms, model=model)
        sel = table["solid"] == solid
        for c in ("a0", "a1", "a2", "a3", "a4"):
            table.loc[sel, c] = round(res.parameters.get(c, 0.0), 8)
        lo, hi = rows["temp_c"].min(), rows["temp_c"].max()
        table.loc[sel, "t_min_c"] = lo
        table.loc[sel, "t_max_c"] = hi
        sd = ", ".join(f"{k} ± {v:.2g}" for k, v in res.stderr.items() if v == v)
        table.loc[sel, "source"] = (
            f"fitted in this project to {len(rows)} solubilities {lo:g}–{hi:g} °C of data/reference/"
            f"binary_solubility.csv (role=fit; {rows['source'].iloc[0]}); rms {res.rms:.2g} in ln K"
            + (f"; {sd}" if sd else "")
        )
        print(f"{solid:<14s} n={len(rows):2d} terms={terms} rms={res.rms:.3g} {res.parameters}")
    if not dry_run:
        with open(ROOT / "data" / "solids.csv", "w") as fh:
            fh.write("\n".join(header) + "\n")
            table.to_csv(fh, index=False)


if __name__ == "__main__":
    main(dry_run="--dry-run" in sys.argv)
