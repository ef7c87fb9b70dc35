"""Helpers shared by the benchmark scripts: timing and random brines."""

from __future__ import annotations

import os
import time
import warnings

import numpy as np
import pandas as pd


def median_time(fn, repeat: int = 7, number: int = 1) -> float:
    """Median wall time of ``fn()`` in seconds over ``repeat`` runs of ``number`` calls."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        times.append((time.perf_counter() - t0) / number)
    return float(np.median(times))


def seawater_system_compositions(n: int, seed: int = 0) -> pd.DataFrame:
    """Random, charge-balanced Na–K–Mg–Ca–Cl–SO4 compositions (mol/kg water)."""
    rng = np.random.default_rng(seed)
    na = rng.uniform(0, 6, n)
    k = rng.uniform(0, 1, n)
    mg = rng.uniform(0, 3, n)
    ca = rng.uniform(0, 0.3, n)
    pos = na + k + 2 * mg + 2 * ca
    so4 = rng.uniform(0, 0.5, n) * pos / 2
    cl = pos - 2 * so4
    return pd.DataFrame({"Na": na, "K": k, "Mg": mg, "Ca": ca, "Cl": cl, "SO4": so4})


def report(name: str, measured: float, target: float, unit: str, better: str = "lower") -> None:
    """Print one benchmark line: name, measured median, target, and whether it is met."""
    ok = measured <= target if better == "lower" else measured >= target
    print(f"{name:<58s} {measured:>12.4g} {unit:<10s} target {'<=' if better == 'lower' else '>='} "
          f"{target:g} {unit:<10s} {'met' if ok else 'NOT MET'}  (load {load()})")


def load() -> str:
    """The 1-minute load average and the core count, printed beside every figure."""
    return f"{os.getloadavg()[0]:.2f} on {os.cpu_count()} cores"


def quiet():
    warnings.simplefilter("ignore")
