"""Batch runs: 10,000 analyses (saturation states and first solid on evaporation), 1 and 2 local
workers, and a Dask LocalCluster. Prints figures; asserts nothing.

The analyses are invented, seawater-like brines of the demo solar works in mg/kg: the intake
diluted or concentrated (concentration factor 0.5–4, so that some are past gypsum saturation),
each ion perturbed by a few per cent, with a handful of bad cells that the batch must keep and mark.
"""

from __future__ import annotations

import os
import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from common import median_time, quiet, report  # noqa: E402

from phasekit.batch import run_batch  # noqa: E402

#: invented intake brine of the demo works, mg/kg
INTAKE = {"Na": 10780.0, "K": 399.0, "Mg": 1290.0, "Ca": 412.0, "Cl": 19350.0, "SO4": 2710.0}


def analyses(n: int, seed: int = 7) -> pd.DataFrame:
    """``n`` plausible analyses (text cells, as read from a lab file) with a few bad cells."""
    rng = np.random.default_rng(seed)
    cf = np.exp(rng.uniform(np.log(0.5), np.log(4.0), n))
    cols = {}
    for ion, v in INTAKE.items():
        x = v * cf * rng.normal(1.0, 0.03, n)
        # mg/kg of solution: concentrating the water raises every ion, bounded by the solution mass
        cols[ion] = np.round(x, 1).astype(str)
    df = pd.DataFrame(cols)
    df.insert(0, "sample", [f"Heron-{i:05d}" for i in range(n)])
    bad = rng.choice(n, size=max(n // 2000, 1), replace=False)
    df.loc[bad, "K"] = "n.d."
    return df


def _cpu() -> float:
    """CPU seconds used by this process and its finished children."""
    a, b = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return a.ru_utime + a.ru_stime + b.ru_utime + b.ru_stime


def main() -> None:
    quiet()
    n = 10_000
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "analyses.csv"
        analyses(n).to_csv(path, index=False)
        t0 = time.perf_counter()
        first = run_batch(path, "mg/kg", 25.0)  # includes loading the model (first call in this process)
        print(f"first run, with model loading: {time.perf_counter() - t0:.2f} s; {first.n_failed} rows marked "
              f"as errors; first solids: {first.table['first_solid'].value_counts().to_dict()}")
        c0 = _cpu()
        t1 = median_time(lambda: run_batch(path, "mg/kg", 25.0), repeat=3)
        c1 = _cpu()
        t2 = median_time(lambda: run_batch(path, "mg/kg", 25.0, workers=2), repeat=3)
        c2 = _cpu()
        report("batch 10,000 analyses, 1 worker (this process)", t1, 10.0, "s")
        report("batch 10,000 analyses, 2 local worker processes", t2, 10.0, "s")
        print(f"speed-up 1 -> 2 local workers: {t1 / t2:.2f}x (wall time; CPU time per run {(c1 - c0) / 3:.2f} s "
              f"with 1 worker, {(c2 - c1) / 3:.2f} s with 2: on a machine shared with other work the wall-time "
              "speed-up is below the ratio of CPU times; load average now "
              f"{os.getloadavg()[0]:.1f} on {os.cpu_count()} cores)")
        try:
            from dask.distributed import Client, LocalCluster
        except ImportError:
            print("dask.distributed not installed: LocalCluster figure skipped")
            return
        with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster, \
                Client(cluster) as client:
            t0 = time.perf_counter()
            warm = run_batch(path, "mg/kg", 25.0, scheduler=client)  # workers load the model
            print(f"LocalCluster first run (workers load the model): {time.perf_counter() - t0:.2f} s")
            t3 = median_time(lambda: run_batch(path, "mg/kg", 25.0, scheduler=client), repeat=3)
            report("batch 10,000 analyses, Dask LocalCluster (2 processes)", t3, 10.0, "s")
            same = warm.table.equals(first.table)
            print(f"LocalCluster result identical to the local run: {same}")
            if not same:
                for col in first.table.columns:
                    if not first.table[col].equals(warm.table[col]):
                        print(f"  differs: {col}")


if __name__ == "__main__":
    main()
