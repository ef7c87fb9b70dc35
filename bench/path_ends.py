"""How crystallization paths end: random Na–K–Mg–Ca–Li–Cl–SO4–NO3 brines at 0–100 °C, both modes.

Every path must return a result (complete, or partial with its stop reason). Prints the count of
each stop reason per mode, the paths whose mass balance misses 1e-10 (relative, recomputed from
the step table and the precipitated amounts), the steps beyond the ionic-strength limit (there
must be none: the paths are run with the default validity stop), any path that raised, and the
time per path. Not part of ``bench/run`` (it takes minutes); the tests run a seeded subset of
the same brines (``tests/unit/test_path_ends.py``).

    python bench/path_ends.py [N_BRINES=500] [WORKERS=2] [SEED=16]
"""

from __future__ import annotations

import sys
import time
import warnings
from collections import Counter
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

CATIONS = {"Na": 1, "K": 1, "Mg": 2, "Ca": 2, "Li": 1}
ANIONS = {"SO4": 2, "NO3": 1}


def random_brines(n: int, seed: int) -> list:
    """(brine molalities, temp_c) pairs: each ion present with probability 0.7 (Na and Cl always),
    molalities log-uniform from 1e-3 to 1 mol/kg (Ca to 0.05), Cl balancing the charge, the brine
    scaled down where its ionic strength exceeds 8 mol/kg; temperature uniform 0–100 °C. The same
    definition is in tests/unit/test_path_ends.py."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(n):
        comp = {}
        for ion in CATIONS:
            if ion == "Na" or rng.random() < 0.7:
                hi = 0.05 if ion == "Ca" else 1.0
                comp[ion] = float(10 ** rng.uniform(-3, np.log10(hi)))
        pos = sum(CATIONS[i] * v for i, v in comp.items())
        for ion in ANIONS:
            if rng.random() < 0.7:
                comp[ion] = float(10 ** rng.uniform(-3, 0))
        neg = sum(ANIONS[i] * comp.get(i, 0.0) for i in ANIONS)
        if neg > 0.8 * pos:  # leave room for chloride
            for i in ANIONS:
                if i in comp:
                    comp[i] *= 0.8 * pos / neg
            neg = 0.8 * pos
        comp["Cl"] = pos - neg
        ionic = 0.5 * sum(v * (CATIONS.get(i) or ANIONS.get(i) or 1) ** 2 for i, v in comp.items())
        if ionic > 8.0:
            comp = {i: v * 8.0 / ionic for i, v in comp.items()}
        out.append((comp, float(rng.uniform(0.0, 100.0))))
    return out


def balance_residual(model, res, initial: dict) -> float:
    """Largest relative mass-balance residual (ions and water) over the steps of a path."""
    from phasekit.chemistry.species import M_WATER

    steps, prec = res.steps, res.precipitated
    stoich = {c: model.solid_stoichiometry(c) for c in prec.columns}
    w = steps["liquid_water_kg"].to_numpy()
    worst = 0.0
    for s, total in initial.items():
        solid = sum(prec[c].to_numpy() * stoich[c].get(s, 0) for c in prec.columns)
        worst = max(worst, float(np.max(np.abs(w * steps[s].to_numpy() + solid - total) / total)))
    hyd = sum(prec[c].to_numpy() * stoich[c].get("H2O", 0) for c in prec.columns) * M_WATER
    worst = max(worst, float(np.max(np.abs(w + hyd + steps["water_removed_fraction"].to_numpy() - 1.0))))
    return worst


def run_one(args):
    comp, temp_c, mode = args
    import phasekit as pk

    warnings.simplefilter("ignore")
    model = pk.default_model()
    t0 = time.perf_counter()
    try:
        res = pk.evaporate(pk.Brine(comp), temp_c=temp_c, mode=mode)
    except Exception as exc:  # every path must return a result: a raise is a miss, reported
        return {"mode": mode, "reason": f"raised {type(exc).__name__}", "error": f"{exc} | {comp} at {temp_c:.3g} °C",
                "time": time.perf_counter() - t0}
    dt = time.perf_counter() - t0
    i_max = model.db.ionic_strength_max
    return {"mode": mode, "reason": res.stop_reason, "complete": res.complete, "time": dt,
            "balance": balance_residual(model, res, comp),
            "beyond": int(np.sum(res.steps["ionic_strength"].to_numpy() > i_max * (1 + 1e-9))),
            "events": len(res.events), "transitions": int((res.events["point"] == "transition point").sum()),
            "detail": res.end_point if res.stop_reason == "failure" else "", "brine": comp, "temp_c": temp_c}


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 500
    workers = int(sys.argv[2]) if len(sys.argv) > 2 else 2
    seed = int(sys.argv[3]) if len(sys.argv) > 3 else 16
    jobs = [(c, t, mode) for c, t in random_brines(n, seed) for mode in ("fractional", "equilibrium")]
    t0 = time.perf_counter()
    with ProcessPoolExecutor(workers) as ex:
        out = list(ex.map(run_one, jobs, chunksize=4))
    wall = time.perf_counter() - t0
    print(f"{n} random brines (seed {seed}), {len(jobs)} evaporation paths, {workers} workers, {wall:.0f} s wall")
    for mode in ("fractional", "equilibrium"):
        rows = [r for r in out if r["mode"] == mode]
        counts = Counter(r["reason"] for r in rows)
        times = np.array([r["time"] for r in rows])
        print(f"\n{mode}: stop reasons")
        for reason, k in counts.most_common():
            print(f"  {reason:20s} {k:5d}")
        ok = [r for r in rows if "balance" in r]
        print(f"  paths with a transition point: {sum(r['transitions'] > 0 for r in ok)}")
        print(f"  worst mass-balance residual: {max((r['balance'] for r in ok), default=float('nan')):.2e}")
        print(f"  steps beyond the ionic-strength limit: {sum(r['beyond'] for r in ok)}")
        print(f"  time per path: median {np.median(times):.2f} s, 95th percentile {np.percentile(times, 95):.2f} s, "
              f"max {times.max():.2f} s")
    bad = [r for r in out if "balance" not in r or r["balance"] > 1e-10 or r["beyond"]]
    for r in bad:
        print("MISS", r)
    for r in out:
        if r.get("reason") == "failure":
            print(f"failure ({r['mode']}): {r['detail']} | {r['brine']} at {r['temp_c']:.3g} °C")


if __name__ == "__main__":
    main()
