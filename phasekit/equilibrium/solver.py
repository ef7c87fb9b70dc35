"""Solid–liquid equilibrium: the stable assemblage of a brine at a temperature.

Method (active-set Newton on the mass-action and mass-balance equations). For a set A of
solids assumed present, the unknowns are x = (ln m_i for the species present, ln w, n_k for
k in A), with w the mass of liquid water (kg) and n_k the amount of solid k (mol); the
equations are

    mass balance     (w m_i + Σ_k ν_ki n_k - b_i) / b_i = 0        for every species i
    water            (w + M_w Σ_k ν_wk n_k - W) / W = 0
    mass action      Σ_i ν_ki ln(m_i γ_i) + ν_wk ln a_w - ln K_k = 0   for k in A

with b the totals and W the total water. Newton's method with a backtracking line search
solves them; ∂ln γ/∂ln m comes from one vectorized evaluation of the activity model on
perturbed compositions. Around it, the active set changes one solid at a time: a solid with
a negative amount leaves; otherwise the most supersaturated absent solid (largest SI per ion)
enters. At the end every present solid has SI = 0 and every absent one SI <= 0, which is the
condition of minimum Gibbs energy at fixed T, P and composition (Harvie, Greenberg & Weare
1987, Geochim. Cosmochim. Acta 51, 1045, discuss the same optimality conditions). A solid
whose stoichiometry would make the set degenerate (a reaction among solids alone, so the
phase rule would be broken) is swapped against the present ones instead of added. The
iteration is deterministic: the same input gives the same sequence and answer.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.common import composition_array, make_brine
from phasekit.errors import ConvergenceError, InputError, RangeError, ValidityWarning, warn_validity

LN10 = np.log(10.0)
TOL_BALANCE = 1e-12  # relative mass-balance residual at convergence
TOL_ACTION = 1e-10  # mass-action residual (ln units) at convergence
SI_ENTER = 1e-9  # log10 units: a solid supersaturated by more than this enters the assemblage


@dataclass
class EquilibriumState:
    """Raw solution of :func:`solve`: arrays in model species / solid order."""

    m: np.ndarray  # molalities of the liquid (n_species,)
    w: float  # liquid water, kg
    n: np.ndarray  # solid amounts, mol (n_solids,)
    active: tuple  # indices of present solids
    iterations: int
    set_changes: int
    balance_residual: float
    action_residual: float
    si: np.ndarray  # saturation indices of all solids at the solution


@dataclass
class EquilibriumResult:
    """Equilibrium assemblage of a brine.

    Attributes
    ----------
    solids : dict
        Solid name -> mol per kg of the brine's initial water (present solids only).
    liquid : Brine
        The equilibrium brine (mol per kg of its own water).
    water_kg : float
        Liquid water left per kg of the initial water (hydrate water taken up).
    temp_c : float
    saturation : pandas.DataFrame
        Saturation index and state of every solid in the final brine.
    converged : dict
        iterations, active_set_changes, mass_balance_residual, mass_action_residual, method.
    warnings : list of str
    exclude : list of str
        Solids kept out of the equilibrium.
    """

    solids: dict
    liquid: object
    water_kg: float
    temp_c: float
    saturation: pd.DataFrame
    converged: dict
    warnings: list = field(default_factory=list)
    database: str = "embedded database"
    exclude: list = field(default_factory=list)

    def solids_mass_g(self, model=None) -> dict:
        """Mass of each solid in g per kg of initial water."""
        from phasekit.equilibrium.saturation import _solid_mass
        from phasekit.model import default_model

        model = model or default_model()
        return {k: v * _solid_mass(model.solids[k]) for k, v in self.solids.items()}


def _newton(model, b, water, temp_c, act, m, w, n, max_iter=60):
    """Newton iterations for a fixed active set. Returns (m, w, n, iterations, ok, residuals)."""
    pres = np.flatnonzero(b > 0)
    p = len(pres)
    nu = model.solids.nu[list(act)][:, pres] if act else np.zeros((0, p))
    nw = model.solids.nw[list(act)] if act else np.zeros(0)
    ln_k = model.solids.ln_k(temp_c)[list(act)] if act else np.zeros(0)
    bp = b[pres]
    a = len(act)
    x = np.concatenate([np.log(m[pres]), [np.log(w)], n[list(act)] if act else []])
    h = 1e-6

    def evaluate(xv, jac=True):
        lm = xv[:p]
        lw = xv[p]
        nn = xv[p + 1:]
        mp = np.exp(lm)
        wv = np.exp(lw)
        full = np.zeros((1 + (p if jac else 0), len(b)))
        full[:, pres] = mp
        if jac:
            full[1:, pres] = mp * np.exp(h * np.eye(p))
        ln_g, _, ln_aw, _, _ = model.compute(full, temp_c)
        r_mb = (wv * mp + nn @ nu - bp) / bp
        r_w = (wv + M_WATER * (nn @ nw) - water) / water
        r_sa = nu @ (lm + ln_g[0, pres]) + nw * ln_aw[0] - ln_k
        r = np.concatenate([r_mb, [r_w], r_sa])
        if not jac:
            return r, None
        J = np.zeros((p + 1 + a, p + 1 + a))
        J[np.arange(p), np.arange(p)] = wv * mp / bp
        J[:p, p] = wv * mp / bp
        J[:p, p + 1:] = nu.T / bp[:, None]
        J[p, p] = wv / water
        J[p, p + 1:] = M_WATER * nw / water
        if a:
            dg = (ln_g[1:, pres] - ln_g[0, pres]) / h  # [j, i] = d ln γ_i / d ln m_j
            daw = (ln_aw[1:] - ln_aw[0]) / h
            J[p + 1:, :p] = nu + nu @ dg.T + nw[:, None] * daw[None, :]
        return r, J

    def merit(r):
        return float(r @ r)

    if a == 0:
        # no solid: the liquid holds everything
        m_out = np.where(b > 0, b / water, 0.0)
        return m_out, float(water), np.zeros(len(model.solids.names)), 0, 0.0, 0.0
    r, J = evaluate(x)
    it = 0
    for it in range(1, max_iter + 1):  # noqa: B007 (it is returned)
        if np.all(np.abs(r[: p + 1]) < TOL_BALANCE) and np.all(np.abs(r[p + 1:]) < TOL_ACTION):
            break
        try:
            dx = np.linalg.solve(J, -r)
        except np.linalg.LinAlgError:
            return None
        if not np.all(np.isfinite(dx)):
            return None
        big = np.max(np.abs(dx[: p + 1]))
        if big > 3.0:
            dx *= 3.0 / big
        f0 = merit(r)
        lam = 1.0
        for _ in range(30):
            xn = x + lam * dx
            # the full step is usually taken: evaluate it with its Jacobian at once
            rn, Jn = evaluate(xn, jac=lam == 1.0)
            if np.all(np.isfinite(rn)) and merit(rn) <= (1 - 1e-4 * lam) * f0:
                break
            lam *= 0.5
        else:
            return None
        x = xn
        r, J = (rn, Jn) if Jn is not None else evaluate(x)
    else:
        return None
    if not (np.all(np.abs(r[: p + 1]) < TOL_BALANCE * 10) and np.all(np.abs(r[p + 1:]) < TOL_ACTION * 10)):
        return None
    m_out = np.zeros(len(b))
    m_out[pres] = np.exp(x[:p])
    n_out = np.zeros(len(model.solids.names))
    if act:
        n_out[list(act)] = x[p + 1:]
    return m_out, float(np.exp(x[p])), n_out, it, float(np.max(np.abs(r[: p + 1]))), \
        float(np.max(np.abs(r[p + 1:]), initial=0.0))


def _si(model, m, temp_c):
    ln_g, _, ln_aw, _, _ = model.compute(m[None, :], temp_c)
    return (model.solids.ln_iap(m[None, :], ln_g, ln_aw)[0] - model.solids.ln_k(temp_c)) / LN10


def _rank_ok(model, act, pres):
    """True if the solids' compositions (ions and water) are linearly independent."""
    if not act:
        return True
    mat = np.concatenate([model.solids.nu[list(act)][:, pres], model.solids.nw[list(act)][:, None]], axis=1)
    return np.linalg.matrix_rank(mat) == len(act)


def solve(model, b, water, temp_c, initial_active=(), candidates=None, m0=None, w0=None, n0=None,
          max_changes=60) -> EquilibriumState:
    """Equilibrium of totals ``b`` (mol, per species) with ``water`` kg of water at ``temp_c``.

    Parameters
    ----------
    b : ndarray
        Total amount of each species of the model (mol); must be electrically neutral.
    water : float
        Total water (kg), liquid plus what solids may bind as hydrate water.
    initial_active : sequence of int
        Solids assumed present at the start (warm start).
    candidates : sequence of int, optional
        Solids allowed to form (default: every solid whose ions are all present).
    m0, w0, n0 : optional warm-start values.

    Raises
    ------
    ConvergenceError
        With the last state, when no assemblage satisfying all conditions is found.
    """
    b = np.asarray(b, dtype=float)
    pres = np.flatnonzero(b > 0)
    nu_all = model.solids.nu
    absent = np.ones(len(b), dtype=bool)
    absent[pres] = False
    possible = np.flatnonzero(~(nu_all[:, absent] > 0).any(axis=1))
    # ice only where it can exist: its ln K (ice-point depression) is not extrapolated to warm brines
    possible = np.array([k for k in possible if model.solids.has_ions[k]
                         or temp_c <= model.solids.t_range[k, 1] + 0.5], dtype=int)
    if candidates is not None:
        possible = np.array([k for k in possible if k in set(candidates)], dtype=int)
    cand = set(possible.tolist())
    act = tuple(sorted(k for k in initial_active if k in cand))
    if m0 is None or w0 is None:
        m = np.where(b > 0, b / water, 0.0)
        w = water
        n = np.zeros(len(model.solids.names))
        act = ()
    else:
        m, w = np.where(b > 0, np.maximum(m0, 1e-30), 0.0), float(w0)
        n = np.zeros(len(model.solids.names)) if n0 is None else np.array(n0, dtype=float)
    total_it = 0
    changes = 0
    seen = set()
    last = None
    # a warm start with solids: first check the warm state solves as it is
    while changes <= max_changes:
        seen.add(act)
        sol = _newton(model, b, water, temp_c, act, m, w, n)
        if sol is None and act:
            # restart this active set from the dissolved state
            sol = _newton(model, b, water, temp_c, act, np.where(b > 0, b / water, 0.0), water,
                          np.zeros(len(model.solids.names)))
        if sol is None and act:
            # no solution with this assemblage near here: try its neighbours (one solid more or less)
            si_now = _si(model, m, temp_c)
            more = sorted((k for k in cand if k not in act and si_now[k] > -1e-6), key=lambda k: -si_now[k])
            trials = [tuple(sorted(act + (k,))) for k in more] + [tuple(x for x in act if x != j) for j in act]
            for trial in trials:
                if trial in seen or not _rank_ok(model, trial, pres):
                    continue
                sol = _newton(model, b, water, temp_c, trial, m, w, n)
                if sol is not None:
                    act = trial
                    seen.add(act)
                    changes += 1
                    break
        if sol is None:
            raise ConvergenceError(
                f"Newton iteration failed for the assemblage {[model.solids.names[k] for k in act]} at {temp_c:g} °C",
                {"active": [model.solids.names[k] for k in act], "iterations": total_it,
                 "molalities": dict(zip(model.species, m.tolist())), "water_kg": w},
            )
        m_new, w_new, n_new, it, rb, ra = sol
        total_it += it
        last = (m_new, w_new, n_new, rb, ra)
        neg = [k for k in act if n_new[k] < 0]
        if neg:
            drop = min(neg, key=lambda k: n_new[k])
            act = tuple(k for k in act if k != drop)
            changes += 1
            # continue from the current liquid (amounts of the others kept)
            m, w, n = m_new, w_new, np.where(n_new > 0, n_new, 0.0)
            continue
        m, w, n = m_new, w_new, n_new
        si = _si(model, m, temp_c)
        out = [k for k in cand if k not in act and si[k] > SI_ENTER]
        if not out:
            return EquilibriumState(m, w, n, act, total_it, changes, rb, ra, si)
        per_ion = {k: si[k] / max(nu_all[k].sum() + model.solids.nw[k], 1.0) for k in out}
        order = sorted(out, key=lambda k: (-per_ion[k], k))
        moved = False
        for k in order:
            trial = tuple(sorted(act + (k,)))
            if _rank_ok(model, trial, pres) and len(trial) <= max(len(pres) - 1, 1) and trial not in seen:
                act = trial
                moved = True
                break
            # degenerate: swap k for one present solid
            for j in sorted(act):
                swap = tuple(sorted(tuple(x for x in act if x != j) + (k,)))
                if swap not in seen and _rank_ok(model, swap, pres):
                    act = swap
                    moved = True
                    break
            if moved:
                break
        if not moved:
            raise ConvergenceError(
                f"no admissible assemblage found at {temp_c:g} °C (cycling)",
                {"active": [model.solids.names[k] for k in act],
                 "supersaturated": [model.solids.names[k] for k in out]},
            )
        changes += 1
    m_l, w_l, n_l, rb, ra = last
    raise ConvergenceError(
        f"active set did not settle after {max_changes} changes at {temp_c:g} °C",
        {"active": [model.solids.names[k] for k in act], "water_kg": w_l},
    )


def solve_robust(model, b, water, temp_c, candidates=None, warm: EquilibriumState | None = None) -> EquilibriumState:
    """:func:`solve`, with a continuation in the water amount as fallback.

    When the direct solve fails (typically a brine far beyond saturation, where Newton's
    method starts far from the answer), the same totals are first equilibrated with enough
    water to be undersaturated, and the water is then taken away in geometric steps, each
    solve warm-started from the last (the halving of a failed step makes it robust).
    """
    try:
        if warm is not None:
            return solve(model, b, water, temp_c, initial_active=warm.active, candidates=candidates,
                         m0=warm.m, w0=warm.w * water / max(warm.w + M_WATER * (warm.n @ model.solids.nw), 1e-300),
                         n0=warm.n)
        return solve(model, b, water, temp_c, candidates=candidates)
    except ConvergenceError as first:
        error = first
    state, pos = _from_dilute(model, b, water, temp_c, candidates)
    if pos > 0:
        total = water * np.exp(pos)
        if state.w < 0.02 * total:
            # the liquid vanished on the way: the solids (hydrates) bind nearly all the water
            raise ConvergenceError(
                f"no liquid at equilibrium at {temp_c:g} °C: {water:.4g} kg of water is not enough for "
                f"the solids ({', '.join(model.solids.names[k] for k in state.active)}), which bind "
                "nearly all of it as hydrate water; the mixture lies past its drying point",
                {"active": [model.solids.names[k] for k in state.active], "liquid_fraction":
                 state.w / total, "water_kg": water},
            ) from None
        raise ConvergenceError(f"{error} (continuation in water also failed)", error.state) from None
    return state


def _from_dilute(model, b, water, temp_c, candidates):
    """Continuation from a dilute, undersaturated brine (the branch of the activity model's solutions connected
    to dilute brines): the totals ``b`` with enough water to be undersaturated, the water then taken away in
    geometric steps, each solve warm-started from the last, a failed step halved.

    Returns (last state, ln of the water factor still to go): 0 when ``water`` was reached.
    """
    factor = 1.0
    for _ in range(60):
        factor *= 2.0
        m = np.where(b > 0, b / (water * factor), 0.0)
        s = _si(model, m, temp_c)
        if np.nanmax(np.where(np.isfinite(s), s, -np.inf)) < 0:
            break
    state = solve(model, b, water * factor, temp_c, candidates=candidates)
    log_f = np.log(factor)
    pos, step = log_f, log_f / 8.0
    while pos > 0:
        nxt = max(pos - step, 0.0)
        try:
            state = solve(model, b, water * np.exp(nxt), temp_c, initial_active=state.active,
                          candidates=candidates, m0=state.m, w0=state.w * np.exp(nxt - pos), n0=state.n)
            pos = nxt
            step = min(step * 1.5, log_f / 4.0)
        except ConvergenceError:
            step /= 2.0
            if step < 1e-6:
                break
    return state, pos


def _ionic_strength(model, m, temp_c) -> float:
    return float(model.compute(m[None, :], temp_c)[3][0])


def equilibrate(model, brine, temp_c: float, add_solids: dict | None = None, initial_solids=(),
                exclude=(), allow_beyond_validity: bool = False) -> EquilibriumResult:
    """Stable assemblage of a brine (plus optionally added solids) at ``temp_c``.

    Parameters
    ----------
    brine : Brine or mapping
        mol per kg water.
    temp_c : float
        °C.
    add_solids : dict, optional
        Solids added to the brine, mol per kg of the brine's water (e.g. ``{"sylvite": 0.5}``).
    initial_solids : sequence of str
        Solids to start the active set from (the answer does not depend on it).
    exclude : sequence of str
        Solids not allowed to form (metastable equilibria, or solids that do not form on the time
        scale of the process); recorded in ``.exclude``.
    allow_beyond_validity : bool
        The activity model has further, unphysical solutions far above its validity limit. By
        default an answer whose liquid lies above the database's ionic-strength limit is first
        sought again from a dilute brine (continuation in the water amount), and if the liquid is
        still above the limit a RangeError names its ionic strength. True returns such an answer,
        with the warning in ``.warnings``.

    Returns
    -------
    EquilibriumResult
    """
    m0 = composition_array(model, brine)
    model._check(m0[None, :], temp_c, None)
    b = m0.copy()
    water = 1.0
    for name, amount in (add_solids or {}).items():
        k = model.solids.index[model.solids.resolve(name)]
        try:
            amt = float(amount)
        except (TypeError, ValueError):
            raise InputError(f"add_solids[{name!r}]", amount, "an amount in mol per kg water") from None
        if not np.isfinite(amt) or amt < 0:
            raise InputError(f"add_solids[{name!r}]", amount, "an amount >= 0 in mol per kg water")
        b += model.solids.nu[k] * amt
        water += model.solids.nw[k] * amt * M_WATER
    if not np.any(b > 0):
        raise InputError("brine", dict(zip(model.species, m0.tolist())), "at least one dissolved species")
    from phasekit.equilibrium.common import excluded_solids

    excl_names = excluded_solids(model, exclude)
    excl = {model.solids.index[s] for s in excl_names}
    cands = [k for k in range(len(model.solids.names)) if k not in excl]
    init = [model.solids.index[model.solids.resolve(s)] for s in initial_solids]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        if init:
            try:
                st = solve(model, b, water, float(temp_c), initial_active=init, candidates=cands,
                           m0=np.where(b > 0, b / water, 0.0), w0=water, n0=None)
            except ConvergenceError:
                st = solve_robust(model, b, water, float(temp_c), candidates=cands)
        else:
            st = solve_robust(model, b, water, float(temp_c), candidates=cands)
        i_max = float(model.db.ionic_strength_max)
        if _ionic_strength(model, st.m, float(temp_c)) > i_max and not allow_beyond_validity:
            try:
                again, left = _from_dilute(model, b, water, float(temp_c), cands)
                again = again if left == 0 else None
            except ConvergenceError:
                again = None
            if again is not None and _ionic_strength(model, again.m, float(temp_c)) <= i_max:
                st = again
            else:
                raise RangeError(
                    "ionic strength of the equilibrium liquid",
                    round(_ionic_strength(model, st.m, float(temp_c)), 4),
                    f"an equilibrium within the database's validity limit of {i_max:g} mol/kg; none was found "
                    "below it (the mixture may hold too little water for its hydrates, past its drying point); "
                    "allow_beyond_validity=True / --beyond-validity returns this answer anyway, with warnings")
    res = result_from_state(model, st, float(temp_c))
    res.exclude = list(excl_names)
    return res


def result_from_state(model, st: EquilibriumState, temp_c: float, water_basis: float = 1.0) -> EquilibriumResult:
    """Public result of a solver state (amounts per kg of initial water)."""
    from phasekit.equilibrium.saturation import states

    solids = {model.solids.names[k]: float(st.n[k] / water_basis) for k in st.active if st.n[k] > 0}
    ion = model.compute(st.m[None, :], temp_c)[3]
    warns = model._validity(st.m[None, :], temp_c, ion)
    rng = model.solids.t_range
    for k in st.active:
        if not (rng[k, 0] <= temp_c <= rng[k, 1]):
            warns.append(f"{model.solids.names[k]}: {temp_c:g} °C outside the validity range "
                         f"{rng[k, 0]:g}–{rng[k, 1]:g} °C of its solubility product")
    for wmsg in warns:
        warn_validity(wmsg)
    sat = pd.DataFrame({"saturation_index": st.si, "state": states(st.si)},
                       index=pd.Index(model.solids.names, name="solid"))
    sat = sat[np.isfinite(sat["saturation_index"])]
    return EquilibriumResult(
        solids=solids,
        liquid=make_brine(model, st.m),
        water_kg=st.w / water_basis,
        temp_c=temp_c,
        saturation=sat,
        converged={"iterations": st.iterations, "active_set_changes": st.set_changes,
                   "mass_balance_residual": st.balance_residual, "mass_action_residual": st.action_residual,
                   "method": "active-set Newton on mass action and mass balance"},
        warnings=warns,
        database=getattr(model, "label", "embedded database"),
    )
