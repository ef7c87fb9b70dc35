"""Numerical engine of the diagrams: saturation residuals, Newton's method, continuation.

Every object of a diagram solves a square or nearly square set of saturation equations

    ln(IAP_k / K_k) = Σ_i ν_ki ln(m_i γ_i) + ν_wk ln a_w − ln K_k = 0      (HMW84 eq. 1)

in the unknowns ``z`` of a :class:`~phasekit.diagrams.systems.System`, together with linear
constraints (a side of the diagram, a fixed coordinate):

- an invariant point: as many equations as unknowns, solved by Newton's method;
- a saturation curve or field boundary: one equation fewer than unknowns, traced by
  pseudo-arclength continuation (Keller 1977, in "Applications of Bifurcation Theory",
  Academic Press, 359; Allgower & Georg 1990, "Numerical Continuation Methods", Springer,
  ch. 2): a tangent predictor, a Newton corrector on the curve equations plus the
  arclength condition, and a step that grows when the corrector converges fast and is
  halved when it does not or when the tangent turns too much.

Along a curve, events are watched: another solid reaching saturation (ln SI crossing 0), a
side of the diagram, or the concentration limit. An event is located exactly by adding its
equation to the curve equations and solving the square system by Newton's method from the
linear interpolation between the two points that bracket it.

Jacobians are forward differences, all rows of one Jacobian in one vectorized call of the
activity model (``model.compute`` on ``n + 1`` compositions).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from phasekit.diagrams.systems import FD_H

LN10 = math.log(10.0)
#: Newton convergence: max |residual| (ln SI units; 1e-12 ln = 4e-13 in log10 SI)
TOL = 1e-12
#: an event function above this counts as crossed
EVENT_TOL = 1e-10
#: largest turn of the tangent accepted in one step (cosine)
COS_TURN = math.cos(math.radians(25.0))


@dataclass
class Point:
    """A solved composition: unknowns, molalities, ln SI of every candidate, ln a_w, ionic strength."""

    z: np.ndarray
    m: np.ndarray
    lnsi: np.ndarray
    ln_aw: float
    ionic_strength: float
    jac_all: np.ndarray | None = None  # d lnSI / dz of every candidate (n_cand, n)


@dataclass
class Eqs:
    """Equations: saturation of ``solids`` (local indices) and linear rows ``A z = b``."""

    solids: list
    A: np.ndarray
    b: np.ndarray

    def with_solid(self, j) -> Eqs:
        return Eqs(list(self.solids) + [j], self.A, self.b)

    def with_row(self, c, v) -> Eqs:
        return Eqs(list(self.solids), np.vstack([self.A, c]), np.concatenate([self.b, [v]]))


@dataclass
class TraceEnd:
    """How a traced curve ended: ``solid`` (local index), ``bound`` (index), ``limit``, ``turn`` or ``fail``."""

    kind: str
    index: int
    point: Point


class Evaluator:
    """Saturation state of a system's candidate solids at one temperature (vectorized).

    Parameters
    ----------
    model : Model
    system : System
    temp_c : float
    """

    def __init__(self, model, system, temp_c: float):
        self.model, self.system, self.temp_c = model, system, float(temp_c)
        self.cands = list(system.candidates)
        self.local = {k: i for i, k in enumerate(self.cands)}
        self.names = [model.solids.names[k] for k in self.cands]
        self.nu = model.solids.nu[self.cands]
        self.nw = model.solids.nw[self.cands]
        self.ln_k = model.solids.ln_k(self.temp_c)[self.cands]
        self.nu_t = np.ascontiguousarray(self.nu.T)
        self.imposed = [self.local[k] for k in system.imposed]
        n = system.n
        c, d = system.bound_c, system.bound_d
        es = np.zeros(n)
        es[system.s_index] = -1.0
        self.ev_c = np.vstack([c, es])  # event bounds: ev_c z + ev_d >= 0 (last: s <= s_max)
        self.ev_d = np.concatenate([d, [system.s_range[1]]])
        self.calls = 0

    # ------------------------------------------------------------ evaluation
    def evaluate(self, Z: np.ndarray):
        """(ln SI (N, n_cand), ln a_w (N,), I (N,), m (N, n_species)); NaN rows where m is infeasible."""
        self.calls += 1
        M = self.system.molalities(Z)
        M[(M < 0) & (M > -1e-12)] = 0.0  # rounding on a side of the diagram
        bad = ~(M >= 0).all(axis=1)  # also catches NaN
        Ms = M
        if bad.any():
            Ms = M.copy()
            Ms[bad] = 1e-3
        ln_g, _, ln_aw, ion, _ = self.model.compute(Ms, self.temp_c)
        with np.errstate(divide="ignore"):
            ln_m = np.log(Ms)
        ln_a = np.maximum(ln_m, -1e300) + ln_g  # an absent ion: -1e300, so its solids get about -1e300
        lnsi = ln_a @ self.nu_t + np.outer(ln_aw, self.nw) - self.ln_k
        lnsi[lnsi < -1e200] = -np.inf
        if bad.any():
            lnsi[bad] = np.nan
            ln_aw = np.where(bad, np.nan, ln_aw)
        return lnsi, ln_aw, ion, M

    def point(self, z: np.ndarray, jac: bool = False) -> Point:
        """A :class:`Point` at ``z`` (with the Jacobian of every ln SI if ``jac``)."""
        if jac:
            return self.linearize(z, Eqs([], np.zeros((0, len(z))), np.zeros(0)))[2]
        lnsi, ln_aw, ion, M = self.evaluate(z[None, :])
        return Point(z.copy(), M[0], lnsi[0], float(ln_aw[0]), float(ion[0]))

    def linearize(self, z: np.ndarray, eqs: Eqs):
        """Residual R, Jacobian J of ``eqs`` at ``z``, and the Point (with all ln SI derivatives)."""
        n = len(z)
        D = self.system.fd_directions(z)  # rows: step directions that stay in the domain
        Z = z[None, :] + FD_H * np.vstack([np.zeros(n), D])
        lnsi, ln_aw, ion, M = self.evaluate(Z)
        with np.errstate(invalid="ignore"):
            G = (lnsi[1:] - lnsi[0]) / FD_H  # (n, n_cand): row i = d lnSI / d(direction i)
        if np.count_nonzero(D) == n:  # signed unit directions
            jall = (G * np.diag(D)[:, None]).T
        else:
            with np.errstate(invalid="ignore"):
                jall = np.linalg.solve(D, np.where(np.isfinite(G), G, 0.0)).T
                jall[~np.isfinite(G).all(axis=0)] = np.nan
        s = list(eqs.solids)
        R = np.concatenate([lnsi[0, s], eqs.A @ z - eqs.b])
        J = np.vstack([jall[s], eqs.A])
        pt = Point(z.copy(), M[0], lnsi[0], float(ln_aw[0]), float(ion[0]), jall)
        return R, J, pt

    def residual(self, z: np.ndarray, eqs: Eqs):
        """Residual of ``eqs`` at ``z`` and the Point (one composition, no derivatives)."""
        lnsi, ln_aw, ion, M = self.evaluate(z[None, :])
        R = np.concatenate([lnsi[0, list(eqs.solids)], eqs.A @ z - eqs.b])
        return R, Point(z.copy(), M[0], lnsi[0], float(ln_aw[0]), float(ion[0]))

    def chord(self, z0: np.ndarray, eqs: Eqs, tol: float = TOL, maxit: int = 6):
        """Corrector of the continuation: Newton's method with the Jacobian of the first iterate kept
        (chord iterations; the predictor lands close to the curve, so they converge fast).

        Returns (Point, J, iterations) or None; falls back on :meth:`newton` when the chord stalls.
        """
        z = np.array(z0, dtype=float)
        R, J, pt = self.linearize(z, eqs)
        if not np.all(np.isfinite(R)):
            return None
        nrm = float(np.max(np.abs(R)))
        try:
            lu = np.linalg.inv(J)
        except np.linalg.LinAlgError:
            return None
        for it in range(maxit):
            if nrm < tol:
                return pt, J, it
            zn = z - lu @ R
            Rn, ptn = self.residual(zn, eqs)
            if not np.all(np.isfinite(Rn)):
                break
            nn = float(np.max(np.abs(Rn)))
            if nn > 0.5 * nrm and nn >= tol:
                z, R, pt, nrm = zn, Rn, ptn, nn
                break
            z, R, pt, nrm = zn, Rn, ptn, nn
        if nrm < tol:
            return pt, J, maxit
        sol = self.newton(z, eqs, tol=tol, maxit=8, max_step=1.0)
        if sol is None:
            return None
        return sol[0], sol[1], sol[2] + maxit

    # ----------------------------------------------------------------- Newton
    def newton(self, z0: np.ndarray, eqs: Eqs, tol: float = TOL, maxit: int = 40, max_step: float = 0.5):
        """Solve the square system ``eqs`` from ``z0``; returns (Point, J, iterations) or None."""
        z = np.array(z0, dtype=float)
        R, J, pt = self.linearize(z, eqs)
        if not np.all(np.isfinite(R)):
            return None
        nrm = float(np.max(np.abs(R)))
        for it in range(maxit + 1):
            if nrm < tol:
                return pt, J, it
            if it == maxit:
                return None
            try:
                dz = np.linalg.solve(J, -R)
            except np.linalg.LinAlgError:
                return None
            if not np.all(np.isfinite(dz)):
                return None
            big = float(np.max(np.abs(dz)))
            if big > max_step:
                dz *= max_step / big
            lam = 1.0
            for _ in range(12):
                zn = z + lam * dz
                Rn, Jn, ptn = self.linearize(zn, eqs)
                if np.all(np.isfinite(Rn)):
                    nn = float(np.max(np.abs(Rn)))
                    if nn < tol or nn < (1.0 - 1e-4 * lam) * nrm:
                        break
                lam *= 0.5
            else:
                return None
            z, R, J, pt, nrm = zn, Rn, Jn, ptn, nn
        return None

    # ----------------------------------------------------------- events
    def events(self, pt: Point, watch: list) -> np.ndarray:
        """Event functions at a point (an event has happened where one is > 0)."""
        si = pt.lnsi[watch] if len(watch) else np.zeros(0)
        si = np.where(np.isfinite(si), si, -1e6)
        bd = -(self.ev_c @ pt.z + self.ev_d)
        return np.concatenate([si, bd])

    def _event_eqs(self, eqs: Eqs, watch: list, e: int) -> Eqs:
        if e < len(watch):
            return eqs.with_solid(watch[e])
        j = e - len(watch)
        return eqs.with_row(self.ev_c[j], -self.ev_d[j])

    def _locate(self, eqs, watch, p0: Point, p1: Point, g0, g1, cross, t):
        """Solve the earliest crossed event between p0 and p1; None if it cannot be isolated."""
        idx = np.flatnonzero(cross)
        with np.errstate(divide="ignore", invalid="ignore"):
            theta = np.clip(np.where(g0[idx] < -1e5, 1.0, g0[idx] / (g0[idx] - g1[idx])), 0.0, 1.0)
        span = float(np.linalg.norm(p1.z - p0.z))
        for e in idx[np.argsort(theta, kind="stable")]:
            th = theta[list(idx).index(e)]
            z0 = p0.z + th * (p1.z - p0.z)
            sol = self.newton(z0, self._event_eqs(eqs, watch, int(e)), maxit=30, max_step=max(span, 1e-6))
            if sol is None:
                continue
            pt = sol[0]
            along = float((pt.z - p0.z) @ t)
            if not (-1e-9 <= along <= 1.5 * span + 1e-12):
                continue
            g = self.events(pt, watch)
            others = np.delete(g, e)
            if np.all(others <= EVENT_TOL):
                return int(e), pt
        return None

    def _at_bound(self, eqs, watch, p0: Point, t, hb: float, j: int):
        """The point of the curve on event bound ``j`` (about ``hb`` ahead), if no other event comes first."""
        z0 = p0.z + hb * t
        sol = self.newton(z0, self._event_eqs(eqs, watch, len(watch) + j), maxit=30, max_step=max(hb, 1e-6))
        if sol is None:
            return None
        pt = sol[0]
        if float((pt.z - p0.z) @ t) < -1e-12:
            return None
        g = self.events(pt, watch)
        if np.all(np.delete(g, len(watch) + j) <= EVENT_TOL):
            return pt
        return None

    # ----------------------------------------------------------- tracing
    @staticmethod
    def tangent(J: np.ndarray, t_ref: np.ndarray) -> np.ndarray:
        """Unit null vector of the (n-1, n) Jacobian, oriented along ``t_ref``."""
        _, _, vt = np.linalg.svd(J)
        t = vt[-1]
        if t @ t_ref < 0:
            t = -t
        return t / np.linalg.norm(t)

    def trace(self, start: Point, t_ref: np.ndarray, eqs: Eqs, watch: list, h0: float = 0.01,
              hmax: float = 0.03, hmin: float = 1e-9, max_steps: int = 4000, ionic_strength_stop: float | None = None,
              turn_index: int | None = None, max_length: float | None = None, skip_bounds=()):
        """Trace the curve ``eqs`` from ``start`` in the direction of ``t_ref`` until an event.

        Returns
        -------
        (points, end) : list of Point, TraceEnd
            ``points`` start with ``start`` and end with the event point.
        """
        R, J, p = self.linearize(start.z, eqs)
        t = self.tangent(J, t_ref)
        t_start = t.copy()
        points = [p]
        g = self.events(p, watch)
        keep = np.ones(len(g), dtype=bool)
        for j in skip_bounds:  # sides the curve runs along
            keep[len(watch) + j] = False
        live = (g <= EVENT_TOL) & keep  # events already past at the start are not watched
        h = h0
        length = 0.0
        for _ in range(max_steps):
            # a side of the diagram within the step: land on it and solve it as an event
            rate = self.ev_c @ t
            slack = self.ev_c @ p.z + self.ev_d
            with np.errstate(divide="ignore", invalid="ignore"):
                hb = np.where((rate < -1e-12) & live[len(watch):], slack / -rate, np.inf)
            jb = int(np.argmin(hb))
            if hb[jb] <= h:
                found = self._at_bound(eqs, watch, p, t, float(hb[jb]), jb)
                if found is not None:
                    points.append(found)
                    return points, TraceEnd("bound", jb, found)
                h = 0.5 * float(hb[jb])
                if h < hmin:
                    return points, TraceEnd("fail", -1, p)
            zp = p.z + h * t
            sol = self.chord(zp, eqs.with_row(t, float(t @ zp)))
            ok = sol is not None
            if ok:
                q, Jq, iters = sol
                ok = np.linalg.norm(q.z - zp) < 0.5 * h + 1e-10
            if ok:
                tn = self.tangent(Jq[:-1], t)
                ok = tn @ t > COS_TURN
            if not ok:
                h *= 0.5
                if h < hmin:
                    return points, TraceEnd("fail", -1, p)
                continue
            gn = self.events(q, watch)
            cross = live & (gn > EVENT_TOL)
            if cross.any():
                found = self._locate(eqs, watch, p, q, g, gn, cross, t)
                if found is None:
                    h *= 0.5
                    if h < hmin:
                        return points, TraceEnd("fail", -1, p)
                    continue
                e, pe = found
                points.append(pe)
                if e < len(watch):
                    return points, TraceEnd("solid", int(watch[e]), pe)
                return points, TraceEnd("bound", e - len(watch), pe)
            if turn_index is not None and tn[turn_index] * t_start[turn_index] < 0:
                return points, TraceEnd("turn", -1, p)
            if ionic_strength_stop is not None and q.ionic_strength > ionic_strength_stop:
                points.append(q)
                return points, TraceEnd("limit", -1, q)
            length += float(np.linalg.norm(q.z - p.z))
            points.append(q)
            if max_length is not None and length > max_length:
                return points, TraceEnd("limit", -1, q)
            p, t, g = q, tn, gn
            live = (live | (g <= EVENT_TOL)) & keep
            h = min(h * 1.6, hmax) if iters <= 3 else (h * 0.7 if iters >= 6 else h)
        return points, TraceEnd("fail", -1, p)
