"""Solver sweep: random compositions of the seawater system at 0, 25, 50, 75 and 100 °C.

Prints the convergence rate (every miss with its composition), the iterations (median, 99th
percentile, max) and the worst mass-balance residual (relative, recomputed from the result).

    python bench/sweep.py [N_PER_TEMPERATURE=2000] [WORKERS=2]
"""

from __future__ import annotations

import sys
import time
import warnings
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

TEMPS = (0.0, 25.0, 50.0, 75.0, 100.0)


def compositions(n: int, seed: int):
    """Seawater-type brines, ratios perturbed, concentration factors 0.1–80 (log-uniform)."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(n):
        cf = 10 ** rng.uniform(-1, np.log10(80))
        comp = {"Na": 0.486 * rng.uniform(0.2, 1.8), "K": 0.0106 * rng.uniform(0, 3),
                "Mg": 0.0547 * rng.uniform(0, 3), "Ca": 0.0107 * rng.uniform(0, 3),
                "SO4": 0.0293 * rng.uniform(0, 3)}
        pos = comp["Na"] + comp["K"] + 2 * comp["Mg"] + 2 * comp["Ca"]
        comp["SO4"] = min(comp["SO4"], 0.45 * pos)
        comp["Cl"] = pos - 2 * comp["SO4"]
        out.append({k: v * cf for k, v in comp.items()})
    return out


def run_chunk(args):
    temp_c, comps = args
    import phasekit as pk

    warnings.simplefilter("ignore")
    model = pk.default_model()
    res = []
    for comp in comps:
        try:
            r = model.equilibrate(comp, temp_c)
            liq = dict(r.liquid.molalities)
            worst = 0.0
            for s, total in comp.items():
                solid = sum(n * model.solid_stoichiometry(k).get(s, 0) for k, n in r.solids.items())
                worst = max(worst, abs(r.water_kg * liq.get(s, 0.0) + solid - total) / total)
            res.append((True, r.converged["iterations"], worst, len(r.solids), ""))
        except Exception as exc:  # every miss is reported with its composition
            res.append((False, 0, np.nan, 0, f"{type(exc).__name__}: {exc} | {comp}"))
    return temp_c, res


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 2000
    workers = int(sys.argv[2]) if len(sys.argv) > 2 else 2
    jobs = []
    for i, t in enumerate(TEMPS):
        comps = compositions(n, seed=100 + i)
        for c in range(0, n, 250):
            jobs.append((t, comps[c:c + 250]))
    t0 = time.perf_counter()
    by_t = {t: [] for t in TEMPS}
    with ProcessPoolExecutor(workers) as ex:
        for t, res in ex.map(run_chunk, jobs):
            by_t[t].extend(res)
    wall = time.perf_counter() - t0
    total = sum(len(v) for v in by_t.values())
    print(f"solver sweep: {total} equilibria in {wall:.1f} s ({workers} processes)")
    misses = []
    for t, res in by_t.items():
        ok = [r for r in res if r[0]]
        its = np.array([r[1] for r in ok])
        worst = max((r[2] for r in ok), default=np.nan)
        solids = np.array([r[3] for r in ok])
        print(f"  {t:5.0f} °C: converged {len(ok)}/{len(res)}; iterations median {np.median(its):.0f}, "
              f"p99 {np.percentile(its, 99):.0f}, max {its.max()}; worst mass balance {worst:.1e}; "
              f"solids per brine up to {solids.max()}")
        misses += [(t, r[4]) for r in res if not r[0]]
    print(f"convergence rate: {100 * (total - len(misses)) / total:.3f} %")
    for t, msg in misses[:50]:
        print(f"  MISS at {t:g} °C: {msg[:300]}")


if __name__ == "__main__":
    main()
