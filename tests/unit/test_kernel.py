"""The compiled kernel's two variants: really distinct, the parallel one shares its rows among
threads, and both give the same numbers (issue 20). No wall-clock time is asserted."""

import subprocess
import sys

import numba
import numpy as np
import pytest

from phasekit.chemistry.species import M_WATER
from phasekit.thermo import kernel
from phasekit.thermo.etheta import jtable

#: the parallel variant can only be seen sharing work where numba may start two threads
needs_two_threads = pytest.mark.skipif(numba.config.NUMBA_NUM_THREADS < 2, reason="numba has one thread here")


def _arguments(model, n, seed=3):
    rng = np.random.default_rng(seed)
    m = np.zeros((n, len(model.species)))
    for s in ("Na", "K", "Mg", "Ca"):
        m[:, model.index[s]] = rng.uniform(0.0, 2.0, n)
    m[:, model.index["SO4"]] = rng.uniform(0.0, 0.5, n)
    pos = sum(m[:, model.index[s]] * z for s, z in (("Na", 1), ("K", 1), ("Mg", 2), ("Ca", 2)))
    m[:, model.index["Cl"]] = pos - 2 * m[:, model.index["SO4"]]
    m[::97] = 0.0  # some rows of pure water
    p = model.parameters(35.0)
    x0, h, coef, kmax = jtable()
    inputs = (m, len(model.cations), model.zc, model.za, p["beta0"], p["beta1"], p["beta2"], p["ualpha"],
              p["ia1"], p["ia2"], p["C"], p["theta_c"], p["theta_a"], p["psi_c"], p["psi_a"], p["aphi"],
              x0, h, coef, kmax)
    outputs = (np.full_like(m, np.nan), *(np.full(n, np.nan) for _ in range(4)))
    return inputs, outputs


def test_variants_are_two_compiled_functions():
    assert kernel.pitzer_rows_parallel is not kernel.pitzer_rows_serial
    assert kernel.pitzer_rows_parallel.py_func is not kernel.pitzer_rows_serial.py_func
    assert kernel.pitzer_rows_parallel.targetoptions.get("parallel") is True
    assert not kernel.pitzer_rows_serial.targetoptions.get("parallel", False)


@needs_two_threads
def test_parallel_variant_uses_more_than_one_thread(model):
    numba.set_num_threads(2)
    inputs, outputs = _arguments(model, 4000)
    chunk_thread = np.full(8, -1, dtype=np.int64)
    kernel.pitzer_rows_parallel(*inputs, *outputs, M_WATER, chunk_thread)
    assert np.all(chunk_thread >= 0)
    assert len(set(chunk_thread.tolist())) > 1


def test_parallel_and_serial_variants_give_the_same_bits(model):
    inputs, serial = _arguments(model, 1500)
    kernel.pitzer_rows_serial(*inputs, *serial, M_WATER)
    _, parallel = _arguments(model, 1500)
    kernel.pitzer_rows_parallel(*inputs, *parallel, M_WATER, np.zeros(kernel.chunks_for(1500), dtype=np.int64))
    for a, b in zip(serial, parallel):
        assert np.all(np.isfinite(a))
        assert np.array_equal(a, b)
    # and through the model: a block above the parallel size equals the same rows one by one
    m = inputs[0][:300]
    many = model.compute(m, 35.0)
    for r in (0, 1, 150, 299):
        one = model.compute(m[r:r + 1], 35.0)
        for a, b in zip(many, one):
            assert np.array_equal(a[r], b[0])


@needs_two_threads
def test_parallel_variant_still_parallel_when_serial_loads_first():
    """The on-disk cache of the serial variant must not serve the parallel one (and the reverse)."""
    code = (
        "import numba, numpy as np\n"
        "numba.set_num_threads(2)\n"
        "import phasekit as pk\n"
        "from phasekit.thermo import kernel\n"
        "m = pk.default_model()\n"
        "x = np.zeros((3000, len(m.species))); x[:, m.index['Na']] = 1.0; x[:, m.index['Cl']] = 1.0\n"
        "m.compute(x[:5], 25.0)\n"  # the serial variant first
        "from tests.unit.test_kernel import _arguments\n"
        "inputs, outputs = _arguments(m, 3000)\n"
        "ct = np.full(8, -1, dtype=np.int64)\n"
        "from phasekit.chemistry.species import M_WATER\n"
        "kernel.pitzer_rows_parallel(*inputs, *outputs, M_WATER, ct)\n"
        "print(len(set(ct.tolist())))\n"
    )
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=root, check=True)
    assert int(out.stdout.strip().splitlines()[-1]) > 1


def test_vanishing_ionic_strength_is_ideal_not_a_division_by_zero():
    # found by the property test: at I near 1e-224 the E-theta' term (divided by I squared) underflowed to a
    # division by zero inside the compiled kernel
    import phasekit as pk

    model = pk.default_model()
    m = np.zeros((2, len(model.species)))
    m[0, model.index["Na"]] = m[0, model.index["Cl"]] = 1e-224
    m[1, model.index["Mg"]] = 1e-224
    m[1, model.index["Cl"]] = 2e-224
    ln_g, osm, ln_aw, ion, _ = model.compute(m, 0.0)
    assert np.all(ln_g == 0.0) and np.all(osm == 1.0) and np.all(ln_aw == 0.0)
