"""Benchmark of model.activity (issue: foundation).

Targets: 200,000 seawater-system compositions at >= 1,000,000 per second in one
process; a single composition in under 50 µs.
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report, seawater_system_compositions  # noqa: E402

import phasekit as pk  # noqa: E402


def main():
    quiet()
    model = pk.default_model()
    df = seawater_system_compositions(200_000)
    model.activity(df.iloc[:10], 25.0)
    t_batch = median_time(lambda: model.activity(df, 25.0), repeat=5)
    report("activity: 200,000 compositions (compositions/s)", len(df) / t_batch, 1e6, "1/s", "higher")
    one = {"Na": 0.486, "K": 0.0106, "Mg": 0.0547, "Ca": 0.0107, "Cl": 0.5658, "SO4": 0.0293}
    one["Cl"] = one["Na"] + one["K"] + 2 * one["Mg"] + 2 * one["Ca"] - 2 * one["SO4"]
    t_one = median_time(lambda: model.activity(one, 25.0), repeat=7, number=200)
    report("activity: one composition (mapping)", t_one * 1e6, 50, "µs")
    # a straightforward per-composition loop, for the ratio
    rows = df.iloc[:2000].to_dict("records")
    t_loop = median_time(lambda: [model.activity(r, 25.0) for r in rows], repeat=3) / len(rows)
    print(f"{'ratio: per-composition loop / vectorized, per composition':<58s} {t_loop / (t_batch / len(df)):>12.1f} x")


if __name__ == "__main__":
    main()
