"""Benchmarks of the equilibrium layer (issue: brine analyses, saturation states, solver).

Targets: equilibrate of a seawater-type brine concentrated tenfold, median under 5 ms;
saturation of 100,000 brines in one call under 1 s.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report, seawater_system_compositions  # noqa: E402

import phasekit as pk  # noqa: E402

SEA = {"Mg": 0.0547421, "Ca": 0.0106568, "K": 0.0105797, "Cl": 0.5657647, "SO4": 0.0292643}
SEA["Na"] = SEA["Cl"] + 2 * SEA["SO4"] - SEA["K"] - 2 * SEA["Mg"] - 2 * SEA["Ca"]


def main():
    quiet()
    model = pk.default_model()
    ten = {k: 10 * v for k, v in SEA.items()}
    model.equilibrate(ten, 25.0)
    t = median_time(lambda: model.equilibrate(ten, 25.0), repeat=9, number=5)
    report("equilibrate: seawater x10 at 25 °C (median)", t * 1e3, 5, "ms")
    forty = {k: 40 * v for k, v in SEA.items()}
    t40 = median_time(lambda: model.equilibrate(forty, 25.0), repeat=5, number=3)
    print(f"{'equilibrate: seawater x40 at 25 °C, 4 solids (median, no target)':<58s} {t40 * 1e3:>12.4g} ms")
    df = seawater_system_compositions(100_000, seed=3)
    model.saturation(df.iloc[:10], 25.0)
    ts = median_time(lambda: model.saturation(df, 25.0), repeat=5)
    report("saturation: 100,000 brines in one call", ts, 1.0, "s")
    rows = df.iloc[:300]
    t_loop = median_time(lambda: [model.saturation(r.to_dict(), 25.0, amounts=False) for _, r in rows.iterrows()],
                         repeat=3) / len(rows)
    print(f"{'ratio: per-brine saturation loop / one vectorized call, per brine':<58s} "
          f"{t_loop / (ts / len(df)):>12.1f} x")


if __name__ == "__main__":
    main()
