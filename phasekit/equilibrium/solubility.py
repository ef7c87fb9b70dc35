"""Solubility of a single salt in water, and its polytherm.

The saturated molality m of a salt M_p X_q whose solid is S = p M + q X + n H2O solves

    p ln(p m γ_M) + q ln(q m γ_X) + n ln a_w = ln K_S(T),

found by a safeguarded Newton iteration on ln m. Of the solids made of that salt
(its hydrates and anhydrous form), the stable one at a temperature is the least
soluble. Transition temperatures are found by root-finding on the difference of
two solids' solubilities (scipy.optimize.brentq), not read off a grid.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.optimize import brentq

from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.errors import ConvergenceError, InputError, RangeError, ValidityWarning, warn_validity

#: warn when the temperature is this close (°C) to the edge of the chosen solid's range
EDGE_MARGIN_C = 2.0


@dataclass
class SolubilityResult:
    """Solubility of a salt at one temperature.

    Attributes
    ----------
    salt : str
    solid : str
        Stable solid in equilibrium with the saturated solution.
    temp_c : float
    molality : float
        mol of anhydrous salt per kg water.
    grams_per_100g_water : float
    mass_percent : float
        Anhydrous salt, per cent of solution mass.
    water_activity : float
    candidates : pandas.DataFrame
        Saturated molality of every solid of the salt considered (the stable one is the lowest).
    warnings : list of str
    """

    salt: str
    solid: str
    temp_c: float
    molality: float
    grams_per_100g_water: float
    mass_percent: float
    water_activity: float
    candidates: pd.DataFrame
    warnings: list = field(default_factory=list)

    def as_dict(self) -> dict:
        return {
            "salt": self.salt, "solid": self.solid, "temp_c": self.temp_c, "molality": self.molality,
            "grams_per_100g_water": self.grams_per_100g_water, "mass_percent": self.mass_percent,
            "water_activity": self.water_activity, "warnings": list(self.warnings),
        }


def salt_solids(model, salt: str) -> tuple[dict, list[int]]:
    """Ion stoichiometry of ``salt`` and indices of the solids made only of it (and water)."""
    ions = parse_salt(salt)
    vec = np.zeros(len(model.species))
    for s, n in ions.items():
        vec[model.index[s]] = n
    out = []
    for k, nu in enumerate(model.solids.nu):
        if not model.solids.has_ions[k]:
            continue
        ratio = nu / np.where(vec > 0, vec, 1.0)
        if np.all((nu > 0) == (vec > 0)) and np.allclose(ratio[vec > 0], ratio[vec > 0][0]):
            out.append(k)
    if not out:
        raise InputError("salt", salt, "a salt with at least one solid in the database "
                         f"(solids: {', '.join(model.solids.names)})")
    return ions, out


_SCAN = np.linspace(np.log(1e-7), np.log(60.0), 49)


def _saturated_molality(model, ions: dict, solid_idx: list[int], temp_c: float, tol: float = 1e-12):
    """Saturated molality of the salt for each solid in ``solid_idx`` at one temperature.

    The first root above infinite dilution is bracketed on a coarse logarithmic scan up to
    60 mol/kg (the function is not monotonic at extreme molality, where the model leaves its
    range), then refined by Newton's method on x = ln m with a bisection safeguard.

    Returns (molality array, ln a_w array); NaN where the solid does not saturate below 60 mol/kg.
    """
    k = len(solid_idx)
    vec = _vec(model, ions)
    nu = model.solids.nu[solid_idx]
    scale = (nu @ vec) / (vec @ vec)  # formula units of salt per formula unit of solid
    nw = model.solids.nw[solid_idx]
    ln_k = model.solids.ln_k(temp_c)[solid_idx]
    with np.errstate(divide="ignore"):
        ln_vec = np.where(vec > 0, np.log(np.where(vec > 0, vec, 1.0)), 0.0)

    def resid(x, sc, w, lk):
        rows = np.exp(x)[:, None] * vec[None, :]
        ln_g, _, ln_aw, _, _ = model.compute(rows, temp_c)
        ln_iap = (x[:, None] + ln_vec[None, :] + ln_g) @ vec
        return sc * ln_iap + w * ln_aw - lk, ln_aw

    ns = len(_SCAN)
    f_scan, _ = resid(np.tile(_SCAN, k), np.repeat(scale, ns), np.repeat(nw, ns), np.repeat(ln_k, ns))
    f_scan = f_scan.reshape(k, ns)
    pos = f_scan > 0
    first = np.where(pos.any(axis=1), pos.argmax(axis=1), -1)
    found = first > 0
    lo = np.where(found, _SCAN[np.maximum(first - 1, 0)], np.nan)
    hi = np.where(found, _SCAN[np.maximum(first, 0)], np.nan)
    x = 0.5 * (lo + hi)
    h = 1e-6
    if found.any():
        sel = np.flatnonzero(found)
        xs, los, his = x[sel], lo[sel], hi[sel]
        for _ in range(60):
            fx, _ = resid(np.concatenate([xs, xs + h]), np.tile(scale[sel], 2), np.tile(nw[sel], 2),
                          np.tile(ln_k[sel], 2))
            f0, df = fx[: len(sel)], (fx[len(sel):] - fx[: len(sel)]) / h
            if np.all(np.abs(f0) < tol):
                break
            up = f0 > 0
            his = np.where(up, xs, his)
            los = np.where(~up, xs, los)
            with np.errstate(divide="ignore", invalid="ignore"):
                xn = xs - f0 / df
            bad = ~np.isfinite(xn) | (xn <= los) | (xn >= his)
            xs = np.where(bad, 0.5 * (los + his), xn)
        else:
            raise ConvergenceError(
                f"solubility did not converge at {temp_c} °C", {"ln_m": xs.tolist(), "residual": f0.tolist()}
            )
        x[sel] = xs
    m = np.exp(x)
    ln_aw = np.full(k, np.nan)
    if found.any():
        ln_aw[found] = model.compute(m[found][:, None] * vec[None, :], temp_c)[2]
    return m, ln_aw


def _check_temp(temp_c) -> float:
    try:
        t = float(temp_c)
    except (TypeError, ValueError):
        raise InputError("temp_c", temp_c, "a temperature in °C") from None
    if not np.isfinite(t):
        raise InputError("temp_c", temp_c, "a finite temperature in °C")
    return t


def solubility(salt: str, temp_c: float, model=None) -> SolubilityResult:
    """Solubility of a salt in pure water at ``temp_c``, with its stable solid.

    Parameters
    ----------
    salt : str
        Salt formula (``"KCl"``, ``"Na2SO4"``) or the name of one of its solids.
    temp_c : float
        Temperature in °C.

    Returns
    -------
    SolubilityResult

    Raises
    ------
    InputError
        Unknown salt, or a salt with no solid in the database.
    RangeError
        A temperature outside the validity range of every solid of the salt.
    """
    from phasekit.model import default_model

    model = model or default_model()
    t = _check_temp(temp_c)
    salt_name = salt
    try:
        ions, idx = salt_solids(model, salt)
    except InputError:
        # a solid name: use its salt
        try:
            solid = model.solids[salt]
        except InputError:
            raise InputError("salt", salt, "a salt formula such as 'KCl' or a solid of the database") from None
        salt_name = _formula_of_ions(solid.ions)
        ions, idx = salt_solids(model, salt_name)
        idx = [model.solids.index[solid.name]]
    rng = model.solids.t_range[idx]
    ok = (t >= rng[:, 0]) & (t <= rng[:, 1])
    if not ok.any():
        lo, hi = float(rng[:, 0].min()), float(rng[:, 1].max())
        raise RangeError("temp_c", t, f"a temperature within the data of {salt_name}: {lo:g}–{hi:g} °C")
    idx_ok = [i for i, good in zip(idx, ok) if good]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        m, ln_aw = _saturated_molality(model, ions, idx_ok, t)
    if np.all(np.isnan(m)):
        raise ConvergenceError(f"no solid of {salt_name} saturates below 60 mol/kg at {t:g} °C", {})
    best = int(np.nanargmin(m))
    k = idx_ok[best]
    solid = model.solids.solids[k]
    vec_sum = sum(ions.values())
    scale = float(model.solids.nu[k].sum() / vec_sum)
    molality = float(m[best] * 1.0)  # mol of salt formula per kg water
    mw = salt_formula_mass(salt_name)
    g100 = molality * mw / 10.0
    mass_pct = 100.0 * molality * mw / (1000.0 + molality * mw)
    warns = []
    if t - solid.t_min_c < EDGE_MARGIN_C or solid.t_max_c - t < EDGE_MARGIN_C:
        warns.append(f"{t:g} °C is near the edge of the validity range of {solid.name} "
                     f"({solid.t_min_c:g}–{solid.t_max_c:g} °C)")
    warns += model._validity(m[best] * np.array([_vec(model, ions)]), t, np.array([0.0]))
    for w in warns:
        warn_validity(w)
    cand = pd.DataFrame(
        {"solid": [model.solids.names[i] for i in idx_ok], "molality": m, "water_activity": np.exp(ln_aw)}
    ).set_index("solid")
    del scale
    return SolubilityResult(salt_name, solid.name, t, molality, g100, mass_pct, float(np.exp(ln_aw[best])),
                            cand, warns)


def _vec(model, ions):
    v = np.zeros(len(model.species))
    for s, n in ions.items():
        v[model.index[s]] = n
    return v


def _formula_of_ions(ions: dict) -> str:
    from phasekit.chemistry.species import SPECIES

    (c, nc), (a, na) = sorted(ions.items(), key=lambda kv: -SPECIES[kv[0]].charge)
    g = np.gcd(int(nc), int(na))
    nc, na = int(nc) // g, int(na) // g
    an = f"({a})" if na > 1 and len(a) > 2 else a
    return f"{c}{nc if nc > 1 else ''}{an}{na if na > 1 else ''}"


def polytherm(salt: str, t_min_c: float = 0.0, t_max_c: float = 100.0, step_c: float = 1.0, model=None):
    """Solubility of a salt from ``t_min_c`` to ``t_max_c``, with its transition temperatures.

    Returns
    -------
    (curve, transitions) : tuple of DataFrames
        ``curve``: temp_c, solid (stable), molality, grams_per_100g_water, mass_percent,
        water_activity, one row per temperature of the grid plus one at each transition.
        ``transitions``: temp_c, solid_below, solid_above, molality (both solids saturated),
        each found by root-finding on ln m_a(T) - ln m_b(T).
    """
    from phasekit.model import default_model

    model = model or default_model()
    t0, t1 = _check_temp(t_min_c), _check_temp(t_max_c)
    if not t1 > t0:
        raise InputError("t_max_c", t_max_c, f"a temperature above t_min_c = {t0:g}")
    if not (np.isfinite(step_c) and step_c > 0):
        raise InputError("step_c", step_c, "a positive step in °C")
    ions, idx = salt_solids(model, salt)
    salt_name = _formula_of_ions(ions)
    mw = salt_formula_mass(salt_name)
    grid = np.unique(np.concatenate([np.arange(t0, t1, step_c), [t1]]))

    def solve(t):
        rng = model.solids.t_range[idx]
        # solids are considered within their validity range, widened by the edge margin
        ok = [i for i, (lo, hi) in zip(idx, rng) if lo - EDGE_MARGIN_C <= t <= hi + EDGE_MARGIN_C]
        if not ok:
            return None
        m, ln_aw = _saturated_molality(model, ions, ok, t)
        return dict(zip([model.solids.names[i] for i in ok], zip(m, ln_aw)))

    rows = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        sols = [solve(t) for t in grid]
        if any(s is None for s in sols):
            bad = grid[[s is None for s in sols]][0]
            raise RangeError("temp_c", float(bad), f"temperatures within the data of {salt_name}")
        stable = [min((n for n in s if np.isfinite(s[n][0])), key=lambda n: s[n][0]) for s in sols]
        transitions = []
        for i in range(len(grid) - 1):
            a, b = stable[i], stable[i + 1]
            if a == b:
                continue

            def diff(t, a=a, b=b):
                s = _saturated_molality(model, ions, [model.solids.index[a], model.solids.index[b]], t)[0]
                return np.log(s[0]) - np.log(s[1])

            tt = brentq(diff, grid[i], grid[i + 1], xtol=1e-6)
            m_t = _saturated_molality(model, ions, [model.solids.index[a]], tt)
            transitions.append({"temp_c": tt, "solid_below": a, "solid_above": b, "molality": float(m_t[0][0]),
                                "water_activity": float(np.exp(m_t[1][0]))})
    for t, s, st in zip(grid, sols, stable):
        m, ln_aw = s[st]
        rows.append({"temp_c": t, "solid": st, "molality": m, "water_activity": np.exp(ln_aw)})
    for tr in transitions:
        for st in (tr["solid_below"], tr["solid_above"]):
            rows.append({"temp_c": tr["temp_c"], "solid": st, "molality": tr["molality"],
                         "water_activity": tr["water_activity"]})
    curve = pd.DataFrame(rows).sort_values(["temp_c"], kind="stable").reset_index(drop=True)
    curve["grams_per_100g_water"] = curve["molality"] * mw / 10.0
    curve["mass_percent"] = 100.0 * curve["molality"] * mw / (1000.0 + curve["molality"] * mw)
    return curve, pd.DataFrame(transitions, columns=["temp_c", "solid_below", "solid_above", "molality",
                                                     "water_activity"])
