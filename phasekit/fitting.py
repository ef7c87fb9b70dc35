"""Regression of database parameters on solubility measurements (scipy least squares).

Two kinds of fit:

* :func:`fit_ln_k` — the coefficients of ln K(T) of one solid (temperature function of
  :mod:`phasekit.thermo.tempfn`) from compositions saturated with it: the target of each point
  is its ion activity product computed with the activity model, so the fit is linear in the
  coefficients.
* :func:`fit_parameters` — Pitzer parameters (θ, ψ, or a binary β/C^φ, any coefficient of their
  temperature function) and, optionally, ln K coefficients of solids (``("lnk", solid, "a0")``),
  from compositions saturated with known solids: residuals ln IAP - ln K of every solid at every
  point (or the same converted to ln m, see below), non-linear least squares with a
  finite-difference Jacobian.

Residuals in ln m. ``ln IAP - ln K`` weighs the points unequally: for a hydrate in a concentrated
solution (CaCl2·6H2O near 7 mol/kg) ln IAP hardly changes with the molality, so a small residual in
ln K hides a large error in solubility. With ``residual="ln_m"`` each residual is divided by
∂ ln IAP / ∂ ln s, the slope of ln IAP when the whole composition is scaled by s; to first order it
is then the error in ln of the saturated concentration, the quantity that was measured.

Both return a :class:`FitResult` with the parameter covariance s² (JᵀJ)⁻¹, s² = SSR / (n - p).
"""

from __future__ import annotations

import copy
import dataclasses
import warnings
import weakref
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
    model : Model or None
        The model with the fitted values (set by :func:`fit_parameters`).
    """

    parameters: dict
    covariance: pd.DataFrame
    stderr: dict
    residuals: np.ndarray
    rms: float
    n_points: int
    dof: int
    notes: list = field(default_factory=list)
    model: object = None


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


#: derived coefficient "cp": c [Tr (1/T - 1/Tr) + ln(T/Tr)], i.e. a3 = c Tr and a4 = c. Its value and its
#: first derivative vanish at Tr, so it changes neither the 25 °C value nor the 25 °C derivative; it is the
#: shape of a constant heat-capacity term (the relative heat capacity J of a solution for a Pitzer
#: parameter, a constant ΔCp for ln K), where a2 is a constant second derivative.
CP = "cp"
_COEF = set(tempfn.COEFFS) | {CP}


def _cp_basis(temp_k):
    t = np.asarray(temp_k, dtype=float)
    return tempfn.TR * (1.0 / t - 1.0 / tempfn.TR) + np.log(t / tempfn.TR)


def _split(spec):
    """(kind, species..., coefficient) of a parameter spec; the coefficient defaults to a0."""
    spec = tuple(spec)
    if spec and spec[-1] in _COEF:
        return spec[:-1], spec[-1]
    return spec, "a0"


_TABLE_OF = {"theta": "mixing", "psi": "mixing", "lnk": "solids",
             "beta0": "binary", "beta1": "binary", "beta2": "binary", "cphi": "binary"}


def _select(db, spec, table=None):
    """(table name, table, boolean row selector) of a parameter spec.

    ``table`` (default: a copy of the database's) is the table to select from; a missing θ or ψ
    row is appended to it with zero coefficients.
    """
    kind = spec[0] if spec else None
    name = _TABLE_OF.get(kind)
    if name is None:
        raise InputError("parameter", spec,
                         "('theta', i, j), ('psi', i, j, k), (beta0|beta1|beta2|cphi, cation, anion) or "
                         "('lnk', solid), optionally followed by a coefficient a0..a4")
    t = getattr(db, name).copy() if table is None else table
    if kind != "lnk":
        for x in spec[1:]:
            try:
                db.parse_species(x)
            except InputError as err:
                raise InputError(f"parameter {'/'.join(map(str, spec))}", x, err.expected) from None
    if kind in ("theta", "psi"):
        if len(spec) != (3 if kind == "theta" else 4):
            raise InputError("parameter", spec, "('theta', i, j) or ('psi', i, j, k)")
        s1, s2 = spec[1], spec[2]
        s3 = spec[3] if kind == "psi" else ""
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
        return name, t, sel
    if kind == "lnk":
        if len(spec) != 2:
            raise InputError("parameter", spec, "('lnk', solid) followed by a coefficient a0..a4")
        sel = t["solid"] == spec[1]
        if not sel.any():
            raise InputError("parameter", spec, "a solid of the database (its name in data/solids.csv)")
        return name, t, sel
    if len(spec) != 3:
        raise InputError("parameter", spec, f"('{kind}', cation, anion)")
    sel = (t["cation"] == spec[1]) & (t["anion"] == spec[2]) & (t["parameter"] == kind)
    if not sel.any():
        raise InputError("parameter", spec, "a binary parameter present in the database")
    return name, t, sel


def parameter_value(model, spec) -> float:
    """The value in the model's database of one coefficient, spec as for :func:`fit_parameters` (with the
    coefficient a0..a4 last, e.g. ``("psi", "K", "Mg", "SO4", "a1")``); a missing θ or ψ is 0."""
    base, coef = _split(spec)
    if coef not in tempfn.COEFFS:
        raise InputError("parameter", spec, f"a coefficient among {tempfn.COEFFS}")
    _, table, sel = _select(model.db, base)
    return float(table.loc[sel, coef].iloc[0])


def _edited_tables(db, specs, values) -> dict:
    """The tables of ``db`` with each parameter spec set to its value (edited copies; the others as they are)."""
    tables: dict = {}
    for spec, value in zip(specs, values):
        base, coef = _split(spec)
        name, table, sel = _select(db, base, tables.get(_TABLE_OF.get(base[0] if base else None)))
        if coef not in _COEF:
            raise InputError("parameter", spec, f"a coefficient among {tempfn.COEFFS} or '{CP}'")
        cells = {"a3": tempfn.TR * float(value), "a4": float(value)} if coef == CP else {coef: float(value)}
        for c, v in cells.items():
            if table[c].dtype.kind != "f":
                table[c] = table[c].astype(float)
            table.loc[sel, c] = v
        tables[name] = table
    return tables


def _all_tables(db, specs, values) -> dict:
    tables = _edited_tables(db, specs, values)
    return {t: tables.get(t, getattr(db, t)) for t in ("binary", "mixing", "solids")}


#: where the specs of a model live in its coefficient arrays (see _targets), per model
_TARGETS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()
_BINARY_KINDS = ("beta0", "beta1", "beta2", "cphi")


def _targets(model, specs):
    """For each spec, the cells of the model's coefficient arrays that hold it: a list of
    (array name, index tuple, {coefficient column: multiplier of the value}); None when a spec
    names a θ or ψ row absent from the database (adding a row changes more than arrays)."""
    key = tuple(tuple(s) for s in specs)
    known = _TARGETS.get(model)
    if known is not None and key in known:
        return known[key]
    out = []
    cols = {c: i for i, c in enumerate(tempfn.COEFFS)}
    for spec in specs:
        base, coef = _split(spec)
        name, table, sel = _select(model.db, base)  # the checks and errors of with_parameters
        if coef not in _COEF:
            raise InputError("parameter", spec, f"a coefficient among {tempfn.COEFFS} or '{CP}'")
        if len(table) != len(getattr(model.db, name)) or int(sel.sum()) != 1:
            out = None
            break
        mult = {cols["a3"]: tempfn.TR, cols["a4"]: 1.0} if coef == CP else {cols[coef]: 1.0}
        kind = base[0]
        ci = {s: i for i, s in enumerate(model.cations)}
        ai = {s: i for i, s in enumerate(model.anions)}
        if kind == "lnk":
            cells = [("solids", (model.solids.index[base[1]],))]
        elif kind in _BINARY_KINDS:
            cells = [(kind, (ci[base[1]], ai[base[2]]))]
        else:
            row = table[sel].iloc[0]
            s1, s2, s3 = row["species1"], row["species2"], row["species3"]
            if kind == "theta":
                arr, ix = ("_co_theta_c", ci) if s1 in ci else ("_co_theta_a", ai)
                cells = [(arr, (ix[s1], ix[s2])), (arr, (ix[s2], ix[s1]))]
            else:
                arr, ix, ox = ("_co_psi_c", ci, ai) if s1 in ci else ("_co_psi_a", ai, ci)
                cells = [(arr, (ix[s1], ix[s2], ox[s3])), (arr, (ix[s2], ix[s1], ox[s3]))]
        out.append((cells, mult))
    _TARGETS.setdefault(model, {})[key] = out
    return out


def with_parameters(model, specs, values):
    """A new model whose database has each parameter spec set to its value.

    Specs as for :func:`fit_parameters`; the model's own database is not changed. The new model
    is a copy of ``model`` whose coefficient arrays hold the new values (the same numbers as a
    model built from edited tables); its database tables are written when first read.
    """
    import functools

    from phasekit.model import Model
    from phasekit.thermo.database import PendingDatabase

    specs, values = list(specs), list(values)
    if len(specs) != len(values):
        raise InputError("values", values, f"one value per parameter spec ({len(specs)})")
    targets = _targets(model, specs) if isinstance(model, Model) else None
    if targets is None:
        return Model(model.db.with_tables(**_edited_tables(model.db, specs, values)))
    new = object.__new__(Model)
    new.__dict__.update(model.__dict__)
    new.__dict__.pop("overlay_stderr", None)
    new.overlays = []
    new._cache = {}
    new._validity_cache = {}
    new._co_binary = dict(model._co_binary)
    copied: set = set()
    solids = None
    for (cells, mult), value in zip(targets, values):
        value = float(value)
        for arr_name, ix in cells:
            if arr_name == "solids":
                if solids is None:
                    solids = copy.copy(model.solids)
                    solids.coeffs = model.solids.coeffs.copy()
                arr = solids.coeffs
            elif arr_name in _BINARY_KINDS:
                if arr_name not in copied:
                    new._co_binary[arr_name] = new._co_binary[arr_name].copy()
                    copied.add(arr_name)
                arr = new._co_binary[arr_name]
            else:
                if arr_name not in copied:
                    setattr(new, arr_name, getattr(model, arr_name).copy())
                    copied.add(arr_name)
                arr = getattr(new, arr_name)
            for col, m in mult.items():
                arr[ix + (col,)] = m * value if m != 1.0 else value
    if solids is not None:
        solids.solids = [dataclasses.replace(s, coeffs=tuple(float(x) for x in solids.coeffs[k]))
                         if tuple(float(x) for x in solids.coeffs[k]) != tuple(s.coeffs) else s
                         for k, s in enumerate(model.solids.solids)]
        new.solids = solids
    new.db = PendingDatabase(model.db, functools.partial(_all_tables, model.db, specs, values))
    return new


def fit_parameters(parameters: list, data: pd.DataFrame, model=None, residual: str = "ln_k",
                   start=None, penalty=None) -> FitResult:
    """Fit Pitzer parameters (and optionally ln K coefficients) to compositions saturated with known solids.

    Parameters
    ----------
    parameters : list of tuple
        e.g. ``[("theta", "Na", "K"), ("psi", "Na", "K", "Cl"), ("beta0", "K", "NO3", "a1"),
        ("lnk", "niter", "a0")]``; the coefficient (default a0, the 25 °C value) of the
        temperature function is fitted, starting from its value in the database. The derived
        coefficient ``"cp"`` sets a3 = c Tr and a4 = c together (see :data:`CP`).
    data : DataFrame
        ``temp_c``, species molality columns (or ``salt`` and a concentration) and ``solids``
        (names separated by ``+`` for points saturated with several solids).
    model : Model, optional
        Model whose database holds every other value (the embedded one by default).
    residual : {"ln_k", "ln_m", "solubility"}
        ``"ln_k"``: ln IAP - ln K. ``"ln_m"``: the same divided by ∂ ln IAP / ∂ ln s (scaling of
        the whole composition), i.e. to first order the error in ln of the saturated concentration.
        ``"solubility"`` (single-salt data only: ``salt`` and a concentration, one solid per row):
        ln m_model - ln m_data with m_model the solubility of the row's solid computed by
        :func:`phasekit.equilibrium.solubility.solubility` (the first saturation root above
        infinite dilution), so that a fit cannot hide a spurious lower root of ln IAP.
    start : sequence of float, optional
        Starting values (default: the values in the database), so that a calibration does not
        depend on what the files held before it.
    penalty : callable, optional
        ``penalty(model) -> array`` of extra residuals appended to the data residuals (zero where a
        physical condition holds, e.g. an activity that must rise with molality). They take part in
        the least squares but not in ``residuals``, ``rms`` or the degrees of freedom.

    Returns
    -------
    FitResult
        ``parameters`` keyed by ``"/".join(spec)``; ``model`` is the model with the fitted values.

    Raises
    ------
    InputError
        No parameter, no ``solids`` column, an unknown solid, fewer saturation conditions than
        parameters, or an unknown ``residual``.
    """
    from phasekit.model import default_model

    model = model or default_model()
    if not parameters:
        raise InputError("parameters", parameters, "at least one parameter")
    if residual not in ("ln_k", "ln_m", "solubility"):
        raise InputError("residual", residual, "'ln_k', 'ln_m' or 'solubility'")
    if isinstance(parameters, str):
        raise InputError("parameters", parameters, "a list of parameter specs such as [('theta', 'Na', 'K')], not "
                                                   "a string")
    for spec in parameters:  # each spec's kind and species, before the data are looked at
        if isinstance(spec, str) or not isinstance(spec, tuple | list):
            raise InputError("parameters", spec, "a list of specs such as ('theta', 'Na', 'K')")
        _select(model.db, _split(spec)[0])
    if not isinstance(data, pd.DataFrame) or "solids" not in data.columns:
        raise InputError("data", list(data.columns) if isinstance(data, pd.DataFrame) else type(data).__name__,
                         "a table with a 'solids' column naming the saturating solid(s)")
    m = data_molalities(model, data)
    temps = pd.to_numeric(data["temp_c"], errors="raise").to_numpy(float)
    pairs = []
    for r, text in enumerate(data["solids"]):
        for name in str(text).split("+"):
            pairs.append((r, model.solids.index[model.solids.resolve(name.strip())]))
    if len(pairs) < len(parameters):
        raise InputError("data", f"{len(pairs)} saturation conditions",
                         f"at least {len(parameters)} to fit {len(parameters)} parameters")
    pr = np.array([p[0] for p in pairs])
    pk_ = np.array([p[1] for p in pairs])
    if start is None:
        x0 = []
        for spec in parameters:
            base, coef = _split(spec)
            _, table, sel = _select(model.db, base)
            x0.append(float(table.loc[sel, "a4" if coef == CP else coef].iloc[0]))
    else:
        x0 = [float(v) for v in start]
        if len(x0) != len(parameters):
            raise InputError("start", start, f"{len(parameters)} starting values, one per parameter")
    groups = [(float(t), np.flatnonzero(temps == t)) for t in np.unique(temps)]
    if residual == "solubility":
        if "salt" not in data.columns or any("+" in str(x) for x in data["solids"]):
            raise InputError("residual", residual, "single-salt data (a 'salt' column, one solid per row) "
                             "for residual='solubility'")
        mtot = m.sum(axis=1)
        solid_names = [model.solids.names[k] for k in pk_]

    def resid_solubility(x):
        from phasekit.equilibrium.solubility import _resolve, _saturated_molality

        mod = with_parameters(model, parameters, x)
        out = np.empty(len(pairs))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for j, (r, name) in enumerate(zip(pr, solid_names)):
                info, idx = _resolve(mod, name)
                ms = _saturated_molality(mod, info.ions, idx, float(temps[r]))[0][0]
                out[j] = np.log(ms * info.vec.sum() / mtot[r]) if np.isfinite(ms) else 5.0
        return out

    h = 1e-4  # relative step of the composition scaling for the ln-m slope

    def resid_composition(x):
        mod = with_parameters(model, parameters, x)
        ln_k = mod.solids.ln_k(temps)[pr, pk_]
        iap = np.empty((len(m), len(mod.solids.names)))
        slope = np.ones_like(iap)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for t, rows in groups:
                ln_g, _, ln_aw, _, _ = mod.compute(m[rows], t)
                iap[rows] = mod.solids.ln_iap(m[rows], ln_g, ln_aw)
                if residual == "ln_m":
                    ms = m[rows] * (1.0 + h)
                    ln_g2, _, ln_aw2, _, _ = mod.compute(ms, t)
                    with np.errstate(invalid="ignore"):
                        slope[rows] = (mod.solids.ln_iap(ms, ln_g2, ln_aw2) - iap[rows]) / np.log1p(h)
        return (iap[pr, pk_] - ln_k) / slope[pr, pk_]

    data_resid = resid_solubility if residual == "solubility" else resid_composition
    if penalty is None:
        resid = data_resid
    else:
        def resid(x):
            return np.concatenate([data_resid(x), np.asarray(penalty(with_parameters(model, parameters, x)), float)])

    # each coefficient is scaled by the largest magnitude of its basis function over the data, so that
    # all fitted variables are of order one and the finite-difference steps suit every coefficient
    bmax = dict(zip(tempfn.COEFFS, np.max(np.abs(tempfn.basis(temps + 273.15)), axis=0)))
    bmax[CP] = float(np.max(np.abs(_cp_basis(temps + 273.15))))
    scale = np.array([1.0 / bmax[_split(sp)[1]] if bmax[_split(sp)[1]] > 0 else 1.0 for sp in parameters])
    sol = least_squares(lambda z: resid(z * scale), np.array(x0) / scale, x_scale="jac", xtol=1e-12, ftol=1e-12,
                        gtol=1e-12, max_nfev=200 * (len(parameters) + 1))
    x = sol.x * scale
    n = len(pairs)
    jac = sol.jac[:n] / scale[None, :]
    fun = sol.fun[:n]
    names = ["/".join(map(str, s)) for s in parameters]
    cov, dof = _covariance(jac, fun, names)
    notes = [] if dof > 0 else ["as many conditions as parameters: no uncertainty estimate"]
    if penalty is not None and np.any(sol.fun[n:] != 0):
        notes.append(f"penalty residuals not all zero at the solution (largest {np.max(np.abs(sol.fun[n:])):.3g})")
    return FitResult(dict(zip(names, x.tolist())), cov, {k: float(np.sqrt(cov.loc[k, k])) for k in names},
                     fun, float(np.sqrt(np.mean(fun**2))), len(pairs), dof,
                     notes, model=with_parameters(model, parameters, x))
