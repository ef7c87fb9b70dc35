"""Benchmark of the phase diagrams (issue: phase diagrams).

Targets: a ternary isotherm with all its curves and invariant points in under 0.3 s; the
0–100 °C polytherm of a ternary system (21 temperatures) in under 3 s. Printed, never asserted.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report  # noqa: E402

import phasekit as pk  # noqa: E402


def main():
    quiet()
    for salts in (["NaCl", "KCl"], ["KCl", "MgCl2"], ["K2SO4", "MgSO4"]):
        pk.isotherm(salts, 25.0)  # warm-up (compiled kernel, caches)
        t = median_time(lambda s=salts: pk.isotherm(s, 25.0), repeat=7)
        report(f"isotherm {'–'.join(salts)}–H2O at 25 °C", t, 0.3, "s")
    t = median_time(lambda: pk.isotherm(["KCl", "MgCl2"], 25.0, metastable=True), repeat=5)
    report("isotherm KCl–MgCl2–H2O at 25 °C with metastable extensions", t, 0.3, "s")
    for salts in (["NaCl", "KCl"], ["NaCl", "Na2SO4"]):
        t = median_time(lambda s=salts: pk.ternary_polytherm(s, 0.0, 100.0, 5.0), repeat=3)
        report(f"polytherm {'–'.join(salts)}–H2O 0–100 °C (21 temperatures)", t, 3.0, "s")
    pk.reciprocal_isotherm(25.0)
    t = median_time(lambda: pk.reciprocal_isotherm(25.0), repeat=3)
    print(f"{'reciprocal Na, K // Cl, SO4 at 25 °C (no target)':<58s} {t:>12.4g} s")
    for temp in (25.0, 75.0):
        t = median_time(lambda tc=temp: pk.reciprocal_isotherm(tc, anion="NO3"), repeat=3)
        print(f"{f'reciprocal Na, K // Cl, NO3 at {temp:g} °C (no target)':<58s} {t:>12.4g} s")
    t = median_time(lambda: pk.seawater_isotherm(25.0), repeat=3)
    print(f"{'oceanic salts at halite saturation, 25 °C (no target)':<58s} {t:>12.4g} s")


if __name__ == "__main__":
    main()
