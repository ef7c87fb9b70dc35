"""Solubility of a single salt in water, and its polytherm.

The saturated molality m of a salt M_p X_q whose solid is S = k (p M + q X) + n H2O solves

    k [p ln(p m γ_M) + q ln(q m γ_X)] + n ln a_w = ln K_S(T),

found by a safeguarded Newton iteration on ln m after a logarithmic scan has bracketed the
first root above infinite dilution. Of the solids made of that salt (its hydrates and its
anhydrous form), the stable one at a temperature is the least soluble: every solid of the salt
takes part, whatever its validity range, so that thermodynamics and not the range of the data
decides the stable solid; a solid used outside its range carries a warning. Transition
temperatures are found by root-finding (``scipy.optimize.brentq``) on the difference of the ln m
of two solids, not read off a grid.

References: Pitzer 1991, "Activity Coefficients in Electrolyte Solutions", 2nd ed., ch. 3
(activity model); Harvie, Møller & Weare 1984, Geochim. Cosmochim. Acta 48, 723 (solubility
products with the same model).
"""

from __future__ import annotations

import math
import warnings
import weakref
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.optimize import brentq, minimize_scalar

from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.errors import ConvergenceError, InputError, RangeError, ValidityWarning, warn_validity

#: warn when the temperature is this close (°C) to the edge of the chosen solid's range
EDGE_MARGIN_C = 2.0
#: highest molality searched (mol/kg water); beyond it the Pitzer model is far outside its data
M_SEARCH_MAX = 60.0

# logarithmic scan of ln m: coarse in the dilute range, 0.15 apart from 0.05 mol/kg up
_SCAN = np.unique(np.concatenate([np.linspace(math.log(1e-7), math.log(0.05), 15),
                                  np.arange(math.log(0.05), math.log(M_SEARCH_MAX), 0.15),
                                  [math.log(M_SEARCH_MAX)]]))


@dataclass
class SolubilityResult:
    """Solubility of a salt at one temperature.

    Attributes
    ----------
    salt : str
    solid : str
        Stable solid in equilibrium with the saturated solution (or the solid asked for).
    temp_c : float
    molality : float
        mol of anhydrous salt per kg water.
    grams_per_100g_water : float
        g of anhydrous salt per 100 g water.
    mass_percent : float
        Anhydrous salt, per cent of solution mass.
    water_activity : float
    warnings : list of str
        Validity-range warnings (also emitted as :class:`~phasekit.errors.ValidityWarning`).
    candidates : pandas.DataFrame
        Saturated molality and water activity of every solid of the salt considered (the stable
        one is the lowest; NaN where a solid does not saturate below ``M_SEARCH_MAX``).
    database : str
        Database the result was computed with ("embedded database" or the overlays on it).
    """

    salt: str
    solid: str
    temp_c: float
    molality: float
    grams_per_100g_water: float
    mass_percent: float
    water_activity: float
    warnings: list = field(default_factory=list)
    _cand: tuple = field(default=((), (), ()), repr=False)
    database: str = "embedded database"

    @property
    def candidates(self) -> pd.DataFrame:
        names, m, aw = self._cand
        return pd.DataFrame({"molality": list(m), "water_activity": list(aw)},
                            index=pd.Index(list(names), name="solid"))

    def as_dict(self) -> dict:
        return {
            "salt": self.salt, "solid": self.solid, "temp_c": self.temp_c, "molality": self.molality,
            "grams_per_100g_water": self.grams_per_100g_water, "mass_percent": self.mass_percent,
            "water_activity": self.water_activity, "warnings": list(self.warnings), "database": self.database,
        }


@dataclass(frozen=True)
class _SaltInfo:
    name: str  # canonical formula, e.g. "Na2SO4"
    ions: dict
    vec: np.ndarray  # ions per formula unit of salt, in model species order
    solids: tuple  # indices of the solids made of the salt (and water)
    molar_mass: float  # g/mol of the anhydrous salt
    t_lo: float  # union of the solids' validity ranges
    t_hi: float
    pairs: tuple  # (i_cation, i_anion) of the binary parameters


_INFO: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _vec(model, ions):
    v = np.zeros(len(model.species))
    for s, n in ions.items():
        v[model.index[s]] = n
    return v


def salt_solids(model, salt: str) -> tuple[dict, list[int]]:
    """Ion stoichiometry of ``salt`` and indices of the solids made only of it (and water).

    Raises
    ------
    InputError
        Unknown salt, or a salt with no solid in the database.
    """
    ions = parse_salt(salt)
    vec = _vec(model, ions)
    out = []
    for k, nu in enumerate(model.solids.nu):
        if not model.solids.has_ions[k]:
            continue
        ratio = nu / np.where(vec > 0, vec, 1.0)
        if np.all((nu > 0) == (vec > 0)) and np.allclose(ratio[vec > 0], ratio[vec > 0][0]):
            out.append(k)
    if not out:
        single = sorted({_formula_of_ions(model.solids.solids[k].ions) for k in range(len(model.solids.names))
                         if model.solids.has_ions[k] and len(model.solids.solids[k].ions) == 2})
        raise InputError("salt", salt, "a salt with at least one solid in the database: " + ", ".join(single))
    return ions, out


def _info(model, salt: str) -> _SaltInfo:
    cache = _INFO.setdefault(model, {})
    hit = cache.get(salt)
    if hit is not None:
        return hit
    ions, idx = salt_solids(model, salt)
    name = _formula_of_ions(ions)
    rng = model.solids.t_range[idx]
    ci = {s: i for i, s in enumerate(model.cations)}
    ai = {s: i for i, s in enumerate(model.anions)}
    pairs = tuple((ci[c], ai[a]) for c in ions if c in ci for a in ions if a in ai)
    info = _SaltInfo(name, dict(ions), _vec(model, ions), tuple(idx), float(salt_formula_mass(name)),
                     float(rng[:, 0].min()), float(rng[:, 1].max()), pairs)
    cache[salt] = info
    return info


def _saturated_molality(model, ions: dict, solid_idx, temp_c: float, tol: float = 1e-11):
    """Saturated molality of the salt for each solid in ``solid_idx`` at one temperature.

    The first root above infinite dilution is bracketed on a logarithmic scan up to
    ``M_SEARCH_MAX``; where the scan shows no crossing, the highest point of the scan is refined
    by a bounded maximization, so that a narrow maximum of ln IAP (hydrates of very soluble salts,
    whose water activity falls fast) is not stepped over. The root is then refined by Newton's
    method on x = ln m with a bisection safeguard.

    Returns (molality array, ln a_w array); NaN where the solid does not saturate below
    ``M_SEARCH_MAX``.
    """
    solid_idx = list(solid_idx)
    k = len(solid_idx)
    vec = _vec(model, ions)
    nu = model.solids.nu[solid_idx]
    scale = (nu @ vec) / (vec @ vec)  # formula units of salt per formula unit of solid
    nw = model.solids.nw[solid_idx]
    ln_k = model.solids.ln_k(temp_c)[solid_idx]
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
    found = pos.any(axis=1) & ~pos[:, 0]
    first = np.where(found, pos.argmax(axis=1), 0)
    lo = np.where(found, _SCAN[np.maximum(first - 1, 0)], np.nan)
    hi = np.where(found, _SCAN[first], np.nan)
    for j in np.flatnonzero(~found & ~pos[:, 0]):
        # no crossing on the scan: look for a narrow maximum above zero near the highest scan point
        i = int(np.argmax(f_scan[j]))
        if f_scan[j, i] < -1.0 or i == 0:
            continue
        a, b = _SCAN[i - 1], _SCAN[min(i + 1, ns - 1)]

        def neg(x, j=j):
            return -resid(np.array([x]), scale[j:j + 1], nw[j:j + 1], ln_k[j:j + 1])[0][0]

        opt = minimize_scalar(neg, bounds=(a, b), method="bounded", options={"xatol": 1e-6})
        if -opt.fun > 0:
            found[j], lo[j], hi[j] = True, a, opt.x
    x = 0.5 * (lo + hi)
    h = 1e-6
    if found.any():
        sel = np.flatnonzero(found)
        xs, los, his = x[sel], lo[sel], hi[sel]
        sc2, nw2, lk2 = np.tile(scale[sel], 2), np.tile(nw[sel], 2), np.tile(ln_k[sel], 2)
        n = len(sel)
        for _ in range(80):
            fx, _ = resid(np.concatenate([xs, xs + h]), sc2, nw2, lk2)
            f0, df = fx[:n], (fx[n:] - fx[:n]) / h
            if np.all(np.abs(f0) < tol) or np.all(his - los < 1e-13):
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


def _check_temp(temp_c, name: str = "temp_c") -> float:
    if isinstance(temp_c, bool):
        raise InputError(name, temp_c, "a temperature in °C (a number)")
    try:
        t = float(temp_c)
    except (TypeError, ValueError):
        raise InputError(name, temp_c, "a temperature in °C (a number)") from None
    if not np.isfinite(t):
        raise InputError(name, temp_c, "a finite temperature in °C")
    return t


def _resolve(model, salt):
    """(_SaltInfo, solid indices to consider) from a salt formula or the name of one of its solids."""
    if not isinstance(salt, str) or not salt.strip():
        raise InputError("salt", salt, "a salt formula such as 'KCl' or a solid of the database")
    try:
        info = _info(model, salt.strip())
        return info, list(info.solids)
    except InputError as exc:
        try:
            solid = model.solids[salt]
        except InputError:
            if "at least one solid" in str(exc):
                raise exc from None
            raise InputError("salt", salt, "a salt formula such as 'KCl' or 'Na2SO4', or the name of one of "
                             "its solids such as 'mirabilite'") from None
        if len(solid.ions) != 2:
            raise InputError("salt", salt, "a solid of one cation and one anion (and water)") from None
        info = _info(model, _formula_of_ions(solid.ions))
        return info, [model.solids.index[solid.name]]


def _range_error(info, t):
    return RangeError("temp_c", t, f"a temperature within the data of {info.name}: {info.t_lo:g}–{info.t_hi:g} °C")


def _warnings(model, info, k, t, molality) -> list[str]:
    """Validity warnings of a saturated solution of ``info``'s salt with solid ``k``."""
    solid = model.solids.solids[k]
    out = []
    if t < solid.t_min_c or t > solid.t_max_c:
        out.append(f"{solid.name}: {t:g} °C outside the validity range {solid.t_min_c:g}–{solid.t_max_c:g} °C "
                   "of its solubility product (extrapolated)")
    elif t - solid.t_min_c < EDGE_MARGIN_C or solid.t_max_c - t < EDGE_MARGIN_C:
        out.append(f"{t:g} °C is near the edge of the validity range of {solid.name} "
                   f"({solid.t_min_c:g}–{solid.t_max_c:g} °C)")
    m = molality * info.vec[None, :]
    ion = 0.5 * float(m[0] @ (model.z**2))
    out += model._validity(m, t, np.array([ion]))
    for i, j in info.pairs:
        mmax = model._binary_mmax[i, j]
        if molality > mmax * (1 + 1e-9):
            out.append(f"{molality:.3g} mol/kg {info.name} above the highest molality {mmax:g} mol/kg of the data "
                       f"of the {model.cations[i]}-{model.anions[j]} parameters")
    return out


def solubility(salt: str, temp_c: float, model=None) -> SolubilityResult:
    """Solubility of a salt in pure water at ``temp_c``, with its stable solid.

    Parameters
    ----------
    salt : str
        Salt formula (``"KCl"``, ``"Na2SO4"``: its stable solid is found) or the name of one of
        its solids (``"thenardite"``: the solubility of that solid, stable or not).
    temp_c : float
        Temperature in °C.
    model : Model, optional
        The embedded database's model by default.

    Returns
    -------
    SolubilityResult

    Raises
    ------
    InputError
        Unknown salt, a salt with no solid in the database, or a temperature that is not a number.
    RangeError
        A temperature outside the validity ranges of all the solids of the salt.
    ConvergenceError
        No solid of the salt saturates below ``M_SEARCH_MAX``.
    """
    from phasekit.model import default_model

    model = model or default_model()
    t = _check_temp(temp_c)
    info, idx = _resolve(model, salt)
    if not info.t_lo <= t <= info.t_hi:
        raise _range_error(info, t)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        m, ln_aw = _saturated_molality(model, info.ions, idx, t)
        if np.all(np.isnan(m)):
            raise ConvergenceError(f"no solid of {info.name} saturates below {M_SEARCH_MAX:g} mol/kg at {t:g} °C",
                                   {"solids": [model.solids.names[i] for i in idx]})
        best = int(np.nanargmin(m))
        k = idx[best]
        molality = float(m[best])
        warns = _warnings(model, info, k, t, molality)
    for w in warns:
        warn_validity(w)
    mw = info.molar_mass
    return SolubilityResult(
        info.name, model.solids.names[k], t, molality, molality * mw / 10.0,
        100.0 * molality * mw / (1000.0 + molality * mw), float(np.exp(ln_aw[best])), warns,
        (tuple(model.solids.names[i] for i in idx), tuple(m.tolist()), tuple(np.exp(ln_aw).tolist())),
        getattr(model, "label", "embedded database"),
    )


def _formula_of_ions(ions: dict) -> str:
    from phasekit.chemistry.species import SPECIES

    (c, nc), (a, na) = sorted(ions.items(), key=lambda kv: -SPECIES[kv[0]].charge)
    g = math.gcd(int(nc), int(na))
    nc, na = int(nc) // g, int(na) // g
    an = f"({a})" if na > 1 and len(a) > 2 else a
    return f"{c}{nc if nc > 1 else ''}{an}{na if na > 1 else ''}"


def polytherm(salt: str, t_min_c: float = 0.0, t_max_c: float = 100.0, step_c: float = 1.0, model=None):
    """Solubility of a salt from ``t_min_c`` to ``t_max_c``, with its transition temperatures.

    Every solid of the salt takes part at every temperature (see the module notes); a grid
    temperature at which no solid saturates below ``M_SEARCH_MAX`` gets a row with ``solid``
    None and NaN values, and a warning.

    Returns
    -------
    (curve, transitions) : tuple of DataFrames
        ``curve``: temp_c, solid (stable), molality, grams_per_100g_water, mass_percent,
        water_activity, one row per temperature of the grid plus two at each transition (one for
        each solid). ``transitions``: temp_c, solid_below, solid_above, molality and
        water_activity of the solution saturated with both, each found by root-finding on
        ln m_a(T) - ln m_b(T). Warnings are in ``curve.attrs["warnings"]``.

    Raises
    ------
    InputError
        Bad salt, temperatures that are not numbers, t_max_c <= t_min_c, or a step that is not
        positive.
    RangeError
        A temperature interval outside the validity ranges of the salt's solids.
    """
    from phasekit.model import default_model

    model = model or default_model()
    t0, t1 = _check_temp(t_min_c, "t_min_c"), _check_temp(t_max_c, "t_max_c")
    if not t1 > t0:
        raise InputError("t_max_c", t_max_c, f"a temperature above t_min_c = {t0:g}")
    try:
        step = float(step_c)
    except (TypeError, ValueError):
        raise InputError("step_c", step_c, "a positive step in °C") from None
    if not (np.isfinite(step) and step > 0):
        raise InputError("step_c", step_c, "a positive step in °C")
    if (t1 - t0) / step > 10000:
        raise InputError("step_c", step_c, f"at most 10000 steps from {t0:g} to {t1:g} °C")
    info, idx = _resolve(model, salt)
    for name, t in (("t_min_c", t0), ("t_max_c", t1)):
        if not info.t_lo <= t <= info.t_hi:
            raise RangeError(name, t, f"a temperature within the data of {info.name}: {info.t_lo:g}–{info.t_hi:g} °C")
    names = [model.solids.names[i] for i in idx]
    grid = np.unique(np.concatenate([np.arange(t0, t1, step), [t1]]))
    warns: list[str] = []

    def ln_m_of(t, ks):
        return np.log(_saturated_molality(model, info.ions, ks, t)[0])

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        sols = [_saturated_molality(model, info.ions, idx, float(t)) for t in grid]
        stable = []
        for t, (m, _) in zip(grid, sols):
            if np.all(np.isnan(m)):
                stable.append(None)
                warns.append(f"no solid of {info.name} saturates below {M_SEARCH_MAX:g} mol/kg at {t:g} °C")
            else:
                stable.append(int(np.nanargmin(m)))
        transitions = []
        for i in range(len(grid) - 1):
            a, b = stable[i], stable[i + 1]
            if a is None or b is None or a == b:
                continue
            ka, kb = idx[a], idx[b]
            da = sols[i][0][a], sols[i][0][b]
            db = sols[i + 1][0][a], sols[i + 1][0][b]
            if not np.all(np.isfinite(da + db)):
                warns.append(f"{names[a]} -> {names[b]} between {grid[i]:g} and {grid[i + 1]:g} °C: one of the two "
                             "solids does not saturate at an end of the interval; transition not located")
                continue
            tt = brentq(lambda t, ka=ka, kb=kb: float(np.subtract(*ln_m_of(t, [ka, kb]))),
                        grid[i], grid[i + 1], xtol=1e-6)
            m_t, ln_aw_t = _saturated_molality(model, info.ions, [ka], tt)
            transitions.append({"temp_c": tt, "solid_below": names[a], "solid_above": names[b],
                                "molality": float(m_t[0]), "water_activity": float(np.exp(ln_aw_t[0]))})
    for w in dict.fromkeys(warns):
        warn_validity(w)
    rows = []
    for t, (m, ln_aw), st in zip(grid, sols, stable):
        if st is None:
            rows.append({"temp_c": float(t), "solid": None, "molality": np.nan, "water_activity": np.nan})
        else:
            rows.append({"temp_c": float(t), "solid": names[st], "molality": float(m[st]),
                         "water_activity": float(np.exp(ln_aw[st]))})
    for tr in transitions:
        for st in (tr["solid_below"], tr["solid_above"]):
            rows.append({"temp_c": tr["temp_c"], "solid": st, "molality": tr["molality"],
                         "water_activity": tr["water_activity"]})
    curve = pd.DataFrame(rows).sort_values(["temp_c"], kind="stable").reset_index(drop=True)
    mw = info.molar_mass
    curve["grams_per_100g_water"] = curve["molality"] * mw / 10.0
    curve["mass_percent"] = 100.0 * curve["molality"] * mw / (1000.0 + curve["molality"] * mw)
    curve.attrs["warnings"] = list(dict.fromkeys(warns))
    return curve, pd.DataFrame(transitions, columns=["temp_c", "solid_below", "solid_above", "molality",
                                                     "water_activity"])
