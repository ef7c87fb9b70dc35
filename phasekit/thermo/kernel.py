"""Compiled (numba) kernel of the Pitzer equations, one composition per row.

The equations are those documented in :mod:`phasekit.thermo.pitzer`; this module
only evaluates them fast. It runs on the CPU; ``NUMBA_DISABLE_JIT=1`` runs the
same code as plain Python (slow, for debugging).
"""

from __future__ import annotations

import math

import numba
import numpy as np

B_DH = 1.2
#: ionic strength (mol/kg) below which a solution is taken as ideal: ln gamma ~ A_phi sqrt(I) < 1e-50 there, and
#: the E-theta' term (divided by I^2) would underflow to a division by zero
ION_IDEAL = 1e-100


@numba.njit(cache=True, inline="always")
def _jfun(x, x0, h, coef, kmax):
    """J(x) and J'(x) from the spline table of ln J against ln x (see etheta.py)."""
    xmin = math.exp(x0)
    xx = x if x > xmin else xmin
    lnx = math.log(xx)
    k = int((lnx - x0) / h)
    if k < 0:
        k = 0
    if k > kmax:
        k = kmax
    dx = lnx - (x0 + k * h)
    c0, c1, c2, c3 = coef[0, k], coef[1, k], coef[2, k], coef[3, k]
    lnj = ((c0 * dx + c1) * dx + c2) * dx + c3
    dlnj = (3.0 * c0 * dx + 2.0 * c1) * dx + c2
    j = math.exp(lnj)
    jp = j * dlnj / xx
    if x < xmin:
        r = x / xmin
        jp = 2.0 * j * r / xmin
        j = j * r * r
    return j, jp


@numba.njit(cache=True, inline="always")
def _etheta(zi, zj, aphi, ion, x0, h, coef, kmax):
    """E-theta and E-theta' of two ions of charges |zi| != |zj| (Pitzer 1975)."""
    si = math.sqrt(ion)
    xij = 6.0 * zi * zj * aphi * si
    xii = 6.0 * zi * zi * aphi * si
    xjj = 6.0 * zj * zj * aphi * si
    jij, jpij = _jfun(xij, x0, h, coef, kmax)
    jii, jpii = _jfun(xii, x0, h, coef, kmax)
    jjj, jpjj = _jfun(xjj, x0, h, coef, kmax)
    e = zi * zj / (4.0 * ion) * (jij - 0.5 * jii - 0.5 * jjj)
    ep = -e / ion + zi * zj / (8.0 * ion * ion) * (xij * jpij - 0.5 * xii * jpii - 0.5 * xjj * jpjj)
    return e, ep


@numba.njit(cache=True, inline="always")
def _gfun(x):
    """g(x), g'(x) of Pitzer's B functions (series near 0) and exp(-x)."""
    ex = math.exp(-x)
    if x < 1e-4:
        return 1.0 - 2.0 * x / 3.0 + x * x / 4.0, -2.0 * x / 3.0 + x * x / 2.0, ex
    x2 = x * x
    return 2.0 * (1.0 - (1.0 + x) * ex) / x2, -2.0 * (1.0 - (1.0 + x + 0.5 * x2) * ex) / x2, ex


@numba.njit(cache=True, inline="always")
def _row(r, m, nc, zc, za, beta0, beta1, beta2, ualpha, ia1, ia2, cc, theta_c, theta_a, psi_c, psi_a,
         aphi, x0, h, coef, kmax, ln_gamma, osmotic, ln_aw, ionic, gex, m_water, gu, gpu, eu):
    """Evaluate the Pitzer model for row ``r`` of ``m`` (N, ns); results written in place.

    ``ualpha`` holds the distinct alpha values; ``ia1[i, a]``, ``ia2[i, a]`` index the pair's
    alpha1 and alpha2 in it (-1: no beta2 term). ``cc`` is C = C^phi / (2 sqrt|z_c z_a|); psi_c[i, j, a],
    psi_a[a, b, c] are symmetric in their first two indices with zero diagonal; theta matrices have
    zero diagonal. ``gu``, ``gpu``, ``eu`` are scratch arrays of the length of ``ualpha``.
    """
    ns = m.shape[1]
    na = ns - nc
    mc = m[r, :nc]
    ma = m[r, nc:]
    ion = 0.0
    zt = 0.0
    sum_m = 0.0
    for i in range(nc):
        ion += 0.5 * mc[i] * zc[i] * zc[i]
        zt += mc[i] * zc[i]
        sum_m += mc[i]
    for a in range(na):
        ion += 0.5 * ma[a] * za[a] * za[a]
        zt += ma[a] * za[a]
        sum_m += ma[a]
    ionic[r] = ion
    if ion <= ION_IDEAL:
        for s in range(ns):
            ln_gamma[r, s] = 0.0
        osmotic[r] = 1.0
        ln_aw[r] = 0.0
        gex[r] = 0.0
        return
    si = math.sqrt(ion)
    bsi = 1.0 + B_DH * si
    fgam = -aphi * (si / bsi + (2.0 / B_DH) * math.log(bsi))
    # functions of alpha sqrt(I), once per distinct alpha (gu, gpu, eu: scratch of the caller)
    nu = ualpha.shape[0]
    for u in range(nu):
        gu[u], gpu[u], eu[u] = _gfun(ualpha[u] * si)
    # E-theta of a 1-2 charge pair, the only unlike pair of the present species set
    e12, e12p = _etheta(1.0, 2.0, aphi, ion, x0, h, coef, kmax)
    # pair terms
    # accumulate the composition-dependent terms in the output row itself
    lnc = ln_gamma[r, :nc]
    lna = ln_gamma[r, nc:]
    for s in range(ns):
        ln_gamma[r, s] = 0.0
    sum_bp = 0.0
    sum_b = 0.0  # Σ m_c m_a (2B + Z C)
    sum_bphi = 0.0  # Σ m_c m_a (B^phi + Z C)
    mx = 0.0  # Σ m_c m_a C
    for i in range(nc):
        for a in range(na):
            b0 = beta0[i, a]
            u1 = ia1[i, a]
            bb = b0 + beta1[i, a] * gu[u1]
            bp = beta1[i, a] * gpu[u1]
            bphi = b0 + beta1[i, a] * eu[u1]
            u2 = ia2[i, a]
            if u2 >= 0:
                bb += beta2[i, a] * gu[u2]
                bp += beta2[i, a] * gpu[u2]
                bphi += beta2[i, a] * eu[u2]
            bp /= ion
            c = cc[i, a]
            t = 2.0 * bb + zt * c
            lnc[i] += ma[a] * t
            lna[a] += mc[i] * t
            w = mc[i] * ma[a]
            sum_bp += w * bp
            sum_b += w * t
            sum_bphi += w * (bphi + zt * c)
            mx += w * c
    # like-sign mixing: theta, E-theta, psi
    sum_phip = 0.0
    sum_phi = 0.0  # Σ_{i<j} m_i m_j Φ
    sum_phiphi = 0.0  # Σ_{i<j} m_i m_j Φ^phi
    sum_psi = 0.0
    for i in range(nc):
        for j in range(i + 1, nc):
            th = theta_c[i, j]
            e = 0.0
            ep = 0.0
            if zc[i] != zc[j]:
                if zc[i] * zc[j] == 2.0:
                    e, ep = e12, e12p
                else:
                    e, ep = _etheta(zc[i], zc[j], aphi, ion, x0, h, coef, kmax)
            phi = th + e
            w = mc[i] * mc[j]
            lnc[i] += 2.0 * mc[j] * phi
            lnc[j] += 2.0 * mc[i] * phi
            sum_phip += w * ep
            sum_phi += w * phi
            sum_phiphi += w * (phi + ion * ep)
            for a in range(na):
                ps = psi_c[i, j, a]
                if ps != 0.0:
                    lnc[i] += mc[j] * ma[a] * ps
                    lnc[j] += mc[i] * ma[a] * ps
                    lna[a] += w * ps
                    sum_psi += w * ma[a] * ps
    for a in range(na):
        for b in range(a + 1, na):
            th = theta_a[a, b]
            e = 0.0
            ep = 0.0
            if za[a] != za[b]:
                if za[a] * za[b] == 2.0:
                    e, ep = e12, e12p
                else:
                    e, ep = _etheta(za[a], za[b], aphi, ion, x0, h, coef, kmax)
            phi = th + e
            w = ma[a] * ma[b]
            lna[a] += 2.0 * ma[b] * phi
            lna[b] += 2.0 * ma[a] * phi
            sum_phip += w * ep
            sum_phi += w * phi
            sum_phiphi += w * (phi + ion * ep)
            for i in range(nc):
                ps = psi_a[a, b, i]
                if ps != 0.0:
                    lna[a] += ma[b] * mc[i] * ps
                    lna[b] += ma[a] * mc[i] * ps
                    lnc[i] += w * ps
                    sum_psi += w * mc[i] * ps
    big_f = fgam + sum_bp + sum_phip
    for i in range(nc):
        lnc[i] += zc[i] * zc[i] * big_f + zc[i] * mx
    for a in range(na):
        lna[a] += za[a] * za[a] * big_f + za[a] * mx
    gex[r] = -aphi * (4.0 * ion / B_DH) * math.log(bsi) + sum_b + 2.0 * sum_phi + sum_psi
    osm_sum = 2.0 * (-aphi * ion * si / bsi + sum_bphi + sum_phiphi + sum_psi)
    osmotic[r] = 1.0 + osm_sum / sum_m
    ln_aw[r] = -m_water * (sum_m + osm_sum)


# The two drivers below are two functions, each compiled (and cached on disk) on its own: numba
# keys its cache by the function, so one function compiled twice with and without parallel=True
# shared one cache entry, and whichever variant was compiled first served both.


@numba.njit(cache=True)
def pitzer_rows_serial(m, nc, zc, za, beta0, beta1, beta2, ualpha, ia1, ia2, cc, theta_c, theta_a, psi_c, psi_a,
                       aphi, x0, h, coef, kmax, ln_gamma, osmotic, ln_aw, ionic, gex, m_water):
    """Every row of ``m`` on the calling thread (few rows: no thread start-up). See :func:`_row`."""
    nu = ualpha.shape[0]
    gu = np.empty(nu)
    gpu = np.empty(nu)
    eu = np.empty(nu)
    for r in range(m.shape[0]):
        _row(r, m, nc, zc, za, beta0, beta1, beta2, ualpha, ia1, ia2, cc, theta_c, theta_a, psi_c, psi_a,
             aphi, x0, h, coef, kmax, ln_gamma, osmotic, ln_aw, ionic, gex, m_water, gu, gpu, eu)


@numba.njit(cache=True, parallel=True)
def pitzer_rows_parallel(m, nc, zc, za, beta0, beta1, beta2, ualpha, ia1, ia2, cc, theta_c, theta_a, psi_c,
                         psi_a, aphi, x0, h, coef, kmax, ln_gamma, osmotic, ln_aw, ionic, gex, m_water,
                         chunk_thread):
    """Every row of ``m``, in ``len(chunk_thread)`` contiguous chunks spread over numba's threads.

    ``chunk_thread[k]`` receives the id of the thread that computed chunk ``k`` (numba.get_thread_id),
    so that a caller (and the tests) can see the work was shared. Each row is computed by the same
    :func:`_row` as in :func:`pitzer_rows_serial`, so both variants give the same numbers.
    """
    n = m.shape[0]
    nchunk = chunk_thread.shape[0]
    nu = ualpha.shape[0]
    for k in numba.prange(nchunk):
        gu = np.empty(nu)
        gpu = np.empty(nu)
        eu = np.empty(nu)
        lo = (n * k) // nchunk
        hi = (n * (k + 1)) // nchunk
        for r in range(lo, hi):
            _row(r, m, nc, zc, za, beta0, beta1, beta2, ualpha, ia1, ia2, cc, theta_c, theta_a, psi_c, psi_a,
                 aphi, x0, h, coef, kmax, ln_gamma, osmotic, ln_aw, ionic, gex, m_water, gu, gpu, eu)
        chunk_thread[k] = numba.get_thread_id()


#: from this many rows on, :class:`~phasekit.thermo.pitzer.PitzerModel` uses the parallel variant
PARALLEL_MIN_ROWS = 256


def chunks_for(n: int) -> int:
    """Number of chunks of the parallel variant for ``n`` rows: a few per thread, for balance."""
    return max(1, min(n, 4 * numba.get_num_threads()))
