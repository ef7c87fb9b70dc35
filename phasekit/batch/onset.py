"""First solid to crystallize on isothermal evaporation, for many brines at once.

Before the first solid forms, evaporating a brine only removes water: the brine at
concentration factor CF (initial water / water now) has the molalities CF·m, and hydrate water
plays no part yet. The first onset is therefore the smallest CF >= 1 at which some solid reaches
SI = 0 on the scaled brine,

    g(s) = max_k [ln IAP_k(e^s m) - ln K_k] = 0,   s = ln CF,

found for every row at once:

1. a scan of s on a uniform grid (step :data:`SCAN_STEP`) up to the CF at which the brine's total
   molality reaches :data:`TOTAL_MOLALITY_MAX`, in blocks, so that rows which have found their
   bracket stop being evaluated;
2. a check for narrow maxima of a solid's ln IAP between grid points (hydrates of very soluble
   salts, whose water activity falls fast, can rise above saturation and fall back within one
   step): where the parabola through three grid values peaks within :data:`PEAK_MARGIN` of
   saturation, the maximum is located by a bounded search and, if it lies above saturation,
   brackets an earlier onset;
3. bisection of g on the bracket, a fixed number of halvings (:data:`N_BISECT`) for every row.

Each row's sequence of evaluations depends on that row alone, never on the other rows of the
same call, so a row gives the same bits whatever the batch it is computed in (local processes or
a Dask cluster, any chunking). The activity model is called in blocks below the size at which it
switches to its multi-threaded kernel, which keeps the work of one process on one core (the
batch runner parallelizes over processes) and makes the calls safe from several threads.

A brine already at or above saturation at CF = 1 is not scanned; its rows are flagged
(``at_start``) for the caller, which equilibrates them (several solids may form at once).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize_scalar

from phasekit.thermo.kernel import PARALLEL_MIN_ROWS

LN10 = math.log(10.0)
#: grid step of the scan, in ln CF (5 % steps in the concentration factor)
SCAN_STEP = 0.05
#: grid points evaluated per row in one block of the scan
SCAN_BLOCK = 8
#: the scan stops where the sum of molalities of the scaled brine reaches this (mol/kg water);
#: 120 is 60 mol/kg of a 1:1 salt, the highest molality searched by the solubility module, far
#: beyond the data of any parameter
TOTAL_MOLALITY_MAX = 120.0
#: a parabola peak within this of saturation (ln units) triggers a search for a narrow maximum
PEAK_MARGIN = 0.25
#: halvings of the bracket: 0.05 / 2**40 ~ 5e-14 in ln CF
N_BISECT = 40
#: rows per call of the activity model (below its multi-threaded size)
EVAL_ROWS = max(PARALLEL_MIN_ROWS - 1, 1)


@dataclass
class Onset:
    """First onset of each row.

    Attributes
    ----------
    solid : ndarray of int
        Index (model solid order) of the first solid; -1 where none (see ``at_start``).
    concentration_factor : ndarray of float
        CF of the onset; NaN where no solid saturates below :data:`TOTAL_MOLALITY_MAX`.
    at_start : ndarray of bool
        The brine is already supersaturated at CF = 1 (max SI above ``si_start``).
    si : ndarray (N, n_solids)
        Saturation indices (log10) of the unscaled brines; -inf where an ion is absent.
    """

    solid: np.ndarray
    concentration_factor: np.ndarray
    at_start: np.ndarray
    si: np.ndarray


def _ln_saturation_block(model, m: np.ndarray, temp_c: float, ln_k: np.ndarray) -> np.ndarray:
    ln_g, _, ln_aw, _, _ = model.compute(m, temp_c)
    with np.errstate(divide="ignore", invalid="ignore"):
        ln_a = np.where(m > 0, np.log(m) + ln_g, -np.inf)
        nu = model.solids.nu
        # elementwise products summed along the last axis: the same operations for a row whatever the
        # number of rows (a matrix product through BLAS may block differently for other shapes)
        terms = np.where(nu[None, :, :] > 0, ln_a[:, None, :] * nu[None, :, :], 0.0)
        return terms.sum(axis=2) + ln_aw[:, None] * model.solids.nw[None, :] - ln_k[None, :]


def ln_saturation(model, m: np.ndarray, temp_c: float) -> np.ndarray:
    """ln IAP - ln K of every solid for rows ``m`` (N, n_species), evaluated in blocks.

    The same quantity as :func:`phasekit.equilibrium.saturation.saturation_indices` (times ln 10),
    computed so that each row's value does not depend on the other rows of the call; -inf where
    one of a solid's ions is absent.
    """
    m = np.ascontiguousarray(m, dtype=float)
    ln_k = np.asarray(model.solids.ln_k(float(temp_c)), dtype=float)
    out = np.empty((m.shape[0], len(model.solids.names)))
    for a in range(0, m.shape[0], EVAL_ROWS):
        out[a:a + EVAL_ROWS] = _ln_saturation_block(model, m[a:a + EVAL_ROWS], temp_c, ln_k)
    # the rule of saturation_indices: ice has no saturation index in a warm brine (its ln K is not
    # extrapolated above its range)
    warm = ~model.solids.has_ions & (float(temp_c) > model.solids.t_range[:, 1] + 0.5)
    if warm.any():
        out[:, warm] = -np.inf
    return out


def _gmax(f: np.ndarray) -> np.ndarray:
    """Max over solids ignoring NaN (rows of all -inf give -inf)."""
    return np.max(np.where(np.isnan(f), -np.inf, f), axis=-1)


def _peak_bracket(model, m_row, temp_c, k, s_a, s_b):
    """Search (s_a, s_b) for a maximum of solid k's ln saturation above zero.

    Returns the s of a point with g >= 0 inside the interval (the upper end of a bracket starting
    at s_a), or None.
    """
    def neg(s):
        return -float(ln_saturation(model, (math.exp(s) * m_row)[None, :], temp_c)[0, k])

    opt = minimize_scalar(neg, bounds=(s_a, s_b), method="bounded", options={"xatol": 1e-9})
    if -opt.fun >= 0.0:
        return float(opt.x)
    return None


def first_onset(model, m: np.ndarray, temp_c: float, si_start: float = 1e-9) -> Onset:
    """First solid and concentration factor on isothermal evaporation of each row of ``m``.

    Parameters
    ----------
    model : Model
    m : ndarray (N, n_species)
        Molalities of electrically neutral brines, model species order.
    temp_c : float
        °C.
    si_start : float
        A row whose largest SI (log10) at CF = 1 exceeds this is flagged ``at_start``
        (1e-9, the threshold at which the equilibrium solver lets a solid enter).

    Returns
    -------
    Onset
    """
    m = np.asarray(m, dtype=float)
    n, ns = m.shape[0], len(model.solids.names)
    h = SCAN_STEP
    f0 = ln_saturation(model, m, temp_c)
    g0 = _gmax(f0)
    solid = np.full(n, -1, dtype=int)
    cf = np.full(n, np.nan)
    at_start = g0 > si_start * LN10
    # saturated within si_start at CF = 1: the onset is the start itself
    start = (g0 >= 0.0) & ~at_start
    solid[start] = np.argmax(np.where(np.isnan(f0[start]), -np.inf, f0[start]), axis=1)
    cf[start] = 1.0
    total = m.sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        s_max = np.where(total > 0, np.log(TOTAL_MOLALITY_MAX / total), -np.inf)
    j_max = np.where(np.isfinite(s_max) & (s_max > 0), np.ceil(s_max / h), 0).astype(int)
    scan = np.flatnonzero((g0 < 0.0) & (j_max > 0))

    lo = np.full(n, np.nan)  # bracket in s: g(lo) < 0 <= g(hi)
    hi = np.full(n, np.nan)
    # the last two grid values of each row (for the parabola check), starting with s = 0
    prev2 = np.full((n, ns), np.nan)
    prev1 = f0.copy()
    j0 = 0  # index of the grid point held in prev1
    active = scan
    peaks: list[tuple[int, int, int]] = []  # (row, solid, centre grid index)
    while active.size:
        nb = SCAN_BLOCK
        j_idx = j0 + 1 + np.arange(nb)  # grid indices of this block
        rows = np.repeat(active, nb)
        s_pts = np.tile(j_idx * h, active.size)
        f_blk = ln_saturation(model, np.exp(s_pts)[:, None] * m[rows], temp_c).reshape(active.size, nb, ns)
        g_blk = _gmax(f_blk)
        within = j_idx[None, :] <= j_max[active][:, None]
        cross = (g_blk >= 0.0) & within
        has = cross.any(axis=1)
        first = np.where(has, cross.argmax(axis=1), nb)  # block position of the first crossing
        # parabola check on triples (j-1, j, j+1) whose centre lies before the crossing
        full = np.concatenate([prev2[active][:, None, :], prev1[active][:, None, :], f_blk], axis=1)
        a, b, c = full[:, :-2, :], full[:, 1:-1, :], full[:, 2:, :]
        centre = j0 + np.arange(nb)  # grid index of b
        with np.errstate(invalid="ignore"):
            curv = 2.0 * b - a - c
            vertex = b + (c - a) ** 2 / (8.0 * np.where(curv > 0, curv, np.nan))
            peak = (b >= a) & (b >= c) & (curv > 0) & (vertex > -PEAK_MARGIN) & np.isfinite(vertex)
        # the centre's right neighbour (j + 1) must be at or before the crossing point and in range
        limit = (j0 + 1 + first)[:, None]  # grid index of the crossing (or past the block)
        peak &= (centre[None, :, None] + 1 <= limit[:, :, None]) & (centre[None, :, None] >= 1)
        peak &= (centre[None, :, None] + 1 <= j_max[active][:, None, None])
        for r_pos, c_pos, k in zip(*np.nonzero(peak)):
            peaks.append((int(active[r_pos]), k.item(), int(centre[c_pos])))
        # brackets of rows that crossed in this block
        rr = active[has]
        jf = j0 + 1 + first[has]
        lo[rr] = (jf - 1) * h
        hi[rr] = jf * h
        # carry the last two grid values of the rows that go on
        go = ~has & (j0 + nb < j_max[active])
        keep = active[go]
        prev2[keep] = f_blk[go, -2, :]
        prev1[keep] = f_blk[go, -1, :]
        active = keep
        j0 += nb
    # narrow maxima: an earlier bracket where a peak rises above saturation
    for row, k, jc in sorted(peaks):
        s_a, s_b = (jc - 1) * h, (jc + 1) * h
        if np.isfinite(lo[row]) and s_a >= lo[row]:
            continue
        top = _peak_bracket(model, m[row], temp_c, k, s_a, s_b)
        if top is not None:
            lo[row], hi[row] = s_a, top
    # bisection of g on every bracket, the same number of halvings for every row
    ref = np.flatnonzero(np.isfinite(lo))
    a_s, b_s = lo[ref], hi[ref]
    for _ in range(N_BISECT):
        if ref.size == 0:
            break
        mid = 0.5 * (a_s + b_s)
        up = _gmax(ln_saturation(model, np.exp(mid)[:, None] * m[ref], temp_c)) >= 0.0
        b_s = np.where(up, mid, b_s)
        a_s = np.where(up, a_s, mid)
    if ref.size:
        f_hi = ln_saturation(model, np.exp(b_s)[:, None] * m[ref], temp_c)
        solid[ref] = np.argmax(np.where(np.isnan(f_hi), -np.inf, f_hi), axis=1)
        cf[ref] = np.exp(b_s)
    return Onset(solid, cf, at_start, f0 / LN10)


def single_solid_equilibrium(model, m: np.ndarray, temp_c: float, si: np.ndarray, n_iter: int = 64):
    """For brines already supersaturated: is the equilibrium assemblage one solid, and which?

    For each row the candidate is the solid the equilibrium solver would let in first (the largest
    SI per formula unit of ions and water, see :mod:`phasekit.equilibrium.solver`). The amount of it
    that brings the row to saturation with it (hydrate water leaving the liquid) is found by
    bisection; if every other solid is then at or below saturation, that single solid with the
    liquid satisfies the conditions of equilibrium and is the answer. Rows where it is not are left
    to the full solver.

    Parameters
    ----------
    m : ndarray (N, n_species)
    si : ndarray (N, n_solids)
        Saturation indices (log10) of the rows.

    Returns
    -------
    (ok, solid) : (ndarray of bool, ndarray of int)
        ``ok`` where the single-solid assemblage is the equilibrium; ``solid`` the candidate.
    """
    from phasekit.chemistry.species import M_WATER

    n = m.shape[0]
    if n == 0:
        return np.zeros(0, dtype=bool), np.zeros(0, dtype=int)
    nu_all, nw_all = model.solids.nu, model.solids.nw
    per_ion = np.where(np.isfinite(si), si, -np.inf) / np.maximum(nu_all.sum(axis=1) + nw_all, 1.0)[None, :]
    k = np.argmax(per_ion, axis=1)
    rows = np.arange(n)
    nu, nw = nu_all[k], nw_all[k]
    with np.errstate(divide="ignore", invalid="ignore"):
        lim = np.where(nu > 0, m / np.where(nu > 0, nu, 1.0), np.inf).min(axis=1)
        lim = np.minimum(lim, np.where(nw > 0, 1.0 / (nw * M_WATER), np.inf))
    a, b = np.zeros(n), lim * (1.0 - 1e-12)

    def liquid(x):
        return np.maximum(m - nu * x[:, None], 0.0) / (1.0 - nw * M_WATER * x)[:, None]

    for _ in range(n_iter):
        x = 0.5 * (a + b)
        f = ln_saturation(model, liquid(x), temp_c)[rows, k]
        up = f > 0.0  # still supersaturated with k: more of it forms
        a, b = np.where(up, x, a), np.where(up, b, x)
    x = 0.5 * (a + b)
    f = ln_saturation(model, liquid(x), temp_c)
    own = f[rows, k]
    f[rows, k] = -np.inf
    others = _gmax(f)
    ok = (x > 0) & (np.abs(own) < 1e-8) & (others <= 1e-9 * LN10)
    return ok, k
