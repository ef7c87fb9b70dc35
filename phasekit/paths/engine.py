"""Stepping engine of the process paths, with exact location of phase changes.

A path is a programme of temperature and water removal, linear between nodes
(temp_c, water_removed_fraction); water_removed_fraction is the mass of water evaporated per
kg of the initial brine's water. Along each segment the equilibrium is solved step by step
(warm-started); when the assemblage changes within a step, the change is located by
root-finding (scipy.optimize.brentq) on the saturation index of the entering solid, or on
the amount of the leaving solid, computed with the previous assemblage held fixed — so every
onset lands exactly on its point instead of on a grid.

Modes: ``fractional`` — solids are harvested as they form (a pond that is cleared; the liquid
follows its own path); ``equilibrium`` — solids stay in contact with the liquid and may
redissolve or react (a closed basin).
"""

from __future__ import annotations

import warnings
from dataclasses import replace

import numpy as np
from scipy.optimize import brentq

from phasekit.equilibrium.solver import _newton, _si, solve_robust
from phasekit.errors import InputError, ValidityWarning

DW_MAX = 0.03  # largest relative change of liquid water per step
DT_MAX = 2.0  # largest temperature change per step, °C
W_DRY = 1e-5  # kg liquid water per kg initial water below which the brine counts as dry


class _Path:
    def __init__(self, model, b, water, nodes, mode, stop_when=None):
        self.model = model
        self.nodes = nodes
        self.mode = mode
        self.stop_when = stop_when
        self.b = np.array(b, dtype=float)
        self.W = float(water)
        self.harvest = np.zeros(len(model.solids.names))
        self.records = []
        self.events = []

    # ----------------------------------------------------------- one state
    def _at(self, seg, u, base, warm):
        (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
        t = t0 + u * (t1 - t0)
        r = r0 + u * (r1 - r0)
        water = base["W"] - (r - base["r"])
        if water <= 0:
            raise _Dry()
        st = solve_robust(self.model, base["b"], water, t, warm=warm)
        return st, t, r, water

    def _fixed(self, seg, u, base, act, warm):
        """State with the assemblage ``act`` held fixed (None if Newton fails)."""
        (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
        t = t0 + u * (t1 - t0)
        r = r0 + u * (r1 - r0)
        water = base["W"] - (r - base["r"])
        sol = _newton(self.model, base["b"], water, t, act, warm.m, warm.w, warm.n)
        if sol is None:
            return None, t
        return sol, t

    # ------------------------------------------------------------ record
    def _record(self, st, t, r, water):
        m = self.model
        present = {k for k in st.active if st.n[k] > 0}
        amounts = self.harvest + st.n if self.mode == "fractional" else st.n.copy()
        self.records.append({"t": t, "r": r, "m": st.m.copy(), "w": st.w, "amounts": np.maximum(amounts, 0.0),
                             "solids": "+".join(m.solids.names[k] for k in sorted(present))})

    def _event(self, k, kind, st, t, r):
        self.events.append({"solid": self.model.solids.names[k], "event": kind, "t": t, "r": r,
                            "m": st.m.copy(), "w": st.w})

    # -------------------------------------------------------------- march
    def run(self):
        m = self.model
        base = {"b": self.b.copy(), "W": self.W, "r": self.nodes[0][1]}
        st, t, r, water = self._at(0, 0.0, base, None)
        for k in sorted(st.active):
            if st.n[k] > 0:
                self._event(k, "appears", st, t, r)
        self._record(st, t, r, water)
        if self._invariant(st, base, 0):
            raise InputError("brine", "already at its end point",
                             "a brine whose evaporation or cooling path has not reached an invariant brine "
                             f"(present: {', '.join(m.solids.names[k] for k in st.active)})")
        base = self._harvest(st, base, r)
        if self.mode == "fractional":
            st = replace(st, n=np.zeros_like(st.n))
        end = "end of the programme"
        try:
            for seg in range(len(self.nodes) - 1):
                if seg > 0:
                    base["r"] = self.nodes[seg][1]
                u = 0.0
                (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
                while u < 1.0 - 1e-12:
                    du_t = DT_MAX / abs(t1 - t0) if t1 != t0 else np.inf
                    du_r = DW_MAX * max(st.w, W_DRY) / (r1 - r0) if r1 > r0 else np.inf
                    du = min(du_t, du_r, 1.0 - u)
                    u_new = u + du
                    try:
                        st_new, t_new, r_new, water = self._at(seg, u_new, base, st)
                    except _Dry:
                        end = "drying point"
                        raise
                    old = {k for k in st.active}
                    new = {k for k in st_new.active}
                    if new != old:
                        u_ev, st_ev, t_ev, ks = self._locate(seg, u, u_new, base, st, st_new, old, new)
                        if u_ev is not None:
                            r_ev = r0 + u_ev * (r1 - r0)
                            for k, kind in ks:
                                self._event(k, kind, st_ev, t_ev, r_ev)
                            self._record(st_ev, t_ev, r_ev, None)
                            base = self._harvest(st_ev, base, r_ev)
                            # continue from the event point with the new assemblage
                            act = tuple(sorted((set(st_ev.active) | {k for k, kd in ks if kd == "appears"})
                                               - {k for k, kd in ks if kd == "disappears"}))
                            keep = np.where(st_ev.n > 0, st_ev.n, 0.0)
                            st = replace(st_ev, n=keep if self.mode == "equilibrium" else np.zeros_like(keep),
                                         active=act)
                            u = u_ev
                            if self._stop(st, base, seg):
                                end = self._end_text(st, base)
                                raise _Stop()
                            continue
                        for k in sorted(new - old):
                            self._event(k, "appears", st_new, t_new, r_new)
                        for k in sorted(old - new):
                            self._event(k, "disappears", st_new, t_new, r_new)
                    st = st_new
                    self._record(st, t_new, r_new, water)
                    base = self._harvest(st, base, r_new)
                    if self.mode == "fractional":
                        st = replace(st, n=np.zeros_like(st.n))
                    u = u_new
                    if st.w < W_DRY:
                        end = "drying point"
                        raise _Stop()
                    if self._stop(st, base, seg):
                        end = self._end_text(st, base)
                        raise _Stop()
        except (_Stop, _Dry):
            pass
        return end

    def _invariant(self, st, base, seg=None):
        """True when the liquid is an invariant brine of an isothermal evaporation: solids =
        components - 1 (at changing temperature the liquid still moves)."""
        if seg is not None:
            (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
            if t0 != t1 or r1 <= r0:
                return False
        liquid_species = int(np.sum(st.m > 0))
        present = [k for k in st.active if st.n[k] > 0 or self.mode == "fractional"]
        return liquid_species >= 2 and len(present) >= liquid_species - 1

    def _stop(self, st, base, seg):
        if self.stop_when is not None and self.stop_when(self, st):
            self._stopped_by_condition = True
            return True
        return self._invariant(st, base, seg)

    def _end_text(self, st, base):
        if getattr(self, "_stopped_by_condition", False):
            return "end condition reached"
        names = ", ".join(self.model.solids.names[k] for k in sorted(st.active))
        return f"invariant brine (saturated with {names})"

    def _harvest(self, st, base, r):
        if self.mode != "fractional":
            return {"b": base["b"], "W": base["W"], "r": base["r"]}
        self.harvest = self.harvest + np.maximum(st.n, 0.0)
        b = st.m * st.w
        return {"b": b, "W": st.w, "r": r}

    def _locate(self, seg, u0, u1, base, st0, st1, old, new):
        """First phase change in (u0, u1] with the old assemblage fixed: (u, state, t, [(k, kind)])."""
        m = self.model
        act = tuple(sorted(old))
        cands = []
        for k in sorted(new - old):
            def g(u, k=k):
                sol, t = self._fixed(seg, u, base, act, st0)
                if sol is None:
                    raise _NoFix()
                return _si(m, sol[0], t)[k]
            cands.append((k, "appears", g))
        for k in sorted(old - new):
            def h(u, k=k):
                sol, t = self._fixed(seg, u, base, act, st0)
                if sol is None:
                    raise _NoFix()
                return sol[2][k]
            cands.append((k, "disappears", h))
        best = None
        for k, kind, fn in cands:
            try:
                f0, f1 = fn(u0), fn(u1)
                if kind == "appears":
                    if f1 <= 0:
                        continue
                    # already saturated (within the entering threshold) at the start of the step
                    ur = u0 if f0 >= -1e-9 else brentq(fn, u0, u1, xtol=1e-13, rtol=1e-12)
                else:
                    if f1 >= 0:
                        continue
                    ur = u0 if f0 <= 1e-14 else brentq(fn, u0, u1, xtol=1e-13, rtol=1e-12)
            except (_NoFix, ValueError):
                continue
            if best is None or ur < best[0] - 1e-12:
                best = (ur, [(k, kind)])
            elif abs(ur - best[0]) <= 1e-12:
                best[1].append((k, kind))
        if best is None:
            return None, None, None, []
        ur, ks = best
        # at a disappearance the leaving solid's amount is zero: solve without it, so that the
        # state at the event closes its mass balance exactly (no clipping of a tiny remainder)
        leaving = {k for k, kind in ks if kind == "disappears"}
        act_at = tuple(k for k in act if k not in leaving)
        sol, t = self._fixed(seg, ur, base, act_at, st0)
        if sol is None:
            act_at = act
            sol, t = self._fixed(seg, ur, base, act, st0)
        from phasekit.equilibrium.solver import EquilibriumState

        mm, w, n, it, rb, ra = sol
        st = EquilibriumState(mm, w, n, act_at, it, 0, rb, ra, _si(m, mm, t))
        return ur, st, t, ks


class _Stop(Exception):
    pass


class _Dry(Exception):
    pass


class _NoFix(Exception):
    pass


def run_programme(model, b, water, nodes, mode, stop_when=None):
    """Run a programme; returns the engine (records, events, end text)."""
    if mode not in ("fractional", "equilibrium"):
        raise InputError("mode", mode, "'fractional' or 'equilibrium'")
    path = _Path(model, b, water, nodes, mode, stop_when)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        end = path.run()
    return path, end
