"""One regression of the database's temperature functions on the published measurements.

Every role=fit row of the reference set (:mod:`phasekit.calibration.measurements`) gives equations:

* a liquid saturated with solids S1..Sk gives, for each solid, the condition ln IAP_S(m, T) = ln K_S(T),
  written as a residual in ln m: (ln IAP - ln K) / (∂ ln IAP / ∂ ln s), s scaling the whole composition,
  which to first order is the relative error of the saturated concentration (the measured quantity);
* a water activity gives ln a_w(model) - ln a_w(measured); an osmotic coefficient φ(model) - φ(measured).

ln IAP, ln a_w and φ of the Pitzer model are linear in every coefficient of the temperature functions of
β0, β1, β2, C^φ, θ and ψ (the E-θ terms do not depend on them), and ln K is linear in its own coefficients,
so the fit of all selected coefficients together is one weighted linear least-squares problem (exactly
linear for ln a_w and φ; for the saturation conditions up to the scaling slope, taken at the present values),
solved in one step with no starting guess: running it twice gives the same numbers. Each residual is
divided by its standard uncertainty (the measurement's stated one where the file gives a relative one,
otherwise the default of its kind below), and each fitted coefficient has a Gaussian prior centred on its
present value (a ridge term) with the scale of its kind, so that coefficients the data do not determine stay
where they were instead of taking arbitrary values.

The coefficients to fit, the solids to add and the priors are set in ``data/reference/regression.toml``.
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.errors import InputError, ValidityWarning
from phasekit.fitting import parameter_value, with_parameters
from phasekit.thermo import tempfn

#: default standard uncertainties of a residual, by kind of measurement
DEFAULT_SIGMA = {"invariant": 0.02, "saturation": 0.015, "univariant": 0.02,
                 "water_activity": 0.003, "osmotic_coefficient": 0.005}


@dataclass
class RegressionResult:
    """Result of :func:`regress`.

    Attributes
    ----------
    names : list of str
        Fitted coefficients, e.g. ``"psi:K:Mg:SO4:a1"``, ``"lnk:schoenite:a3"``.
    before, after, stderr : ndarray
        Values before and after the fit, and the standard errors (from the weighted normal equations).
    model : Model
        The model with the fitted values.
    residuals : pandas.DataFrame
        One row per equation: file, line, system, temp_c, kind, solid, residual before and after (ln m,
        or ln a_w, or φ), sigma.
    notes : list of str
    """

    names: list
    before: np.ndarray
    after: np.ndarray
    stderr: np.ndarray
    model: object
    residuals: pd.DataFrame
    notes: list = field(default_factory=list)


def parse_coefficient(name: str) -> tuple:
    """A coefficient name of the regression as a :func:`phasekit.fitting.with_parameters` spec.

    ``"lnk:schoenite:a3"`` -> ``("lnk", "schoenite", "a3")``; ``"psi:K:Mg:SO4:a1"`` ->
    ``("psi", "K", "Mg", "SO4", "a1")``; ``"beta0:K:SO4:a1"`` -> ``("beta0", "K", "SO4", "a1")``.
    """
    parts = tuple(p.strip() for p in str(name).split(":"))
    if len(parts) < 3 or parts[-1] not in tempfn.COEFFS:
        raise InputError("coefficient", name, "'kind:species...:a0..a4', e.g. 'psi:K:Mg:SO4:a1'")
    return parts


def _sigma_of(row) -> float:
    """The default of the row's kind, or a larger stated relative uncertainty ("ur=0.05") of a composition."""
    sigma = DEFAULT_SIGMA[row.kind]
    rel = re.match(r"\s*ur\s*=\s*([0-9.]+)", str(row.uncertainty))
    if rel and row.kind in ("invariant", "saturation", "univariant"):
        sigma = max(sigma, float(rel.group(1)))
    return sigma


def equations(model, rows: pd.DataFrame) -> tuple[pd.DataFrame, list]:
    """The equations of the rows that the model can express.

    Returns the table of equations (row data, ``solid`` or the property, ``sigma``) and notes on the
    rows left out (a solid or species unknown to the model).
    """
    eq, notes = [], []
    species = set(model.species)
    for row in rows.itertuples():
        where = f"{row.file} row {row.line} ({row.system}, {row.temp_c:g} °C)"
        if set(row.molalities) - species:
            notes.append(f"{where}: species {sorted(set(row.molalities) - species)} not in the model")
            continue
        if not row.molalities:
            notes.append(f"{where}: no composition (a transition or a saturated solution's property), not fitted")
            continue
        if row.kind in ("water_activity", "osmotic_coefficient"):
            if not np.isfinite(row.value):
                notes.append(f"{where}: no value")
                continue
            eq.append({**row._asdict(), "solid": row.kind, "sigma": _sigma_of(row)})
            continue
        if row.kind not in DEFAULT_SIGMA:
            notes.append(f"{where}: kind {row.kind} not fitted")
            continue
        for s in row.solid_list:
            try:
                name = model.solids.resolve(s)
            except InputError:
                notes.append(f"{where}: solid {s} not in the database")
                continue
            eq.append({**row._asdict(), "solid": name, "sigma": _sigma_of(row)})
    return pd.DataFrame(eq), notes


def residuals(model, eqs: pd.DataFrame) -> np.ndarray:
    """Residuals of the equations (unweighted): ln m for saturation, ln a_w or φ for properties."""
    out = np.empty(len(eqs))
    if eqs.empty:
        return out
    m = np.zeros((len(eqs), len(model.species)))
    for r, mol in enumerate(eqs["molalities"]):
        for s, v in mol.items():
            m[r, model.index[s]] = v
    temps = eqs["temp_c"].to_numpy(float)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for t in np.unique(temps):
            sel = np.flatnonzero(temps == t)
            mm = m[sel]
            ln_g, osm, ln_aw, _, _ = model.compute(mm, float(t))
            lnk = model.solids.ln_k(float(t))
            eps = 1e-4
            ln_g2, _, ln_aw2, _, _ = model.compute(mm * (1.0 + eps), float(t))
            iap = model.solids.ln_iap(mm, ln_g, ln_aw)
            iap2 = model.solids.ln_iap(mm * (1.0 + eps), ln_g2, ln_aw2)
            for k, r in enumerate(sel):
                kind, solid = eqs["kind"].iat[r], eqs["solid"].iat[r]
                if kind == "water_activity":
                    out[r] = ln_aw[k] - np.log(eqs["value"].iat[r])
                elif kind == "osmotic_coefficient":
                    out[r] = osm[k] - eqs["value"].iat[r]
                else:
                    j = model.solids.index[solid]
                    slope = (iap2[k, j] - iap[k, j]) / np.log1p(eps)
                    out[r] = (iap[k, j] - lnk[j]) / slope
    return out


def regress(model, rows: pd.DataFrame, coefficients: list[str], prior_scale: dict) -> RegressionResult:
    """Fit ``coefficients`` to the fit rows ``rows`` (one weighted linear least-squares solve).

    Parameters
    ----------
    model : Model
        The model holding every value (and the new solids, with starting rows).
    rows : pandas.DataFrame
        Measurements from :func:`phasekit.calibration.measurements.read_measurements` (role=fit only).
    coefficients : list of str
        Names as in :func:`parse_coefficient`.
    prior_scale : dict
        Prior standard deviation of a coefficient's change, by ``"<kind>:<coefficient>"`` (e.g.
        ``"psi:a1"``, ``"lnk:a3"``); each coefficient needs one.

    Returns
    -------
    RegressionResult
    """
    eqs, notes = equations(model, rows)
    if eqs.empty:
        raise InputError("rows", len(rows), "fit rows that the model can express")
    specs = [parse_coefficient(c) for c in coefficients]
    x0 = np.array([parameter_value(model, s) for s in specs])
    r0 = residuals(model, eqs)
    w = 1.0 / eqs["sigma"].to_numpy(float)
    # the model is linear in every coefficient: a unit step gives the exact column of the Jacobian
    jac = np.empty((len(eqs), len(specs)))
    for k, spec in enumerate(specs):
        step = max(abs(x0[k]) * 1e-3, 1e-6 if spec[-1] in ("a1", "a2") else 1e-3)
        moved = with_parameters(model, [spec], [x0[k] + step])
        jac[:, k] = (residuals(moved, eqs) - r0) / step
    tau = np.empty(len(specs))
    for k, spec in enumerate(specs):
        key = f"{spec[0]}:{spec[-1]}"
        if key not in prior_scale:
            raise InputError("prior_scale", key, f"a prior scale for every kind of fitted coefficient ({coefficients[k]})")
        tau[k] = float(prior_scale[key])
    a = np.vstack([jac * w[:, None], np.diag(1.0 / tau)])
    b = np.concatenate([-r0 * w, np.zeros(len(specs))])
    dx, *_ = np.linalg.lstsq(a, b, rcond=None)
    cov = np.linalg.pinv(a.T @ a)
    x = x0 + dx
    fitted = with_parameters(model, specs, x)
    r1 = residuals(fitted, eqs)
    table = eqs[["file", "line", "system", "temp_c", "kind", "solid", "reference", "sigma"]].copy()
    table["before"], table["after"] = r0, r1
    return RegressionResult([":".join(s) for s in specs], x0, x, np.sqrt(np.diag(cov)), fitted, table, notes)
