"""The tables shipped precomputed (A_phi, ln J of E-theta) equal freshly computed ones, and the
splines built from them are those built from fresh values (issue 20)."""

import numpy as np
from scipy.interpolate import CubicSpline

from phasekit.thermo import etheta, tables, water


def test_stored_tables_equal_freshly_computed_values():
    fresh = tables.compute_all()
    assert set(fresh) == {"aphi", "aphi_cold", "etheta_lnj"}
    for name, (grid, values) in fresh.items():
        stored = tables.stored_values(name, grid)
        assert stored is not None, f"{name} missing from {tables.PATH.name}: run scripts/precompute_tables.py"
        assert np.all(np.isfinite(values))
        np.testing.assert_array_equal(stored, values, err_msg=f"{name}: run scripts/precompute_tables.py")


def test_splines_in_use_are_built_from_the_stored_values():
    t = np.linspace(-0.5, 150.5, 997)
    grid = water.aphi_grid()
    np.testing.assert_array_equal(water._aphi_spline()(t), CubicSpline(grid, water.aphi_values(grid))(t))
    assert water.aphi(25.0) == CubicSpline(grid, water.aphi_values(grid))(25.0)
    # J at one point agrees with the quadrature to the interpolation error
    x = 1.7
    j, _ = etheta.j_function(np.array([x]))
    assert abs(j[0] / etheta.j_quadrature(x) - 1.0) < 1e-6


def test_a_table_on_another_grid_is_not_used():
    assert tables.stored_values("aphi", water.aphi_grid()[:-1]) is None
    assert tables.stored_values("aphi", water.aphi_grid() + 0.5) is None
    assert tables.stored_values("no such table", water.aphi_grid()) is None
