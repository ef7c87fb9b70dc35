"""Properties of liquid water and the Debye–Hückel slope A_phi.

Density from IAPWS-95 (Wagner & Pruß 2002, J. Phys. Chem. Ref. Data 31, 387) and
relative permittivity from the IAPWS 1997 release (Fernández et al. 1997,
J. Phys. Chem. Ref. Data 26, 1125), both through the ``iapws`` package, at
0.101325 MPa, or at the saturation pressure above 100 °C.

A_phi (osmotic Debye–Hückel coefficient, molality scale; Pitzer 1991,
"Activity Coefficients in Electrolyte Solutions", 2nd ed., ch. 3):

    A_phi = (1/3) (2 pi N_A rho_w)^(1/2) (e^2 / (4 pi eps0 eps_r k T))^(3/2)

The formulation is evaluated on a 1 K grid once and interpolated by a cubic
spline (interpolation error below 1e-8, far under the formulation's own).

Below 0 °C (freezing points only) the liquid is supercooled water: IAPWS-95 is stated by
Wagner & Pruß (2002) to extrapolate reasonably into the metastable liquid, and the IAPWS 1997
permittivity covers supercooled water from 238 K; A_phi is evaluated there down to
``T_LIQUID_MIN_C`` on a spline of its own. The vapour pressure of pure water is that of the
IAPWS-IF97 saturation line (Wagner et al. 2000, J. Eng. Gas Turbines Power 122, 150), through
``iapws.IAPWS97(T=..., x=0)``.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from scipy.interpolate import CubicSpline

T_MIN_C = 0.0
T_MAX_C = 150.0
#: lowest temperature (°C) at which the liquid is evaluated: supercooled water, for freezing points only
T_LIQUID_MIN_C = -30.0

_NA = 6.02214076e23  # 1/mol, SI 2019 exact
_E = 1.602176634e-19  # C, exact
_KB = 1.380649e-23  # J/K, exact
_EPS0 = 8.8541878128e-12  # F/m, CODATA 2018


def _pressure_mpa(t_k: float) -> float:
    from iapws.iapws97 import _PSat_T

    p_atm = 0.101325
    if t_k <= 373.124:
        return p_atm
    return max(p_atm, _PSat_T(t_k) * 1.0000001)


def water_density_permittivity(temp_c: float) -> tuple[float, float]:
    """Density (kg/m3) and relative permittivity of liquid water at ``temp_c``.

    Evaluates IAPWS-95 and the IAPWS 1997 permittivity directly (slow, ~ms).
    """
    from iapws import IAPWS95
    from iapws._iapws import _Dielectric

    t_k = temp_c + 273.15
    state = IAPWS95(T=t_k, P=_pressure_mpa(t_k))
    rho = float(state.rho)
    return rho, float(_Dielectric(rho, t_k))


def aphi_exact(temp_c: float) -> float:
    """A_phi in (kg/mol)^(1/2) from the IAPWS formulations, without interpolation."""
    rho, eps = water_density_permittivity(temp_c)
    t_k = temp_c + 273.15
    bjerrum = _E**2 / (4.0 * np.pi * _EPS0 * eps * _KB * t_k)  # m
    return float((1.0 / 3.0) * np.sqrt(2.0 * np.pi * _NA * rho) * bjerrum**1.5)


def aphi_grid() -> np.ndarray:
    """The 1 K grid (°C) of the A_phi spline of the liquid from 0 °C."""
    return np.arange(T_MIN_C - 1.0, T_MAX_C + 2.0, 1.0)


def aphi_cold_grid() -> np.ndarray:
    """The 1 K grid (°C) of the A_phi spline of supercooled water."""
    return np.arange(T_LIQUID_MIN_C - 1.0, T_MIN_C + 2.0, 1.0)


def aphi_values(grid) -> np.ndarray:
    """A_phi from the IAPWS formulations at every temperature of ``grid`` (°C)."""
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # iapws says "Using extrapolated values" for the metastable liquid
        return np.array([aphi_exact(t) for t in grid])


def _grid_spline(name: str, grid: np.ndarray) -> CubicSpline:
    from phasekit.thermo.tables import stored_values

    values = stored_values(name, grid)  # precomputed (the same numbers), see phasekit.thermo.tables
    return CubicSpline(grid, values if values is not None else aphi_values(grid))


@lru_cache(maxsize=1)
def _aphi_spline() -> CubicSpline:
    return _grid_spline("aphi", aphi_grid())


@lru_cache(maxsize=1)
def _aphi_cold_spline() -> CubicSpline:
    return _grid_spline("aphi_cold", aphi_cold_grid())


def aphi(temp_c):
    """Debye–Hückel slope A_phi (kg/mol)^(1/2) at ``temp_c`` (°C), scalar or array.

    Temperatures below 0 °C (down to ``T_LIQUID_MIN_C``) are those of supercooled water.
    """
    t = np.asarray(temp_c, dtype=float)
    if t.size and float(np.min(t)) < T_MIN_C - 0.5:
        out = np.where(t < T_MIN_C, _aphi_cold_spline()(t), _aphi_spline()(t))
        return out if t.ndim else float(out)
    return _aphi_spline()(temp_c)


def saturation_pressure_kpa(temp_c: float) -> float:
    """Vapour pressure of pure water (kPa) at ``temp_c`` (°C, 0 to 350), IAPWS-IF97 saturation line.

    Raises
    ------
    RangeError
        A temperature outside 0–350 °C (or not a number).
    """
    from iapws import IAPWS97

    from phasekit.errors import RangeError

    try:
        t = float(temp_c)
    except (TypeError, ValueError):
        raise RangeError("temp_c", temp_c, "a temperature from 0 to 350 °C") from None
    if not (math.isfinite(t) and 0.0 <= t <= 350.0):
        raise RangeError("temp_c", temp_c, "a temperature from 0 to 350 °C")
    return float(IAPWS97(T=t + 273.15, x=0).P) * 1000.0
