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
    kernels(model)


def kernels(model):
    """The compiled kernel alone on 1,000,000 rows: the serial and the parallel variant (issue 20)."""
    import numba
    import numpy as np

    from phasekit.chemistry.species import M_WATER
    from phasekit.thermo import kernel
    from phasekit.thermo.etheta import jtable

    big = seawater_system_compositions(1_000_000, seed=1)
    m = np.zeros((len(big), len(model.species)))
    for c in big.columns:
        m[:, model.index[c]] = big[c].to_numpy()
    p = model.parameters(25.0)
    x0, h, coef, kmax = jtable()
    n = len(m)
    out = (np.empty_like(m), np.empty(n), np.empty(n), np.empty(n), np.empty(n))

    def run(fn):
        extra = (np.zeros(kernel.chunks_for(n), dtype=np.int64),) if fn is kernel.pitzer_rows_parallel else ()
        fn(m, len(model.cations), model.zc, model.za, p["beta0"], p["beta1"], p["beta2"], p["ualpha"],
           p["ia1"], p["ia2"], p["C"], p["theta_c"], p["theta_a"], p["psi_c"], p["psi_a"], p["aphi"],
           x0, h, coef, kmax, *out, M_WATER, *extra)

    for name in ("pitzer_rows_serial", "pitzer_rows_parallel"):
        fn = getattr(kernel, name)
        run(fn)
        t = median_time(lambda fn=fn: run(fn), repeat=5)
        report(f"kernel {name}, 1,000,000 rows ({numba.get_num_threads()} threads)", t * 1e3, 1e3, "ms")


if __name__ == "__main__":
    main()
