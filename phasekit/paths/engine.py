"""Stepping engine of the process paths, with exact location of phase changes.

A path is a programme of temperature and water removal, linear between nodes
(temp_c, water_removed_fraction); water_removed_fraction is the mass of water evaporated per
kg of the initial brine's water. Along each segment the equilibrium is solved step by step
(warm-started); when the assemblage changes within a step, the change is located by
root-finding (scipy.optimize.brentq) on the saturation index of the entering solid, or on
the amount of the leaving solid, computed with the previous assemblage held fixed — so every
onset lands exactly on its point instead of on a grid. Every solid that becomes
supersaturated along the fixed-assemblage trajectory is a candidate, so no event row shows a
supersaturated solid.

Modes: ``fractional`` — solids are harvested as they form (a pond that is cleared; the liquid
follows its own path); ``equilibrium`` — solids stay in contact with the liquid and may
redissolve or react (a closed basin).

Invariant points. On isothermal evaporation, a liquid saturated with as many solids as it has
independent salt components (ions - 1) cannot change its composition: it is an invariant
point. With the liquid held fixed, removing water makes each solid k form at the rate ξ_k
(mol per kg of water removed) that solves the mass balance

    Σ_k ν_ki ξ_k = m_i · (liquid water lost per kg of water removed)      for every ion i
    liquid water lost = 1 - M_w Σ_k ν_wk ξ_k   per kg of water removed  (hydrate water)

(the ion equations have rank ions - 1 by electroneutrality; :func:`invariant_rates` solves them by
least squares and checks the residual). All ξ_k >= 0: a **eutonic** — the liquid keeps its
composition while the rest of its water evaporates, and the path ends there. A negative ξ_j: a
**transition point** (peritectic) — in equilibrium mode solid j redissolves while the others form,
until it is used up, and the path goes on with the others; in fractional mode j has been
harvested and cannot redissolve, so it leaves the assemblage at once and the path goes on along
the curve of the remaining solids.

Stop reasons (``stop_reason``): "eutonic", "drying point" (the liquid water is used up),
"end of programme", "end condition" (a concentration factor, a pond's condition),
"validity limit" (the liquid's ionic strength reaches the database's limit, or the temperature
leaves the range of a Pitzer parameter of the ions present, unless ``allow_beyond_validity``),
"failure" (the solver failed; the path computed so far is kept).
"""

from __future__ import annotations

import warnings
from dataclasses import replace

import numpy as np
from scipy.optimize import brentq

from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.solver import EquilibriumState, _newton, _si, solve, solve_robust
from phasekit.errors import ConvergenceError, InputError, ValidityWarning

DW_MAX = 0.03  # largest relative change of liquid water per step
DT_MAX = 2.0  # largest temperature change per step, °C
W_DRY = 1e-5  # kg liquid water per kg initial water below which the brine counts as dry
#: halvings of a step whose solve failed before the path is given up
RETRIES = 8
#: a rate below -RATE_TOL (relative to the largest) counts as negative
RATE_TOL = 1e-9

STOP_REASONS = ("eutonic", "drying point", "end of programme", "end condition", "validity limit", "failure")
#: stop reasons of a path that reached its end (the others leave it partial)
COMPLETE = ("eutonic", "drying point", "end of programme", "end condition")


def invariant_rates(model, m: np.ndarray, active) -> np.ndarray | None:
    """Rates (mol per kg of water removed) at which the solids ``active`` form when water is
    removed from a liquid of fixed composition ``m``; None if the liquid cannot stay fixed
    with these solids (not an invariant point).

    Unknowns: the rates ξ_k and λ, the liquid water lost per kg of water removed. Equations:
    Σ_k ν_ki ξ_k - m_i λ = 0 for every ion i (the liquid keeps its composition) and
    λ - M_w Σ_k ν_wk ξ_k = 1 (water removed = liquid water lost - hydrate water taken up).
    λ is 0 at a dehydration point such as hexahydrite -> kieserite, where the water released
    by one solid is what evaporates. The system must be consistent and of full rank.
    """
    act = list(active)
    pres = np.flatnonzero(m > 0)
    if not act or len(pres) < 2:
        return None
    a = len(act)
    nu = model.solids.nu[act][:, pres]  # (solids, ions)
    mat = np.zeros((len(pres) + 1, a + 1))
    mat[: len(pres), :a] = nu.T
    mat[: len(pres), a] = -m[pres]
    mat[-1, :a] = -M_WATER * model.solids.nw[act]
    mat[-1, a] = 1.0
    rhs = np.zeros(len(pres) + 1)
    rhs[-1] = 1.0
    scale = np.maximum(np.abs(mat).max(axis=1, keepdims=True), 1e-300)
    mat_s, rhs_s = mat / scale, rhs / scale[:, 0]
    if np.linalg.matrix_rank(mat_s, tol=1e-10) < a + 1:
        return None
    x, *_ = np.linalg.lstsq(mat_s, rhs_s, rcond=None)
    if np.max(np.abs(mat_s @ x - rhs_s)) > 1e-8:
        return None
    return x[:a]


def classify(rates: np.ndarray) -> str:
    """'eutonic' when no rate is negative, else 'transition point'."""
    scale = max(float(np.max(np.abs(rates))), 1e-300)
    return "transition point" if np.any(rates < -RATE_TOL * scale) else "eutonic"


class _Path:
    def __init__(self, model, b, water, nodes, mode, stop_when=None, candidates=None,
                 allow_beyond_validity=False):
        self.model = model
        self.nodes = nodes
        self.mode = mode
        self.stop_when = stop_when
        self.cands = None if candidates is None else list(candidates)
        self.beyond = bool(allow_beyond_validity)
        self.i_max = float(model.db.ionic_strength_max)
        self.b = np.array(b, dtype=float)
        self.W = float(water)
        self.harvest = np.zeros(len(model.solids.names))
        self.records = []
        self.events = []
        self.stop_reason = "end of programme"
        self.end_text = "end of the programme"
        self.failure = None
        self._inv_set = None  # assemblage of the invariant point the liquid is at (if any)
        self._inv_kind = ""

    # ----------------------------------------------------------- one state
    def _tr(self, seg, u):
        (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
        return t0 + u * (t1 - t0), r0 + u * (r1 - r0)

    def _at(self, seg, u, base, warm, robust=True):
        """Full equilibrium at u: warm-started, with the continuation in water as fallback when
        ``robust`` (the continuation is costly: a retried, shorter step goes without it)."""
        t, r = self._tr(seg, u)
        water = base["W"] - (r - base["r"])
        if water <= 0:
            raise _Dry()
        if robust or warm is None:
            st = solve_robust(self.model, base["b"], water, t, candidates=self.cands, warm=warm)
        else:
            st = solve(self.model, base["b"], water, t, initial_active=warm.active, candidates=self.cands,
                       m0=warm.m, w0=warm.w * water / max(warm.w + M_WATER * (warm.n @ self.model.solids.nw), 1e-300),
                       n0=warm.n)
        return st, t, r, water

    def _fixed(self, seg, u, base, act, warm):
        """State with the assemblage ``act`` held fixed (None if Newton fails)."""
        t, r = self._tr(seg, u)
        water = base["W"] - (r - base["r"])
        if water <= 0:
            return None, t
        sol = _newton(self.model, base["b"], water, t, act, warm.m, warm.w, warm.n)
        if sol is None:
            return None, t
        return sol, t

    def _ionic(self, m, t):
        return float(self.model.compute(m[None, :], t)[3][0])

    # ------------------------------------------------------------ record
    def _record(self, st, t, r, water, solids=None):
        m = self.model
        if solids is None:
            solids = [k for k in st.active if st.n[k] > 0 or self.mode == "fractional"]
        amounts = self.harvest + st.n if self.mode == "fractional" else st.n.copy()
        self.records.append({"t": t, "r": r, "m": st.m.copy(), "w": st.w, "amounts": np.maximum(amounts, 0.0),
                             "solids": "+".join(m.solids.names[k] for k in sorted(solids))})

    def _event(self, k, kind, st, t, r, point=""):
        self.events.append({"solid": self.model.solids.names[k], "event": kind, "point": point, "t": t, "r": r,
                            "m": st.m.copy(), "w": st.w})

    # ------------------------------------------------------- invariant points
    def _evaporating(self, seg):
        (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
        return t0 == t1 and r1 > r0

    def _invariant(self, m, act, seg):
        """(kind, {solid: rate}) at an invariant point of an isothermal evaporation, else None."""
        if seg is not None and not self._evaporating(seg):
            return None
        act = sorted(act)
        rates = invariant_rates(self.model, m, act)
        if rates is None:
            return None
        return classify(rates), dict(zip(act, rates))

    def _at_invariant(self, st, t, r, seg, n_new_events, arrive=None, leaving=()):
        """Classify the invariant point (if any) the path has just reached with the assemblage
        ``arrive`` (default: the state's). Labels the events just emitted; returns the state to go
        on from (fractional transition point: a redissolving solid leaves the assemblage) or raises
        _Stop at a eutonic."""
        key = tuple(sorted(st.active if arrive is None else arrive))
        inv = self._invariant(st.m, key, seg)
        if inv is None:
            self._inv_set = None
            return st
        kind, rates = inv
        if key == self._inv_set:
            return st
        self._inv_set, self._inv_kind = key, kind
        for ev in self.events[len(self.events) - n_new_events:]:
            ev["point"] = kind
        names = self.model.solids.names
        if kind == "eutonic":
            self.stop_reason = "eutonic"
            total = sum(rates.values())
            share = ", ".join(f"{names[k]} {v / total:.3g}" for k, v in rates.items() if v > 0)
            self.end_text = (f"eutonic: the liquid, saturated with {', '.join(names[k] for k in key)}, keeps its "
                             f"composition while the rest of its water evaporates (mole fractions of the crop: "
                             f"{share})")
            raise _Stop()
        scale = max(abs(v) for v in rates.values())
        negative = [k for k, v in rates.items() if v < -RATE_TOL * scale]
        if self.mode == "fractional" and not set(negative) & set(leaving):
            # the harvested solid cannot redissolve: it leaves the assemblage here
            neg = min(negative, key=rates.get)
            self._event(neg, "disappears", st, t, r, point="transition point")
            st = replace(st, active=tuple(k for k in st.active if k != neg))
        return st

    def _label_leaving(self, ks):
        """A solid used up while the liquid sits at a transition point leaves it there."""
        if self._inv_set is not None and self._inv_kind == "transition point":
            out = []
            for k, kind in ks:
                out.append("transition point" if kind == "disappears" and k in self._inv_set else "")
            return out
        return [""] * len(ks)

    # -------------------------------------------------------------- validity
    def _t_limits(self, m):
        """Temperature interval of the Pitzer parameters of the ions present."""
        model = self.model
        nc = len(model.cations)
        present = set(np.flatnonzero(m > 0).tolist())
        lo, hi = -np.inf, np.inf
        for i in range(nc):
            for j in range(len(model.anions)):
                if i in present and nc + j in present and model._binary_has[i, j]:
                    lo = max(lo, model._binary_range[i, j, 0])
                    hi = min(hi, model._binary_range[i, j, 1])
        for members, a, z, _ in model._mixing_ranges:
            if present.issuperset(members):
                lo, hi = max(lo, a), min(hi, z)
        return lo, hi

    def _limit_on_step(self, seg, u0, u1, base, st0, st1):
        """u in (u0, u1] where the liquid leaves the validity range along the step (None if it
        does not), with the assemblage of st0 held fixed."""
        if self.beyond:
            return None
        t1, _ = self._tr(seg, u1)
        over_i = self._ionic(st1.m, t1) > self.i_max
        lo, hi = self._t_limits(st0.m)
        t0, _ = self._tr(seg, u0)
        over_t = lo <= t0 <= hi and not lo <= t1 <= hi
        if not (over_i or over_t):
            return None
        act = tuple(sorted(st0.active))
        cands = []
        if over_t:
            edge = hi if t1 > hi else lo
            (ta, _), (tb, _) = self.nodes[seg], self.nodes[seg + 1]
            cands.append((edge - ta) / (tb - ta))
        if over_i:
            def f(u):
                sol, t = self._fixed(seg, u, base, act, st0)
                if sol is None:
                    raise _NoFix()
                return self._ionic(sol[0], t) - self.i_max * (1 - 1e-10)  # the root just inside
            try:
                # tight in u: near dryness the ionic strength changes fast with the water removed
                cands.append(brentq(f, u0, u1, xtol=1e-16, rtol=1e-15) if f(u0) < 0 else u0)
            except (_NoFix, ValueError):
                cands.append(u1)
        return min(cands)

    def _stop_at_limit(self, seg, u, base, st0):
        """Record the state where the liquid leaves the validity range and stop."""
        act = tuple(sorted(st0.active))
        sol, t = self._fixed(seg, u, base, act, st0)
        _, r = self._tr(seg, u)
        if sol is not None:
            mm, w, n, it, rb, ra = sol
            st = EquilibriumState(mm, w, n, act, it, 0, rb, ra, _si(self.model, mm, t))
            st = self._close(st, base, r)
            self._record(st, t, r, None)
            self._harvest(st, base, r)
        i_now = self._ionic(self.records[-1]["m"], self.records[-1]["t"])
        self.stop_reason = "validity limit"
        lo, hi = self._t_limits(self.records[-1]["m"])
        if i_now >= self.i_max * (1 - 1e-8):
            why = f"ionic strength {i_now:.4g} mol/kg reaches the database's limit {self.i_max:g} mol/kg"
        else:
            why = f"temperature leaves {lo:g}–{hi:g} °C, the range of the Pitzer parameters of the ions present"
        self.end_text = (f"validity limit: {why} (allow_beyond_validity=True or --beyond-validity continues, "
                         "with warnings)")
        raise _Stop()

    # -------------------------------------------------------------- march
    def run(self):
        m = self.model
        base = {"b": self.b.copy(), "W": self.W, "r": self.nodes[0][1]}
        st, t, r, water = self._at(0, 0.0, base, None)
        for k in sorted(st.active):
            if st.n[k] > 0:
                self._event(k, "appears", st, t, r)
        st = self._close(st, base, r)
        self._record(st, t, r, water)
        inv = self._invariant(st.m, st.active, 0)
        if inv is not None and inv[0] == "eutonic":
            raise InputError("brine", "already at its end point",
                             "a brine whose evaporation or cooling path has not reached an invariant brine "
                             f"(present: {', '.join(m.solids.names[k] for k in st.active)})")
        try:
            if not self.beyond and self._ionic(st.m, t) > self.i_max:
                self.stop_reason = "validity limit"
                self.end_text = (f"validity limit: the brine's ionic strength {self._ionic(st.m, t):.4g} mol/kg is "
                                 f"above the database's limit {self.i_max:g} mol/kg "
                                 "(allow_beyond_validity=True or --beyond-validity continues, with warnings)")
                raise _Stop()
            n0 = len(self.events)
            st = self._at_invariant(st, t, r, 0, n0)
            base = self._harvest(st, base, r)
            if self.mode == "fractional":
                st = replace(st, n=np.zeros_like(st.n))
            for seg in range(len(self.nodes) - 1):
                if seg > 0:
                    base["r"] = self.nodes[seg][1]
                st, base = self._segment(seg, st, base)
            self.stop_reason, self.end_text = "end of programme", "end of the programme"
        except _Stop:
            pass
        except _Dry:
            self.stop_reason, self.end_text = "drying point", "drying point (the liquid water is used up)"
        except _Fail as fail:
            err = fail.args[0]
            self.failure = err
            last = self.records[-1]
            names = self.records[-1]["solids"].replace("+", ", ") or "no solid"
            self.stop_reason = "failure"
            self.end_text = (f"failure: {err} — the path is kept up to concentration factor {1.0 / last['w']:.6g}, "
                             f"{last['t']:g} °C (last assemblage: {names})")

    def _segment(self, seg, st, base):
        u = 0.0
        (t0, r0), (t1, r1) = self.nodes[seg], self.nodes[seg + 1]
        while u < 1.0 - 1e-12:
            du_t = DT_MAX / abs(t1 - t0) if t1 != t0 else np.inf
            du_r = DW_MAX * max(st.w, W_DRY) / (r1 - r0) if r1 > r0 else np.inf
            du = min(du_t, du_r, 1.0 - u)
            err = None
            for attempt in range(RETRIES + 1):
                u_new = u + du
                try:
                    st_new, t_new, r_new, water = self._at(seg, u_new, base, st, robust=attempt == 0)
                    err = None
                    break
                except (ConvergenceError, np.linalg.LinAlgError, FloatingPointError) as exc:
                    err = exc
                    du /= 2.0
            if err is not None:
                raise _Fail(err)
            old = set(st.active)
            new = set(st_new.active)
            if new != old:
                u_ev, st_ev, t_ev, ks = self._locate(seg, u, u_new, base, st, st_new, old, new)
                if u_ev is not None:
                    lim = self._limit_on_step(seg, u, u_ev, base, st, st_ev)
                    if lim is not None:
                        self._stop_at_limit(seg, lim, base, st)
                    r_ev = r0 + u_ev * (r1 - r0)
                    for (k, kind), point in zip(ks, self._label_leaving(ks)):
                        self._event(k, kind, st_ev, t_ev, r_ev, point)
                    # continue from the event point with the new assemblage
                    act = tuple(sorted((set(st_ev.active) | {k for k, kd in ks if kd == "appears"})
                                       - {k for k, kd in ks if kd == "disappears"}))
                    st_ev = self._close(st_ev, base, r_ev)
                    self._record(st_ev, t_ev, r_ev, None, solids=act)
                    base = self._harvest(st_ev, base, r_ev)
                    keep = np.where(st_ev.n > 0, st_ev.n, 0.0)
                    st = replace(st_ev, n=keep if self.mode == "equilibrium" else np.zeros_like(keep), active=act)
                    u = u_ev
                    self._check_condition(st)
                    leaving = {k for k, kd in ks if kd == "disappears"}
                    arrive = set(act) | leaving if any(kd == "appears" for _, kd in ks) else set(act)
                    st = self._at_invariant(st, t_ev, r_ev, seg, len(ks), arrive, leaving)
                    continue
                for k in sorted(new - old):
                    self._event(k, "appears", st_new, t_new, r_new)
                for k in sorted(old - new):
                    self._event(k, "disappears", st_new, t_new, r_new)
            lim = self._limit_on_step(seg, u, u_new, base, st, st_new)
            if lim is not None:
                self._stop_at_limit(seg, lim, base, st)
            n_ev = len(new ^ old)
            st = st_new
            st = self._close(st, base, r_new)
            self._record(st, t_new, r_new, water)
            base = self._harvest(st, base, r_new)
            if self.mode == "fractional":
                st = replace(st, n=np.zeros_like(st.n))
            u = u_new
            if st.w < W_DRY:
                raise _Dry()
            self._check_condition(st)
            st = self._at_invariant(st, t_new, r_new, seg, n_ev)
        return st, base

    def _check_condition(self, st):
        if self.stop_when is not None and self.stop_when(self, st):
            self.stop_reason = "end condition"
            self.end_text = "end condition reached"
            raise _Stop()

    def _close(self, st, base, r):
        """Fractional mode: the liquid of a state recomputed from the mass balance of its base (the
        liquid last harvested) and the solids formed since, so that the mass balance of the whole
        path closes exactly, however many harvests it takes (the Newton residual, <= 1e-11, is left
        in the mass action instead of piling up over the harvests)."""
        if self.mode != "fractional":
            return st
        model = self.model
        n = np.maximum(st.n, 0.0)
        b_liq = base["b"] - n @ model.solids.nu
        w = base["W"] - (r - base["r"]) - M_WATER * float(n @ model.solids.nw)
        pres = base["b"] > 0
        if not w > 0 or np.any(b_liq[pres] <= 0):
            return st
        return replace(st, m=np.where(pres, b_liq / w, 0.0), w=w, n=n)

    def _harvest(self, st, base, r):
        if self.mode != "fractional":
            return {"b": base["b"], "W": base["W"], "r": base["r"]}
        self.harvest = self.harvest + np.maximum(st.n, 0.0)
        b = st.m * st.w
        return {"b": b, "W": st.w, "r": r}

    def _locate(self, seg, u0, u1, base, st0, st1, old, new):
        """First phase change in (u0, u1] with the old assemblage fixed: (u, state, t, [(k, kind)]).

        Candidates: the solids that enter or leave in the full solution at u1, and every solid that
        is supersaturated at u1 on the trajectory of the old assemblage."""
        m = self.model
        act = tuple(sorted(old))
        entering = set(new - old)
        leaving = set(old - new)
        end_fix, t_end = self._fixed(seg, u1, base, act, st0)
        if end_fix is not None:
            # a solid whose amount turns negative on the old assemblage's trajectory leaves (in
            # fractional mode: at once, the harvested solid does not redissolve)
            leaving |= {k for k in old if end_fix[2][k] < 0}
            si_end = _si(m, end_fix[0], t_end)
            allowed = set(range(len(m.solids.names))) if self.cands is None else set(self.cands)
            for k in np.flatnonzero(si_end > 0):
                k = int(k)
                if k in allowed and k not in old and (m.solids.has_ions[k] or t_end <= m.solids.t_range[k, 1] + 0.5):
                    entering.add(k)
        cands = []
        for k in sorted(entering):
            def g(u, k=k):
                sol, t = self._fixed(seg, u, base, act, st0)
                if sol is None:
                    raise _NoFix()
                return _si(m, sol[0], t)[k]
            cands.append((k, "appears", g))
        for k in sorted(leaving):
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
        if sol is None:
            return None, None, None, []
        mm, w, n, it, rb, ra = sol
        st = EquilibriumState(mm, w, n, act_at, it, 0, rb, ra, _si(m, mm, t))
        return ur, st, t, ks


class _Stop(Exception):
    pass


class _Dry(Exception):
    pass


class _NoFix(Exception):
    pass


class _Fail(Exception):
    pass


def run_programme(model, b, water, nodes, mode, stop_when=None, candidates=None, allow_beyond_validity=False):
    """Run a programme; returns the engine (records, events, stop_reason, end_text)."""
    if mode not in ("fractional", "equilibrium"):
        raise InputError("mode", mode, "'fractional' or 'equilibrium'")
    path = _Path(model, b, water, nodes, mode, stop_when, candidates, allow_beyond_validity)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        path.run()
    return path
