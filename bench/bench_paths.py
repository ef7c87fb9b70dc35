"""Benchmarks of the process paths (issue: process paths).

Targets: fractional evaporation of seawater to its end point under 0.5 s; a cooling path over
70 °C under 0.2 s.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from bench_equilibrium import SEA  # noqa: E402
from common import median_time, quiet, report  # noqa: E402

import phasekit as pk  # noqa: E402


def main():
    quiet()
    pk.evaporate(SEA, 25.0)
    t = median_time(lambda: pk.evaporate(SEA, 25.0, mode="fractional"), repeat=5)
    report("evaporate: seawater, fractional, to the end point", t, 0.5, "s")
    t = median_time(lambda: pk.evaporate(SEA, 25.0, mode="equilibrium"), repeat=5)
    report("evaporate: seawater, equilibrium, to the end point", t, 0.5, "s")
    hot = pk.default_model().equilibrate({"Na": 8, "K": 5, "Cl": 13}, 90.0).liquid
    t = median_time(lambda: pk.cool(hot, 90.0, 20.0), repeat=7)
    report("cool: NaCl-KCl eutonic brine 90 -> 20 °C", t, 0.2, "s")
    feed = pk.Brine({"Na": 6.0, "K": 4.0, "Cl": 4.0, "NO3": 6.0})
    t = median_time(lambda: pk.hot_cold_cycle(feed, hot_c=75.0, cold_c=20.0), repeat=7)
    print(f"{'hot/cold cycle NaNO3 + KCl, 75 -> 20 °C (no target)':<58s} {t:>12.4g} s")


if __name__ == "__main__":
    main()
