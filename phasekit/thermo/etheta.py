"""Higher-order electrostatic mixing terms E-theta and E-theta' (Pitzer 1975).

For two ions i, j of like sign and unlike charge (Pitzer 1975, J. Solution Chem.
4, 249; Pitzer 1991, "Activity Coefficients in Electrolyte Solutions", ch. 3):

    x_ij  = 6 z_i z_j A_phi sqrt(I)
    Etheta_ij  = z_i z_j / (4 I) [J(x_ij) - J(x_ii)/2 - J(x_jj)/2]
    Etheta'_ij = -Etheta_ij / I
                 + z_i z_j / (8 I^2) [x_ij J'(x_ij) - x_ii J'(x_ii)/2 - x_jj J'(x_jj)/2]

with the cluster integral

    J(x) = (1/x) ∫_0^∞ [1 + q + q²/2 - exp(q)] y² dy,   q = -(x/y) exp(-y).

J is computed once by composite Gauss–Legendre quadrature on a grid of ln x and interpolated by a
cubic spline in (ln x, ln J); J' is the exact derivative of that interpolant, so
that the activity coefficients stay the exact derivatives of the excess Gibbs
energy (the consistency tests rely on this).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.interpolate import CubicSpline

_LNX_MIN = np.log(1e-7)
_LNX_MAX = np.log(2e3)


def _bracket(q):
    """1 + q + q²/2 - exp(q), without cancellation for small |q|."""
    out = np.empty_like(q)
    small = np.abs(q) < 0.5
    qs = q[small]
    term = qs**3 / 6.0
    acc = np.zeros_like(qs)
    for k in range(4, 24):
        acc += term
        term = term * qs / k
    out[small] = -acc
    ql = q[~small]
    out[~small] = 1.0 + ql + 0.5 * ql * ql - np.exp(np.maximum(ql, -700.0))
    return out


@lru_cache(maxsize=1)
def _nodes():
    # composite Gauss-Legendre on log-spaced segments of y from 1e-12 to 80
    edges = np.concatenate([[0.0], np.logspace(-12, np.log10(80.0), 400)])
    g, w = np.polynomial.legendre.leggauss(24)
    a, b = edges[:-1, None], edges[1:, None]
    y = (0.5 * (b - a) * g + 0.5 * (b + a)).ravel()
    wy = (0.5 * (b - a) * w).ravel()
    return y, wy


def j_quadrature(x):
    """J(x) by composite Gauss–Legendre quadrature (reference values; array or scalar)."""
    xa = np.atleast_1d(np.asarray(x, dtype=float))
    y, wy = _nodes()
    out = np.empty_like(xa)
    for n, xv in enumerate(xa):
        if xv <= 0.0:
            out[n] = 0.0
            continue
        q = -(xv / y) * np.exp(-y)
        out[n] = np.sum(wy * _bracket(q) * y * y) / xv
    return out if np.ndim(x) else float(out[0])


def j_pitzer_approx(x):
    """Pitzer's (1975) empirical approximation J(x) ≈ x / (4 + 4.581 x^-0.7237 exp(-0.012 x^0.528))."""
    x = np.asarray(x, dtype=float)
    return x / (4.0 + 4.581 * x**-0.7237 * np.exp(-0.0120 * x**0.528))


def lnx_grid() -> np.ndarray:
    """The grid of ln x of the J table."""
    return np.linspace(_LNX_MIN, _LNX_MAX, 360)


def lnj_values(lnx) -> np.ndarray:
    """ln J by quadrature at every ln x of ``lnx``."""
    return np.log(j_quadrature(np.exp(lnx)))


@lru_cache(maxsize=1)
def _spline() -> CubicSpline:
    from phasekit.thermo.tables import stored_values

    lnx = lnx_grid()
    lnj = stored_values("etheta_lnj", lnx)  # precomputed (the same numbers), see phasekit.thermo.tables
    return CubicSpline(lnx, lnj if lnj is not None else lnj_values(lnx))


@lru_cache(maxsize=1)
def jtable():
    """(ln x0, step, spline coefficients (4, K), last piece index) of the J table."""
    sp = _spline()
    x0 = float(sp.x[0])
    h = float(sp.x[1] - sp.x[0])
    return x0, h, np.ascontiguousarray(sp.c), len(sp.x) - 2


def j_function(x):
    """J(x) and J'(x) for an array of x >= 0 (vectorized).

    Evaluates the cubic spline of ln J against ln x on its uniform grid directly
    (the same polynomial pieces as the spline, with less call overhead).
    """
    x = np.asarray(x, dtype=float)
    x0, h, c, kmax = jtable()
    xc = np.clip(x, np.exp(_LNX_MIN), np.exp(_LNX_MAX))
    lnx = np.log(xc)
    k = np.clip(((lnx - x0) / h).astype(np.intp), 0, kmax)
    dx = lnx - (x0 + k * h)
    c0, c1, c2, c3 = c[0, k], c[1, k], c[2, k], c[3, k]
    lnj = ((c0 * dx + c1) * dx + c2) * dx + c3
    dlnj = (3.0 * c0 * dx + 2.0 * c1) * dx + c2
    j = np.exp(lnj)
    jp = j * dlnj / xc
    small = x < np.exp(_LNX_MIN)
    if np.any(small):
        # below the grid J is negligible; continue it as J(x0) (x/x0)², with its exact derivative
        xm = np.exp(_LNX_MIN)
        j0 = j  # J at the clipped point x0 for the small entries
        r = x / xm
        j = np.where(small, j0 * r * r, j)
        jp = np.where(small, 2.0 * j0 * r / xm, jp)
    return j, jp


def etheta(zi: int, zj: int, aphi, ionic_strength):
    """E-theta and E-theta' for ions of charges ``zi``, ``zj`` (same sign).

    Parameters
    ----------
    zi, zj : int
        Charges (sign ignored).
    aphi : float or array
        Debye–Hückel slope A_phi.
    ionic_strength : array
        Ionic strength, mol/kg (> 0).

    Returns
    -------
    (etheta, etheta_prime) : arrays
    """
    zi, zj = abs(zi), abs(zj)
    i = np.asarray(ionic_strength, dtype=float)
    if zi == zj:
        z = np.zeros_like(i)
        return z, z
    sq = np.sqrt(i)
    xij = 6.0 * zi * zj * aphi * sq
    xii = 6.0 * zi * zi * aphi * sq
    xjj = 6.0 * zj * zj * aphi * sq
    jj, jp = j_function(np.stack([xij, xii, xjj]))
    jij, jii, jjj = jj
    jpij, jpii, jpjj = jp
    with np.errstate(divide="ignore", invalid="ignore"):
        e = zi * zj / (4.0 * i) * (jij - 0.5 * jii - 0.5 * jjj)
        ep = -e / i + zi * zj / (8.0 * i * i) * (xij * jpij - 0.5 * xii * jpii - 0.5 * xjj * jpjj)
    e = np.where(i > 0, e, 0.0)
    ep = np.where(i > 0, ep, 0.0)
    return e, ep
