"""Thermodynamic consistency of the activity model with its own excess Gibbs energy.

ln γ_i = ∂(G^ex/RT w)/∂m_i and ln a_w = -M_w Σm + M_w (g - Σ m_i ∂g/∂m_i)
(Pitzer 1991, ch. 3); checked by central differences (truncation error ~h²).
"""

import numpy as np
import pytest

from phasekit.chemistry.species import M_WATER

COMPOSITIONS = [
    {"Na": 6.0, "Cl": 6.0},
    {"Mg": 2.0, "SO4": 2.0},
    {"Na": 0.486, "K": 0.0106, "Mg": 0.0547, "Ca": 0.0107, "Cl": 0.5658, "SO4": 0.0293},
    {"Na": 2.0, "K": 1.0, "Mg": 3.0, "Ca": 0.1, "Li": 0.5, "Cl": 8.0, "SO4": 1.0, "NO3": 0.7},
    {"K": 3.0, "Mg": 4.5, "Cl": 10.0, "SO4": 1.0},
]


def _array(model, comp):
    m = np.zeros((1, len(model.species)))
    for s, v in comp.items():
        m[0, model.index[s]] = v
    return m


@pytest.mark.parametrize("comp", COMPOSITIONS)
@pytest.mark.parametrize("temp_c", [0.0, 25.0, 90.0])
def test_ln_gamma_is_derivative_of_excess_gibbs(model, comp, temp_c):
    m = _array(model, comp)
    ln_g, osm, ln_aw, ion, g = model.compute(m, temp_c)
    ns = m.shape[1]
    h = 1e-5
    rows = np.repeat(m, 2 * ns, axis=0)
    for k in range(ns):
        rows[2 * k, k] += h
        rows[2 * k + 1, k] -= h
    gg = model.compute(rows, temp_c)[4]
    deriv = (gg[0::2] - gg[1::2]) / (2 * h)
    scale = np.maximum(np.abs(ln_g[0]), 1e-2)
    assert np.max(np.abs(deriv - ln_g[0]) / scale) < 1e-6
    # water: osmotic relation and ln a_w
    sum_m = m.sum()
    assert (osm[0] - 1) * sum_m == pytest.approx(float(m[0] @ ln_g[0] - g[0]), rel=1e-10, abs=1e-12)
    ln_aw_gd = -M_WATER * sum_m + M_WATER * (g[0] - float(m[0] @ deriv))
    assert ln_aw[0] == pytest.approx(ln_aw_gd, rel=1e-6)


def test_gibbs_duhem_along_a_dilution(model):
    """Σ m_i d ln γ_i = -d(Σm (φ - 1))... in integrated form: n_w d ln a_w + Σ n_i d ln a_i = 0."""
    comp = COMPOSITIONS[3]
    base = _array(model, comp)
    f = np.linspace(0.9, 1.1, 3)
    rows = base * f[:, None]
    ln_g, osm, ln_aw, ion, g = model.compute(rows, 25.0)
    ln_a = ln_g + np.log(rows)
    d_ln_a = (ln_a[2] - ln_a[0])
    d_ln_aw = ln_aw[2] - ln_aw[0]
    # per kg water: (1/M_w) d ln a_w + Σ m_i d ln a_i = 0, with m at the midpoint (second-order accurate)
    resid = d_ln_aw / M_WATER + float(rows[1] @ d_ln_a)
    assert abs(resid) < 1e-3 * float(rows[1] @ np.abs(d_ln_a))
