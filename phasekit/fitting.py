"""Regression of database parameters on solubility measurements (scipy least squares).

Two kinds of fit:

* :func:`fit_ln_k` — the coefficients of ln K(T) of one solid (temperature function of
  :mod:`phasekit.thermo.tempfn`) from compositions saturated with it: the target of each point
  is its ion activity product computed with the activity model, so the fit is linear in the
  coefficients.
* :func:`fit_parameters` — Pitzer parameters (θ, ψ, or a binary β/C^φ) from compositions saturated
  with known solids: residuals ln IAP - ln K of every solid at every point, non-linear least
  squares with a finite-difference Jacobian.

Both return a :class:`FitResult` with the parameter covariance s² (JᵀJ)⁻¹, s² = SSR / (n - p).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.optimize import least_squares

from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.errors import InputError, ValidityWarning
from phasekit.thermo import tempfn


@dataclass
class FitResult:
    """Result of a fit.

    Attributes
    ----------
    parameters : dict
        Fitted values by name.
    covariance : pandas.DataFrame
        Parameter covariance (NaN when the fit has no degrees of freedom).
    stderr : dict
        Standard errors (square roots of the covariance diagonal).
    residuals : ndarray
        ln IAP - ln K at each data point (dimensionless).
    rms : float
    n_points, dof : int
    notes : list of str
    """

    parameters: dict
    covariance: pd.DataFrame
    stderr: dict
    residuals: np.ndarray
    rms: float
    n_points: int
    dof: int
    notes: list = field(default_factory=list)


def data_molalities(model, data: pd.DataFrame) -> np.ndarray:
    """Molality array (N, n_species) from a table of measurements.

    Columns: species molalities (``Na``, ``Cl``, ...), or ``salt`` with one of ``molality``,
    ``mass_percent``, ``grams_per_100g_water`` (binary solutions).
    """
    if not isinstance(data, pd.DataFrame) or data.empty:
        raise InputError("data", type(data).__name__ if not isinstance(data, pd.DataFrame) else "empty table",
                         "a non-empty table of measurements")
    if "temp_c" not in data.columns:
        raise InputError("data", list(data.columns), "a 'temp_c' column")
    m = np.zeros((len(data), len(model.species)))
    if "salt" in data.columns:
        for r, row in enumerate(data.itertuples()):
            ions = parse_salt(row.salt)
            mw = salt_formula_mass(row.salt)
            if "molality" in data.columns and pd.notna(getattr(row, "molality", np.nan)):
                mol = float(row.molality)
            elif "mass_percent" in data.columns:
                w = float(row.mass_percent)
                if not 0 < w < 100:
                    raise InputError(f"data row {r} mass_percent", w, "a mass percent between 0 and 100")
                mol = 1000.0 * w / ((100.0 - w) * mw)
            elif "grams_per_100g_water" in data.columns:
                mol = 10.0 * float(row.grams_per_100g_water) / mw
            else:
                raise InputError("data", list(data.columns), "'molality', 'mass_percent' or 'grams_per_100g_water'")
            for s, n in ions.items():
                m[r, model.index[s]] = n * mol
    else:
        known = False
        for c in data.columns:
            try:
                s = model.db.parse_species(c)
            except InputError:
                continue
            known = True
            m[:, model.index[s]] = pd.to_numeric(data[c], errors="raise").to_numpy(float)
        if not known:
            raise InputError("data", list(data.columns), "species molality columns or a 'salt' column")
    if not np.all(np.isfinite(m)) or np.any(m < 0):
        raise InputError("data", "negative or non-finite value", "molalities >= 0")
    return m


def _ln_iap(model, m, temps, solid_idx):
    out = np.empty(len(m))
    for t in np.unique(temps):
        sel = temps == t
        ln_g, _, ln_aw, _, _ = model.compute(m[sel], float(t))
        out[sel] = model.solids.ln_iap(m[sel], ln_g, ln_aw)[:, solid_idx]
    return out


def _covariance(jac, resid, names):
    n, p = jac.shape
    dof = n - p
    if dof <= 0:
        cov = np.full((p, p), np.nan)
    else:
        s2 = float(resid @ resid) / dof
        cov = s2 * np.linalg.pinv(jac.T @ jac)
    return pd.DataFrame(cov, index=names, columns=names), dof


def fit_ln_k(solid: str, data: pd.DataFrame, terms=("a0", "a3", "a4"), model=None) -> FitResult:
    """Fit the ln K(T) coefficients ``terms`` of ``solid`` to compositions saturated with it.

    Coefficients not in ``terms`` are set to zero. Raises :class:`InputError` when there are
    fewer points than terms; with exactly as many, the covariance is NaN (noted).
    """
    from phasekit.model import default_model

    model = model or default_model()
    name = model.solids.resolve(solid)
    bad = [t for t in terms if t not in tempfn.COEFFS]
    if bad or not terms:
        raise InputError("terms", terms, f"a non-empty subset of {tempfn.COEFFS}")
    m = data_molalities(model, data)
    temps = pd.to_numeric(data["temp_c"], errors="raise").to_numpy(float)
    if len(m) < len(terms):
        raise InputError("data", f"{len(m)} points", f"at least {len(terms)} points to fit {list(terms)}")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        target = _ln_iap(model, m, temps, model.solids.index[name])
    if not np.all(np.isfinite(target)):
        raise InputError("data", "a composition without an ion of " + name, f"compositions containing {name}'s ions")
    cols = [tempfn.COEFFS.index(t) for t in terms]
    basis = tempfn.basis(temps + 273.15)[:, cols]
    sol = least_squares(lambda a: basis @ a - target, np.zeros(len(terms)), method="lm" if len(m) > len(terms) else "trf")
    resid = basis @ sol.x - target
    cov, dof = _covariance(basis, resid, list(terms))
    notes = [] if dof > 0 else ["as many points as terms: no uncertainty estimate"]
    params = dict(zip(terms, sol.x.tolist()))
    return FitResult(params, cov, {k: float(np.sqrt(cov.loc[k, k])) for k in terms}, resid,
                     float(np.sqrt(np.mean(resid**2))), len(m), dof, notes)


_COEF = set(tempfn.COEFFS)


def _split(spec):
    """(kind, species..., coefficient) of a parameter spec; the coefficient defaults to a0."""
    spec = tuple(spec)
    if spec and spec[-1] in _COEF:
        return spec[:-1], spec[-1]
    return spec, "a0"


def _select(db, spec):
    """(table name, table copy, boolean row selector) of a parameter spec."""
    kind = spec[0]
    if kind in ("theta", "psi"):
        if len(spec) != (3 if kind == "theta" else 4):
            raise InputError("parameter", spec, "('theta', i, j) or ('psi', i, j, k)")
        s1, s2 = spec[1], spec[2]
        s3 = spec[3] if kind == "psi" else ""
        t = db.mixing.copy()
        sel = (t["kind"] == kind) & (
            ((t["species1"] == s1) & (t["species2"] == s2)) | ((t["species1"] == s2) & (t["species2"] == s1))
        ) & (t["species3"] == s3)
        if not sel.any():
            t = pd.concat([t, pd.DataFrame([{"kind": kind, "species1": s1, "species2": s2, "species3": s3,
                                             "a0": 0.0, "a1": 0.0, "a2": 0.0, "a3": 0.0, "a4": 0.0,
                                             "t_min_c": 0.0, "t_max_c": 100.0,
                                             "source": "fitted in this project"}])], ignore_index=True)
            sel = pd.Series(False, index=t.index)
            sel.iloc[-1] = True
        return "mixing", t, sel
    if kind in ("beta0", "beta1", "beta2", "cphi"):
        if len(spec) != 3:
            raise InputError("parameter", spec, f"('{kind}', cation, anion)")
        t = db.binary.copy()
        sel = (t["cation"] == spec[1]) & (t["anion"] == spec[2]) & (t["parameter"] == kind)
        if not sel.any():
            raise InputError("parameter", spec, "a binary parameter present in the database")
        return "binary", t, sel
    raise InputError("parameter", spec,
                     "('theta', i, j), ('psi', i, j, k) or (beta0|beta1|beta2|cphi, cation, anion), "
                     "optionally followed by a coefficient a0..a4")


def with_parameters(model, specs, values):
    """A new model whose database has each parameter spec set to its value."""
    from phasekit.model import Model

    db = model.db
    for spec, value in zip(specs, values):
        base, coef = _split(spec)
        name, table, sel = _select(db, base)
        table.loc[sel, coef] = float(value)
        db = db.with_tables(**{name: table})
    return Model(db)


def fit_parameters(parameters: list, data: pd.DataFrame, model=None) -> FitResult:
    """Fit Pitzer parameters to compositions saturated with known solids.

    Parameters
    ----------
    parameters : list of tuple
        e.g. ``[("theta", "Na", "K"), ("psi", "Na", "K", "Cl"), ("beta0", "K", "NO3", "a1")]``;
        the coefficient (default a0, the 25 °C value) of the temperature function is fitted,
        starting from its value in the database.
    data : DataFrame
        ``temp_c``, species molality columns (or ``salt`` and a concentration) and ``solids``
        (names separated by ``+`` for points saturated with several solids).
    """
    from phasekit.model import default_model

    model = model or default_model()
    if not parameters:
        raise InputError("parameters", parameters, "at least one parameter")
    if "solids" not in data.columns:
        raise InputError("data", list(data.columns), "a 'solids' column naming the saturating solid(s)")
    m = data_molalities(model, data)
    temps = data["temp_c"].to_numpy(float)
    pairs = []
    for r, text in enumerate(data["solids"]):
        for name in str(text).split("+"):
            pairs.append((r, model.solids.index[model.solids.resolve(name.strip())]))
    if len(pairs) < len(parameters):
        raise InputError("data", f"{len(pairs)} saturation conditions",
                         f"at least {len(parameters)} to fit {len(parameters)} parameters")
    pr = np.array([p[0] for p in pairs])
    pk_ = np.array([p[1] for p in pairs])
    x0 = []
    for spec in parameters:
        base, coef = _split(spec)
        _, table, sel = _select(model.db, base)
        x0.append(float(table.loc[sel, coef].iloc[0]))

    def resid(x):
        mod = with_parameters(model, parameters, x)
        ln_k = mod.solids.ln_k(temps)[pr, pk_]
        li = np.empty(len(m), dtype=object)
        out = np.empty(len(pairs))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for t in np.unique(temps):
                rows = np.flatnonzero(temps == t)
                ln_g, _, ln_aw, _, _ = mod.compute(m[rows], float(t))
                vals = mod.solids.ln_iap(m[rows], ln_g, ln_aw)
                for i, r in enumerate(rows):
                    li[r] = vals[i]
        for j, (r, k) in enumerate(pairs):
            out[j] = li[r][k]
        return out - ln_k

    sol = least_squares(resid, np.array(x0), diff_step=1e-6, x_scale="jac")
    names = ["/".join(map(str, s)) for s in parameters]
    cov, dof = _covariance(sol.jac, sol.fun, names)
    return FitResult(dict(zip(names, sol.x.tolist())), cov, {k: float(np.sqrt(cov.loc[k, k])) for k in names},
                     sol.fun, float(np.sqrt(np.mean(sol.fun**2))), len(pairs), dof,
                     [] if dof > 0 else ["as many conditions as parameters: no uncertainty estimate"])
