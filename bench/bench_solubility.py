"""Benchmark of pk.solubility and pk.polytherm (issue: solids database 0–100 °C).

Targets: one pk.solubility call under 2 ms after warm-up (a temperature not seen before, so
no cached parameters help); a 0–100 °C polytherm of one salt (1 °C steps, transitions located
by root-finding) under 100 ms.
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
    pk.solubility("KCl", 25.0)  # warm-up: database, compiled kernel, A_phi spline
    pk.polytherm("MgSO4")
    temps = iter(range(10**9))

    def one(salt):
        return lambda: pk.solubility(salt, 10.0 + (next(temps) % 8000) * 0.01)

    for salt in ("KCl", "MgSO4", "CaCl2"):
        t = median_time(one(salt), repeat=7, number=50)
        report(f"solubility: one call, {salt} (new temperature each call)", t * 1e3, 2.0, "ms")
    for salt in ("Na2SO4", "MgSO4", "KNO3"):
        t = median_time(lambda s=salt: pk.polytherm(s, 0.0, 100.0, 1.0), repeat=5)
        report(f"polytherm: {salt} 0–100 °C, 1 °C steps", t * 1e3, 100.0, "ms")


if __name__ == "__main__":
    main()
