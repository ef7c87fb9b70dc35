"""Fit ln K (25 °C) of the lithium double salts to ternary invariant points.

One command regenerates the values this script owns::

    python scripts/calibrate_lithium.py            # rewrite the rows of the fitted solids in data/solids.csv
    python scripts/calibrate_lithium.py --dry-run  # fit and report only

It owns only the rows of :data:`FITTED` (``LiKSO4``, ``LiCl·MgCl2·7H2O``) in ``data/solids.csv``; every
other line of the file is kept as it is (``calibrate_solids.rewrite_csv``). It does not touch the Pitzer
files.

Input: the ``role=fit`` rows of ``data/reference/lithium_invariants.csv``. Each fit row is one invariant
point of a ternary system (mass-% of two salts) and names in ``fitted_solid`` the one solid whose ln K it
fixes: a0 = ln IAP of that solid in the recorded solution, with the activity model of the current database
(ln K does not enter the activities, so this is exact, no iteration). The other solid of the point is not
fitted: its ln IAP - ln K there is printed as a check of the activity model. The ``role=check`` rows are
never read.

Temperature: the data used are at 25 °C only, so ln K is held at its 25 °C value (a1 = a2 = a3 = a4 = 0)
and the validity range is 25 ± 10 K (the convention of the database for values without a temperature
derivative), cut to the range of the system's Pitzer parameters (Li-Cl: 20-40 °C, Li-SO4: 15-35 °C).
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "scripts"))

from calibrate_solids import rewrite_csv, ternary_ln_iap  # noqa: E402

from phasekit.data_files import read_csv  # noqa: E402
from phasekit.errors import ValidityWarning  # noqa: E402
from phasekit.model import Model  # noqa: E402
from phasekit.thermo.database import Database  # noqa: E402

DATA = ROOT / "data"
REF = "data/reference/lithium_invariants.csv"

#: solid -> (t_min_c, t_max_c, note on the range, note on the activity model)
FITTED = {
    "LiKSO4": (15.0, 35.0, "Li-SO4 parameters (15-35 °C)",
               "the Li-SO4 parameters (Pitzer & Mayorga 1973, held at 25 °C) are used to 2.8 mol/kg"),
    "LiCl·MgCl2·7H2O": (20.0, 35.0, "Li-Cl parameters (from 20 °C)",
                        "the Li-Cl parameters (Pitzer & Mayorga 1973, fitted to 6 mol/kg) are extrapolated to "
                        "5-18 mol/kg"),
}


def fit(data_dir: Path = DATA):
    """{solid: (a0, source text, {other solid: ln IAP - ln K})} from the role=fit rows."""
    model = Model(Database(data_dir))
    ref = read_csv("reference/lithium_invariants.csv", data_dir)
    rows = ref[ref["role"] == "fit"]
    out = {}
    for solid in FITTED:
        sel = rows[rows["fitted_solid"] == solid]
        if sel.empty:
            raise SystemExit(f"no role=fit row of {REF} fits {solid}")
        vals, others, txt = [], {}, []
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for _, r in sel.iterrows():
                t = float(r["temp_c"])
                iap, lnk = ternary_ln_iap(model, r)
                vals.append(float(iap[model.solids.index[solid]]))
                for s in str(r["solids"]).split("+"):
                    if s != solid:
                        k = model.solids.index[s]
                        others[f"{s} {t:g} °C"] = float(iap[k] - lnk[k])
                txt.append(f"{r['salt_1']}+{r['salt_2']} {t:g} °C {r['mass_percent_1']:g} % + "
                           f"{r['mass_percent_2']:g} % ({r['solids']}; {r['source']})")
        temps = sorted(set(sel["temp_c"].astype(float)))
        if temps != [25.0]:
            raise SystemExit(f"{solid}: fit rows at {temps} °C; this script fits a 25 °C value only")
        a0 = float(np.mean(vals))
        lo, hi, why, caveat = FITTED[solid]
        other_txt = ", ".join(f"{k} {v:+.2f}" for k, v in others.items())
        src = (f"a0 fitted in this project to {len(sel)} invariant point(s) of {REF} (role=fit: {'; '.join(txt)}) "
               f"by scripts/calibrate_lithium.py: a0 = ln IAP there with the database's activity model (the other "
               f"solid of the point, not fitted, has ln IAP - ln K {other_txt}); held constant with temperature "
               f"(data at 25 °C only), range 25 ± 10 K cut to the {why}. LOW CONFIDENCE: the fit point is "
               f"recalled, and {caveat}")
        out[solid] = (a0, src, others, lo, hi)
    return out


def main(dry_run: bool = False, data_dir: Path = DATA):
    res = fit(data_dir)
    updates = {}
    for solid, (a0, src, others, lo, hi) in res.items():
        print(f"{solid}: ln K(25 °C) = {a0:+.6f} (log K {a0 / np.log(10):+.4f}); not fitted: "
              + ", ".join(f"{k} ln IAP - ln K {v:+.3f}" for k, v in others.items()))
        updates[(solid,)] = {"a0": a0, "a1": 0.0, "a2": 0.0, "a3": 0.0, "a4": 0.0,
                             "t_min_c": f"{lo:g}", "t_max_c": f"{hi:g}", "source": src}
    if not dry_run:
        n = rewrite_csv(data_dir / "solids.csv", ("solid",), updates)
        print(f"wrote data/solids.csv ({n} rows changed)")
    return res


if __name__ == "__main__":
    main(dry_run="--dry-run" in sys.argv)
