"""Debye–Hückel slope A_phi against Archer & Wang (1990).

Archer, D. G. & Wang, P. (1990), J. Phys. Chem. Ref. Data 19, 371: A_phi = 0.3915
(kg/mol)^1/2 at 25 °C (value stated in the issue); the 0, 50 and 100 °C values are
from memory of the same paper (0.3767, 0.4102, 0.4606). Tolerance 0.002: Archer & Wang
used their own permittivity equation, phasekit uses the IAPWS 1997 release; the two
formulations differ by up to ~0.3 % in A_phi over 0–100 °C.
"""

import pytest

from phasekit.thermo.water import aphi, aphi_exact, water_density_permittivity

ARCHER_WANG = [(0.0, 0.3767), (25.0, 0.3915), (50.0, 0.4102), (100.0, 0.4606)]


@pytest.mark.validation
@pytest.mark.parametrize("temp_c,expected", ARCHER_WANG)
def test_aphi_against_archer_wang(temp_c, expected):
    assert aphi(temp_c) == pytest.approx(expected, abs=0.002)


@pytest.mark.validation
def test_water_density_and_permittivity_at_25c():
    # IAPWS-95: 997.047 kg/m3 at 25 °C, 0.101325 MPa; IAPWS 1997 permittivity 78.41 (Fernández et al. 1997)
    rho, eps = water_density_permittivity(25.0)
    assert rho == pytest.approx(997.047, abs=0.01)
    assert eps == pytest.approx(78.41, abs=0.02)


def test_spline_reproduces_formulation():
    for t in (0.3, 37.7, 99.9, 133.3):
        assert aphi(t) == pytest.approx(aphi_exact(t), rel=1e-7)


def test_aphi_above_100c_uses_saturation_pressure():
    # liquid water at 150 °C exists only above p_sat = 0.476 MPa: the value must be finite and rising
    assert aphi(100.0) < aphi(125.0) < aphi(150.0) < 0.6
