"""Saturation states of a brine with respect to every solid of the database.

Saturation index SI = log10(IAP / K), with the ion activity product including the water
activity for hydrates (HMW84 eq. 1). State: ``saturated`` when |SI| <= SI_TOLERANCE,
``supersaturated`` above, ``undersaturated`` below.

For a single brine the table also gives, for each solid, the amount of it that could still
dissolve (positive) or would have to crystallize (negative) for the brine to reach saturation
with that solid alone: the root ξ of SI_k(brine + ξ·solid_k) = 0, hydrate water included.
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.common import composition_array, frame_array
from phasekit.errors import InputError, ValidityWarning, warn_validity

#: |SI| within this band counts as saturated (log10 units; about 1 % in the activity product,
#: below the uncertainty of the solubility products themselves)
SI_TOLERANCE = 0.005
LN10 = np.log(10.0)


def states(si) -> np.ndarray:
    """State names for saturation indices."""
    si = np.asarray(si, dtype=float)
    return np.where(si > SI_TOLERANCE, "supersaturated", np.where(si < -SI_TOLERANCE, "undersaturated", "saturated"))


def saturation_indices(model, m: np.ndarray, temp_c: float) -> np.ndarray:
    """SI (N, n_solids) for composition rows ``m`` (-inf where a solid's ion is absent)."""
    ln_g, _, ln_aw, _, _ = model.compute(m, temp_c)
    si = (model.solids.ln_iap(m, ln_g, ln_aw) - model.solids.ln_k(temp_c)[None, :]) / LN10
    # ice has no saturation index in a warm brine (its ln K is not extrapolated above its range)
    warm = ~model.solids.has_ions & (temp_c > model.solids.t_range[:, 1] + 0.5)
    if warm.any():
        si[:, warm] = -np.inf
    return si


def _amount_to_saturation(model, m0: np.ndarray, temp_c: float, si0: np.ndarray) -> np.ndarray:
    """ξ_k (mol of solid k per kg of the brine's water) bringing SI_k to 0, for every solid.

    Newton on ξ with a bracket: ξ in (-ξ_max, ξ_high), ξ_max = the most that the brine holds.
    NaN where the solid's ions are absent.
    """
    nu, nw = model.solids.nu, model.solids.nw
    ns = len(nu)
    ok = np.isfinite(si0)
    with np.errstate(divide="ignore", invalid="ignore"):
        lim = np.where(nu > 0, m0[None, :] / nu, np.inf).min(axis=1)  # most that can crystallize
    lo = np.where(ok, -lim * (1 - 1e-12), np.nan)
    hi = np.full(ns, 60.0)
    x = np.zeros(ns)
    k_idx = np.arange(ns)
    ln_k = model.solids.ln_k(temp_c)

    def si_of(xv, rows_k):
        w = 1.0 + nw[rows_k] * M_WATER * xv
        mm = (m0[None, :] + nu[rows_k] * xv[:, None]) / np.maximum(w, 1e-12)[:, None]
        mm = np.maximum(mm, 0.0)
        ln_g, _, ln_aw, _, _ = model.compute(mm, temp_c)
        li = model.solids.ln_iap(mm, ln_g, ln_aw)[np.arange(len(rows_k)), rows_k]
        return li - ln_k[rows_k]

    sel = k_idx[ok & (np.abs(si0) > 1e-13)]
    xs, los, his = x[sel], lo[sel], hi[sel]
    h = 1e-7
    for _ in range(100):
        if len(sel) == 0:
            break
        f = si_of(np.concatenate([xs, xs + h]), np.concatenate([sel, sel]))
        f0, df = f[: len(sel)], (f[len(sel):] - f[: len(sel)]) / h
        done = np.abs(f0) < 1e-10
        if done.all():
            break
        # f increases with ξ (adding the solid raises its own IAP)
        his = np.where(f0 > 0, xs, his)
        los = np.where(f0 <= 0, xs, los)
        with np.errstate(divide="ignore", invalid="ignore"):
            xn = xs - f0 / df
        bad = ~np.isfinite(xn) | (xn <= los) | (xn >= his)
        xs = np.where(done, xs, np.where(bad, 0.5 * (los + his), xn))
    x[sel] = xs
    x[~ok] = np.nan
    # not reached within the bracket (e.g. ice above 0 °C: adding water never saturates it)
    if len(sel):
        f = si_of(xs, sel)
        x[sel[np.abs(f) > 1e-8]] = np.nan
    return x


def saturation(model, brine, temp_c: float, amounts: bool | None = None, exclude=()) -> pd.DataFrame:
    """Saturation state of a brine (or of many) with respect to every solid.

    Parameters
    ----------
    brine : Brine, mapping or pandas.DataFrame
        One brine (mol per kg water), or a DataFrame with one composition per row.
    temp_c : float
        Temperature, °C.
    amounts : bool, optional
        Also compute the amount of each solid that could dissolve or must crystallize
        (default: yes for one brine, no for a DataFrame).
    exclude : sequence of str, optional
        Solids left out of the table (kept out of a process); recorded in ``.attrs["exclude"]``.

    Returns
    -------
    pandas.DataFrame
        One brine: indexed by solid, columns ``saturation_index``, ``state``, ``formula``,
        and (with amounts) ``dissolvable_mol_per_kg_water`` (negative: must crystallize) and
        ``dissolvable_g_per_kg_water``. A DataFrame of brines: one row per brine, one column of
        saturation index per solid (states with :func:`states`).
        ``.attrs["warnings"]`` lists validity warnings.
    """
    from phasekit.equilibrium.common import excluded_solids

    excl = excluded_solids(model, exclude)
    if isinstance(brine, pd.DataFrame):
        m = frame_array(model, brine)
        model._check(m, temp_c, brine.index)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            si = saturation_indices(model, m, float(temp_c))
        out = pd.DataFrame(si, index=brine.index, columns=model.solids.names)
        out = out.drop(columns=excl)
        out.attrs["exclude"] = excl
        out.attrs["warnings"] = model._validity(m, temp_c, np.zeros(1))
        out.attrs["database"] = getattr(model, "label", "embedded database")
        if amounts:
            raise InputError("amounts", amounts, "False for a DataFrame of brines (amounts are computed per brine: "
                             "call saturation() with one brine)")
        return out
    m0 = composition_array(model, brine)
    model._check(m0[None, :], temp_c, None)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        si = saturation_indices(model, m0[None, :], float(temp_c))[0]
        ion = model.compute(m0[None, :], float(temp_c))[3]
    warns = model._validity(m0[None, :], temp_c, ion)
    rng = model.solids.t_range
    for k, name in enumerate(model.solids.names):
        # only for solids near or above saturation, where the value matters
        if np.isfinite(si[k]) and si[k] > -0.5 and not (rng[k, 0] <= temp_c <= rng[k, 1]) and name not in excl:
            warns.append(f"{name}: {temp_c:g} °C outside the validity range {rng[k, 0]:g}–{rng[k, 1]:g} °C "
                         "of its solubility product")
    for w in warns:
        warn_validity(w)
    out = pd.DataFrame(
        {"saturation_index": si, "state": states(si), "formula": [s.formula for s in model.solids.solids]},
        index=pd.Index(model.solids.names, name="solid"),
    )
    if amounts is None or amounts:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            xi = _amount_to_saturation(model, m0, float(temp_c), si)
        masses = np.array([_solid_mass(s) for s in model.solids.solids])
        out["dissolvable_mol_per_kg_water"] = xi
        out["dissolvable_g_per_kg_water"] = xi * masses
    out = out[np.isfinite(out["saturation_index"]) & ~out.index.isin(excl)]
    out.attrs["exclude"] = excl
    out.attrs["warnings"] = warns
    out.attrs["database"] = getattr(model, "label", "embedded database")
    return out


def _solid_mass(solid) -> float:
    """Molar mass (g/mol) of a solid from its stoichiometry."""
    from phasekit.chemistry.species import SPECIES

    total = 0.0
    for k, v in solid.stoichiometry.items():
        total += v * (M_WATER * 1000.0 if k == "H2O" else SPECIES[k].molar_mass)
    return total
