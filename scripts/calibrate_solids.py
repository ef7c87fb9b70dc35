"""Calibrate the single-salt solids and the temperature coefficients of their Pitzer parameters.

One command regenerates every value this calibration owns from the data files::

    python scripts/calibrate_solids.py            # rewrite data/solids.csv and data/pitzer_binary.csv
    python scripts/calibrate_solids.py --dry-run  # fit and report only

Inputs (all in ``data/``):

* ``reference/measured_*.csv`` — published solubilities of the single salts (kind "saturation" of the
  "<salt>-H2O" systems, :func:`phasekit.calibration.measurements.binary_solubility_table`); only the rows
  with ``role=fit`` are read, within the salt's ``fit_t_min_c``/``fit_t_max_c`` of calibration.toml if set;
* ``reference/thermochemistry.csv`` — ΔfH° and Cp° of ions, water and solids (NBS82), giving each
  solid's ΔH°sol and ΔCp°sol, hence a3 and a4 of its ln K(T) (van 't Hoff, constant ΔCp°):
  a3 = -ΔH°/R + ΔCp° Tr/R, a4 = ΔCp°/R (see ``phasekit/thermo/tempfn.py``);
* ``reference/calibration.toml`` — which Pitzer temperature coefficients are fitted for each salt, and
  (``[ternary.*]``) which binary coefficients are fitted to ternary invariant points;
* ``reference/ternary_eutonic.csv`` — invariant points of ternary systems; only ``role=fit`` rows are read;
* ``reference/saturated_water_activity.csv`` — a_w of saturated solutions; its ``role=fit`` rows (except 25 °C)
  add residuals for the salts whose entry sets ``water_activity = true``;
* the current ``pitzer_binary.csv`` (25 °C values and the coefficients that are not fitted) and
  ``solids.csv``.

For each salt, the a0 of its solids' ln K and the listed Pitzer coefficients (started from zero, so the
result does not depend on what the files held before) are fitted together with
``phasekit.fitting.fit_parameters`` (residuals in ln m of the solved solubility, started from a fit on
linearized residuals). Before the salts, each ``[ternary.*]`` entry fits its binary coefficients
(from zero) to the ln IAP - ln K of its solids at its invariant points, the listed salts' own
calibration being redone at every trial value (:func:`calibrate_ternary`); the salts' final fits
then hold those values. ΔH° and ΔCp° are never fitted. The validity
range of a solid is the temperature range of its fit and check rows, widened to the model's transition temperatures
in pure water (found by ``phasekit.polytherm``) and to 25 °C (where ΔH° and ΔCp° hold); that of a fitted
Pitzer pair is the range of the fit rows
(with 25 °C), and its ``m_max`` the highest saturated molality fitted. The 'check' rows are not fitted; their
temperature span (with the fit rows') is the validity range written, since the test suite checks the model there.
"""

from __future__ import annotations

import math
import sys
import tomllib
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

import phasekit as pk  # noqa: E402
from phasekit.calibration.measurements import (  # noqa: E402
    binary_solubility_table,
    measurement_files,
    read_measurements,
)
from phasekit.calibration.tables import fmt as _fmt  # noqa: E402
from phasekit.calibration.tables import rewrite_csv  # noqa: E402,F401  (calibrate_lithium imports it from here)
from phasekit.data_files import read_csv  # noqa: E402
from phasekit.errors import ValidityWarning  # noqa: E402
from phasekit.fitting import data_molalities, fit_parameters  # noqa: E402
from phasekit.model import Model  # noqa: E402
from phasekit.thermo import tempfn  # noqa: E402
from phasekit.thermo.database import Database  # noqa: E402

DATA = ROOT / "data"
R = 8.314462618  # J/(mol K), CODATA 2018 (exact in the 2019 SI)
REF = "data/reference/measured_binaries.csv"


# ----------------------------------------------------------------------------- inputs
def load_inputs(data_dir: Path = DATA):
    """(model, fit rows, thermochemistry table, calibration settings) from the data files."""
    model = Model(Database(data_dir))
    ref = binary_solubility_table(read_measurements(measurement_files(data_dir / "reference")))
    thermo = read_csv("reference/thermochemistry.csv", data_dir).set_index("name")
    with open(data_dir / "reference" / "calibration.toml", "rb") as fh:
        settings = tomllib.load(fh)["salts"]
    keep = pd.Series(True, index=ref.index)
    for salt, cfg in settings.items():
        mine = ref["salt"] == salt
        keep &= ~mine | ref["temp_c"].between(cfg.get("fit_t_min_c", -np.inf), cfg.get("fit_t_max_c", np.inf))
        keep &= ~mine | ref["solid"].isin(cfg["solids"])
    within = ref[keep].reset_index(drop=True)
    return model, within[within["role"] == "fit"].reset_index(drop=True), thermo, settings


def span_rows(data_dir: Path = DATA) -> pd.DataFrame:
    """Fit and check rows of the calibrated solids within their salts' windows: their temperature span is the
    validity range written for a solid and its Pitzer pair (the check rows, never fitted, are where the test
    suite shows the model holding: tests/validation/test_solubility.py)."""
    ref = binary_solubility_table(read_measurements(measurement_files(data_dir / "reference")))
    with open(data_dir / "reference" / "calibration.toml", "rb") as fh:
        settings = tomllib.load(fh)["salts"]
    keep = pd.Series(False, index=ref.index)
    for salt, cfg in settings.items():
        keep |= ((ref["salt"] == salt) & ref["solid"].isin(cfg["solids"])
                 & ref["temp_c"].between(cfg.get("fit_t_min_c", -np.inf), cfg.get("fit_t_max_c", np.inf)))
    return ref[keep].reset_index(drop=True)


def transition_rows(data_dir: Path = DATA) -> pd.DataFrame:
    """role=fit transition points of one salt's solids in water (kind "invariant" of a "<salt>-H2O" system
    with two solids) from the measurement files: ``salt``, ``temp_c``, ``solid_a``, ``solid_b``, ``source``."""
    meas = read_measurements(measurement_files(data_dir / "reference"))
    rows = []
    for r in meas.itertuples():
        parts = r.system.split("-")
        if r.kind == "invariant" and r.role == "fit" and len(parts) == 2 and len(r.solid_list) == 2:
            rows.append({"salt": parts[0], "temp_c": float(r.temp_c), "solid_a": r.solid_list[0],
                         "solid_b": r.solid_list[1], "source": f"{r.reference} ({r.file})"})
    return pd.DataFrame(rows, columns=["salt", "temp_c", "solid_a", "solid_b", "source"])


#: standard uncertainty (K) given to every measured transition temperature, and the ln m residual that a miss
#: of that size counts as: a transition 2 K off weighs as much as a solubility 1 % off
TRANSITION_SIGMA_K = 2.0
TRANSITION_WEIGHT = 0.01


def _with_transitions(pen, rows: pd.DataFrame):
    """The penalty ``pen`` with one residual per measured transition point (solids A and B of one salt): the
    saturation index of B in the model's solution saturated with A at the measured temperature, divided by
    d(ln K_A - ln K_B)/dT (so, to first order, the error of the transition temperature in K), over
    TRANSITION_SIGMA_K, times TRANSITION_WEIGHT."""
    if rows.empty:
        return pen

    def penalty(mod):
        out = [pen(mod)]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for r in rows.itertuples():
                ka, kb = mod.solids.index[r.solid_a], mod.solids.index[r.solid_b]
                t = float(r.temp_c)
                try:
                    sat = pk.solubility(r.solid_a, t, model=mod)
                    m = np.zeros((1, len(mod.species)))
                    for sp, n in mod.solid_stoichiometry(r.solid_a).items():
                        if sp != "H2O":
                            m[0, mod.index[sp]] = n * sat.molality
                    ln_g, _, ln_aw, _, _ = mod.compute(m, t)
                    si_b = mod.solids.ln_iap(m, ln_g, ln_aw)[0, kb] - mod.solids.ln_k(t)[kb]
                    slope = (mod.solids.coeffs[ka] - mod.solids.coeffs[kb]) @ tempfn.basis_dt(t + 273.15)
                    miss = si_b / slope if abs(slope) > 1e-9 else 50.0
                except pk.PhasekitError:
                    miss = 50.0
                out.append(np.array([TRANSITION_WEIGHT * min(abs(miss), 50.0) * np.sign(miss) / TRANSITION_SIGMA_K]))
        return np.concatenate(out)

    return penalty


def load_ternary(data_dir: Path = DATA):
    """(ternary settings of calibration.toml, role=fit rows of reference/ternary_eutonic.csv)."""
    with open(data_dir / "reference" / "calibration.toml", "rb") as fh:
        tern = tomllib.load(fh).get("ternary", {})
    ref = read_csv("reference/ternary_eutonic.csv", data_dir)
    return tern, ref[ref["role"] == "fit"].reset_index(drop=True)


def fit_rows_of(ref_fit: pd.DataFrame, salt: str) -> pd.DataFrame:
    """The fit rows of one salt as a table for :func:`phasekit.fitting.fit_parameters`."""
    rows = ref_fit[ref_fit["salt"] == salt]
    return pd.DataFrame({"salt": rows["salt"].to_numpy(), "temp_c": rows["temp_c"].to_numpy(float),
                         "mass_percent": rows["mass_percent"].to_numpy(float),
                         "solids": rows["solid"].to_numpy(), "source": rows["source"].to_numpy()})


def solution_properties(model, solid: str, thermo: pd.DataFrame) -> tuple[float, float]:
    """(ΔH°sol in kJ/mol, ΔCp°sol in J/(mol K)) of dissolving ``solid`` to ions and liquid water."""
    st = model.solid_stoichiometry(solid)
    dh = -thermo.loc[solid, "dfh_kj_mol"]
    dcp = -thermo.loc[solid, "cp_j_mol_k"]
    for sp, n in st.items():
        dh += n * thermo.loc[sp, "dfh_kj_mol"]
        dcp += n * thermo.loc[sp, "cp_j_mol_k"]
    return float(dh), float(dcp)


def van_t_hoff_terms(dh_kj: float, dcp: float) -> tuple[float, float]:
    """(a3, a4) of ln K(T) for constant ΔH° (kJ/mol, at Tr) and ΔCp° (J/(mol K))."""
    return -dh_kj * 1000.0 / R + dcp * tempfn.TR / R, dcp / R


# ----------------------------------------------------------------------------- fit
def _pair(model, salt):
    from phasekit.chemistry.salts import parse_salt

    ions = parse_salt(salt)
    cat = next(s for s in ions if model.db.charges[s] > 0)
    an = next(s for s in ions if model.db.charges[s] < 0)
    return cat, an


def calibrate_salt(model, salt: str, cfg: dict, rows: pd.DataFrame, thermo: pd.DataFrame,
                   transitions: pd.DataFrame | None = None, t_span=None):
    """Fit one salt (solubility rows ``rows``, measured transition points ``transitions`` of its solids).
    Returns (FitResult, specs, {solid: (dH, dCp)})."""
    cat, an = _pair(model, salt)
    solids = model.db.solids.copy()
    props = {}
    for s in cfg["solids"]:
        dh, dcp = solution_properties(model, s, thermo)
        a3, a4 = van_t_hoff_terms(dh, dcp)
        sel = solids["solid"] == s
        solids.loc[sel, ["a1", "a2", "a3", "a4"]] = [0.0, 0.0, a3, a4]
        props[s] = (dh, dcp)
    pitzer = [(p.split(":")[0], cat, an, p.split(":")[1]) for p in cfg["fit"] if not p.startswith("lnk:")]
    binary = model.db.binary.copy()
    zeroed = [(z.split(":")[0], cat, an, z.split(":")[1]) for z in cfg.get("zero", [])]
    for kind, c, a, coef in pitzer + zeroed:
        cols = ["a3", "a4"] if coef == "cp" else [coef]
        binary.loc[(binary["cation"] == c) & (binary["anion"] == a) & (binary["parameter"] == kind), cols] = 0.0
    start_model = Model(model.db.with_tables(solids=solids, binary=binary))
    # starting a0 of each solid: mean of ln IAP - (a3, a4 part) over its rows
    m = data_molalities(start_model, rows)
    x0 = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for s in cfg["solids"]:
            k = start_model.solids.index[s]
            vals = []
            for r in np.flatnonzero(rows["solids"].to_numpy() == s):
                t = float(rows["temp_c"].iloc[r])
                ln_g, _, ln_aw, _, _ = start_model.compute(m[r:r + 1], t)
                iap = start_model.solids.ln_iap(m[r:r + 1], ln_g, ln_aw)[0, k]
                vals.append(iap - (start_model.solids.ln_k(t)[k] - start_model.solids.coeffs[k, 0]))
            # a solid known only by its transition points starts from its present a0
            x0.append(float(np.mean(vals)) if vals else float(start_model.solids.coeffs[k, 0]))
    extra = [("lnk", s, p.split(":")[1]) for p in cfg["fit"] if p.startswith("lnk:") for s in cfg["solids"]]
    specs = [("lnk", s, "a0") for s in cfg["solids"]] + extra + pitzer
    x0 += [0.0] * len(extra) + [0.0] * len(pitzer)
    # linearized residuals (ln IAP - ln K) / slope first, then the solved solubilities from there
    pen = monotonic_penalty(salt, rows, start_model, t_span=t_span)
    if cfg.get("water_activity"):
        pen = _with_water_activity(pen, salt, cfg)
    if transitions is not None:
        mine = transitions[(transitions["salt"] == salt) & transitions["solid_a"].isin(cfg["solids"])
                           & transitions["solid_b"].isin(cfg["solids"])]
        pen = _with_transitions(pen, mine)
    first = fit_parameters(specs, rows, model=start_model, residual="ln_m", start=x0, penalty=pen)
    res = fit_parameters(specs, rows, model=start_model, residual="solubility",
                         start=[first.parameters["/".join(sp)] for sp in specs], penalty=pen)
    return res, specs, props


def water_activity_rows(salt: str, data_dir: Path = DATA) -> pd.DataFrame:
    """role=fit water activities of the saturated solution of ``salt``: from the measurement files (kind
    water_activity, a solid, no composition) where they hold some, else from reference/saturated_water_activity.csv
    (recalled values; except its 25 °C row, which fitted the 25 °C parameters). Columns temp_c, water_activity,
    source."""
    meas = read_measurements(measurement_files(data_dir / "reference"))
    mine = meas[(meas["kind"] == "water_activity") & (meas["role"] == "fit") & (meas["system"] == f"{salt}-H2O")
                & meas["solid_list"].map(len).astype(bool) & ~meas["molalities"].map(bool)]
    if len(mine):
        return pd.DataFrame({"temp_c": mine["temp_c"].to_numpy(float), "water_activity": mine["value"].to_numpy(float),
                             "source": (mine["reference"] + " (" + mine["file"] + ")").to_numpy()})
    ref = read_csv("reference/saturated_water_activity.csv", data_dir)
    ref = ref[(ref["salt"] == salt) & (ref["role"] == "fit") & (ref["temp_c"] != 25)].reset_index(drop=True)
    return ref[["temp_c", "water_activity", "source"]]


def _aw_text(salt: str, cfg: dict) -> str:
    """Words for a source: the water-activity rows a salt's fit also used, if any."""
    if not cfg.get("water_activity"):
        return ""
    rows = water_activity_rows(salt)
    temps = ", ".join(f"{t:g}" for t in rows["temp_c"])
    srcs = ", ".join(sorted(set(rows["source"])))
    return f" and to the water activity of the saturated solution at {temps} °C (role=fit; {srcs})"


def _with_water_activity(pen, salt: str, cfg: dict):
    """The penalty ``pen`` with one more residual per a_w row: ln a_w of the model's own saturated solution
    minus ln of the measured one, times the weight ``water_activity_weight`` (default 1: an error of 1 % in
    a_w counts as one of 1 % in the saturated molality)."""
    rows = water_activity_rows(salt)
    weight = float(cfg.get("water_activity_weight", 1.0))

    def penalty(mod):
        out = [pen(mod)]
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for r in rows.itertuples():
                try:
                    aw = pk.solubility(salt, float(r.temp_c), model=mod).water_activity
                except pk.PhasekitError:
                    aw = 1e-3
                out.append(np.array([weight * (np.log(aw) - np.log(float(r.water_activity)))]))
        return np.concatenate(out)

    return penalty


def monotonic_penalty(salt: str, rows: pd.DataFrame, model, min_slope: float = 0.1, t_span=None):
    """Penalty residuals that keep the single-salt solution physical between the fit rows.

    Solubility rows only sample the activity on the saturation curve; a fit may then buy a good
    match with parameters that make ln a± fall, or a_w rise, with molality at lower molality (seen
    for KNO3 above 80 °C). On a grid of temperatures every 10 °C over the fit rows and molalities
    up to 1.05 x the saturated molality (interpolated between fit rows, held at the end rows' values
    beyond them), every 10 °C over ``t_span`` (the salt's fit and check rows; the fit rows' range by default), each step where
    d ln a± / d ln m < ``min_slope`` or d ln a_w / d ln m > 0 adds its shortfall as a residual
    (zero when the condition holds).
    """
    from phasekit.chemistry.salts import parse_salt

    ions = parse_salt(salt)
    vec = np.zeros(len(model.species))
    for sp, n in ions.items():
        vec[model.index[sp]] = n
    msat = salt_molalities(model, rows)
    order = np.argsort(rows["temp_c"].to_numpy())
    t_rows, m_rows = rows["temp_c"].to_numpy(float)[order], msat[order]
    lo, hi = (t_rows.min(), t_rows.max()) if t_span is None else t_span
    temps = np.arange(lo, hi + 1e-9, 10.0)
    grids = [np.geomspace(0.01, 1.05 * np.interp(t, t_rows, m_rows), 60) for t in temps]
    ln_vec = np.log(np.where(vec > 0, vec, 1.0))

    def penalty(mod):
        out = []
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for t, ms in zip(temps, grids):
                ln_g, _, ln_aw, _, _ = mod.compute(ms[:, None] * vec[None, :], float(t))
                ln_a = (np.log(ms)[:, None] + ln_vec[None, :] + ln_g) @ vec / vec.sum()
                dx = np.diff(np.log(ms))
                out.append(np.minimum(0.0, np.diff(ln_a) / dx - min_slope))
                out.append(np.minimum(0.0, -np.diff(ln_aw) / dx))
        return np.concatenate(out)

    return penalty


def transitions_of(model, salt: str, solids=(), t_lo: float = 0.0, t_hi: float = 100.0) -> pd.DataFrame:
    """Transitions between the salt's solids in pure water from t_lo to t_hi (°C), the solids' validity
    ranges widened to it first (they are what this calibration is about to set)."""
    tab = model.db.solids.copy()
    sel = tab["solid"].isin(list(solids))
    tab.loc[sel, "t_min_c"] = np.minimum(tab.loc[sel, "t_min_c"].astype(float), t_lo)
    tab.loc[sel, "t_max_c"] = np.maximum(tab.loc[sel, "t_max_c"].astype(float), t_hi)
    wide = Model(model.db.with_tables(solids=tab))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return pk.polytherm(salt, t_lo, t_hi, 1.0, model=wide)[1]


def activity_sanity(model, salt: str, m_sat: float, temp_c: float) -> list[str]:
    """Problems of the single-salt activity up to saturation: ln a± or a_w not monotonic in m."""
    from phasekit.chemistry.salts import parse_salt

    ions = parse_salt(salt)
    vec = np.zeros(len(model.species))
    for s, n in ions.items():
        vec[model.index[s]] = n
    ms = np.geomspace(1e-3, m_sat, 200)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        ln_g, _, ln_aw, _, _ = model.compute(ms[:, None] * vec[None, :], temp_c)
    ln_a = (np.log(ms)[:, None] + np.log(np.where(vec > 0, vec, 1.0))[None, :] + ln_g) @ vec
    out = []
    if np.any(np.diff(ln_a) <= 0):
        out.append(f"{salt} {temp_c:g} °C: ln a± not increasing below saturation ({m_sat:.3g} mol/kg)")
    if np.any(np.diff(ln_aw) >= 0):
        out.append(f"{salt} {temp_c:g} °C: a_w not decreasing below saturation ({m_sat:.3g} mol/kg)")
    return out


def _set_coeffs(model, specs, values):
    """Model with binary coefficients ``(cation, anion, parameter, coefficient)`` set to ``values``."""
    b = model.db.binary.copy()
    for col in ("a1", "a2", "a3", "a4"):
        b[col] = b[col].astype(float)
    for (c, a, p, coef), v in zip(specs, values):
        b.loc[(b["cation"] == c) & (b["anion"] == a) & (b["parameter"] == p), coef] = float(v)
    return Model(model.db.with_tables(binary=b))


def _ternary_molalities(model, row) -> np.ndarray:
    """Molalities (1, n_species) of a ternary point given in mass-% of its two salts."""
    from phasekit.chemistry.salts import parse_salt, salt_formula_mass

    w1, w2 = float(row["mass_percent_1"]), float(row["mass_percent_2"])
    water = 100.0 - w1 - w2
    m = np.zeros((1, len(model.species)))
    for salt, w in ((row["salt_1"], w1), (row["salt_2"], w2)):
        ms = w / salt_formula_mass(salt) / water * 1000.0
        for sp, n in parse_salt(salt).items():
            m[0, model.index[sp]] += n * ms
    return m


def ternary_ln_iap(model, row) -> tuple[np.ndarray, np.ndarray]:
    """(ln IAP, ln K) of every solid at a ternary point given in mass-% of its two salts."""
    m = _ternary_molalities(model, row)
    t = float(row["temp_c"])
    ln_g, _, ln_aw, _, _ = model.compute(m, t)
    return model.solids.ln_iap(m, ln_g, ln_aw)[0], model.solids.ln_k(t)


def calibrate_ternary(model, name: str, cfg: dict, settings: dict, ref_fit, ref_tern, thermo):
    """Fit the binary coefficients listed in ``cfg['fit']`` to the ternary invariant points of ``name``.

    An outer least-squares problem: for trial values of those coefficients, the salts' own calibration
    (:func:`calibrate_salt`, binary solubility rows) is redone, then the residuals are ln IAP - ln K of
    every solid at every role=fit invariant point. Returns (model, {spec: value}, residuals).
    """
    from scipy.optimize import least_squares

    specs = [tuple(f.split(":")[0].split("-")) + tuple(f.split(":")[1:]) for f in cfg["fit"]]
    pts = ref_tern[ref_tern["system"] == name]
    # each coefficient scaled by its basis function at the hottest point (|P change| there is of order one)
    tk = float(pts["temp_c"].max()) + 273.15
    basis = dict(zip(tempfn.COEFFS, np.abs(tempfn.basis(np.array([tk]))[0])))
    scale = np.array([1.0 / basis[coef] if basis[coef] > 0 else 1.0 for *_, coef in specs]) * 1e-3

    flat = cfg.get("form") == "flattening"
    if flat:
        # one variable u for all: a2 = -a1 u, every parameter's slope vanishes at T* = Tr + 1/(2u)
        if any(coef != "a2" for *_, coef in specs):
            raise ValueError(f"ternary {name}: form 'flattening' fits a2 coefficients only")
        b = model.db.binary
        a1 = np.array([float(b.loc[(b["cation"] == c) & (b["anion"] == a) & (b["parameter"] == p), "a1"].iloc[0])
                       for c, a, p, _ in specs])

    def coeffs(x):
        return -a1 * float(x[0]) * 1e-2 if flat else np.asarray(x) * scale

    def inner(x):
        mod = _set_coeffs(model, specs, coeffs(x))
        for salt in cfg["salts"]:
            mod = calibrate_salt(mod, salt, settings[salt], fit_rows_of(ref_fit, salt), thermo)[0].model
        return mod

    def resid(x):
        mod = inner(x)
        out = []
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            for _, row in pts.iterrows():
                iap, lnk = ternary_ln_iap(mod, row)
                for s in str(row["solids"]).split("+"):
                    k = mod.solids.index[s]
                    out.append(iap[k] - lnk[k])
        return np.array(out)

    # started from zero, as the salts' coefficients, so the result does not depend on the files' values
    sol = least_squares(resid, np.zeros(1 if flat else len(specs)), diff_step=1e-3, xtol=1e-10, ftol=1e-10,
                        gtol=1e-10)
    values = {sp: float(v) for sp, v in zip(specs, coeffs(sol.x))}
    t_flat = tempfn.TR - 273.15 + 1.0 / (2.0 * float(sol.x[0]) * 1e-2) if flat and sol.x[0] != 0 else None
    return _set_coeffs(model, specs, list(values.values())), values, sol.fun, pts, t_flat


# ----------------------------------------------------------------------------- writing
def _refs(rows: pd.DataFrame) -> str:
    """The publications of some fit rows, e.g. "CRC98 x8, WuLiuWu2020 x1" (keys of the measurement files)."""
    keys = rows["source"].str.split(" ").str[0].value_counts(sort=False)
    return ", ".join(f"{k} x{n}" for k, n in sorted(keys.items()))


def _a0_part(source: str) -> str:
    first = source.split(";")[0].strip()
    return first if first.startswith("a0 ") else "a0 " + first


def salt_molalities(model, rows):
    m = data_molalities(model, rows)
    cat = _pair(model, rows["salt"].iloc[0])[0]
    from phasekit.chemistry.salts import parse_salt

    return m[:, model.index[cat]] / parse_salt(rows["salt"].iloc[0])[cat]


def main(dry_run: bool = False, data_dir: Path = DATA) -> dict:
    model, ref_fit, thermo, settings = load_inputs(data_dir)
    transitions = transition_rows(data_dir)
    spans = span_rows(data_dir)
    report = {}
    solid_updates, binary_updates = {}, {}
    problems = []
    tern_settings, ref_tern = load_ternary(data_dir)
    tern_sources = {}
    for name, tcfg in tern_settings.items():
        model, values, tres, pts, t_flat = calibrate_ternary(model, name, tcfg, settings, ref_fit, ref_tern, thermo)
        flat_txt = (f"form a2 = -a1/(2 (T* - Tr)) with one T* for all, fitted T* {t_flat:.1f} °C, where the slopes "
                    f"vanish, residuals ln IAP - ln K {', '.join(f'{v:+.2g}' for v in tres)}" if t_flat else "")
        print(f"\n{name}: {len(pts)} invariant point(s) fitted, residuals ln IAP - ln K "
              + " ".join(f"{v:+.2g}" for v in tres) + (f", T* {t_flat:.2f} °C" if t_flat else ""))
        for (c, a, p, coef), v in values.items():
            print(f"   {p}/{c}/{a}/{coef:<20s} {v:+.6g}")
            pt_txt = " and ".join(f"{r.salt_1}+{r.salt_2} {r.temp_c:g} °C {r.mass_percent_1:g} % + "
                               f"{r.mass_percent_2:g} % ({r.source})" for r in pts.itertuples())
            tern_sources[(c, a, p)] = (coef, v, f"{coef} {v:+.4g} fitted in this project to the {name} invariant "
                                       f"point(s) of data/reference/ternary_eutonic.csv (role=fit: {pt_txt}), "
                                       f"with the binary calibration of {', '.join(tcfg['salts'])} redone at "
                                       f"each trial value{', ' + flat_txt if flat_txt else ''} "
                                       f"(choice: {tcfg['why']})")
    for salt, cfg in settings.items():
        rows = fit_rows_of(ref_fit, salt)
        span = spans[spans["salt"] == salt]
        t_span = (float(min(span["temp_c"].min(), rows["temp_c"].min())), float(max(span["temp_c"].max(), rows["temp_c"].max())))
        res, specs, props = calibrate_salt(model, salt, cfg, rows, thermo, transitions, t_span)
        model = res.model
        msat = salt_molalities(model, rows)
        report[salt] = {"result": res, "rows": rows, "props": props}
        print(f"\n{salt}: {len(rows)} fit rows, {len(specs)} fitted, rms {res.rms:.2g} in ln m")
        for name, v in res.parameters.items():
            print(f"   {name:<28s} {v:+.6g} ± {res.stderr[name]:.2g}")
        for (_, r), e in zip(rows.iterrows(), res.residuals):
            print(f"   fit {r['solids']:<12s} {r['temp_c']:5.0f} °C  {r['mass_percent']:7.3f} %  "
                  f"m {msat[_]:7.3f}  residual ln m {e:+.4f}")
        cat, an = _pair(model, salt)
        tmin = float(min(span["temp_c"].min(), 25.0))
        tmax = float(max(span["temp_c"].max(), 25.0))
        # solids
        trans = (transitions_of(model, salt, cfg["solids"], float(rows["temp_c"].min()), float(rows["temp_c"].max()))
                 if len(cfg["solids"]) > 1 else pd.DataFrame())
        for s in cfg["solids"]:
            sr = rows[rows["solids"] == s]
            ss = span[span["solid"] == s]
            tr_s = transitions[(transitions["salt"] == salt) & ((transitions["solid_a"] == s) | (transitions["solid_b"] == s))]
            # the data range, widened to 25 °C (where dH and dCp were measured) and to the transitions; a solid
            # known only by its transition points: from there to the end of the salt's rows
            if len(ss):
                lo, hi = min(float(ss["temp_c"].min()), 25.0), max(float(ss["temp_c"].max()), 25.0)
            else:
                lo, hi = min(float(math.floor(tr_s["temp_c"].min())), 25.0), tmax
            for tr in trans.itertuples():
                if tr.solid_below == s:
                    hi = max(hi, float(math.ceil(tr.temp_c)))
                if tr.solid_above == s:
                    lo = min(lo, float(math.floor(tr.temp_c)))
            k = model.solids.index[s]
            co = model.solids.coeffs[k]
            dh, dcp = props[s]
            se = res.stderr[f"lnk/{s}/a0"]
            others = [n for n in cfg["solids"] if n != s]
            tr_txt = (" and " + ", ".join(f"the {r.solid_a}/{r.solid_b} transition at {r.temp_c:g} °C ({r.source})"
                                          for r in tr_s.itertuples())) if len(tr_s) else ""
            sol_txt = (f"{len(sr)} solubilities {sr['temp_c'].min():g}–{sr['temp_c'].max():g} °C of {REF} (role=fit; "
                       f"{_refs(sr)})") if len(sr) else "no solubility row"
            src = (f"a0 fitted in this project to {sol_txt}{tr_txt}"
                   + (f" together with {', '.join(others)}" if others else "")
                   + (f" and the {cat}-{an} Pitzer temperature coefficients" if cfg["fit"] else "")
                   + f", a0 ± {se:.2g}; a3, a4 from dH_sol {dh:.2f} kJ/mol and dCp_sol {dcp:.0f} J/(mol K) "
                   "(van 't Hoff, constant dCp) of data/reference/thermochemistry.csv (NBS82, from memory)")
            solid_updates[(s,)] = {"a0": float(co[0]), "a1": 0.0, "a2": 0.0, "a3": float(co[3]), "a4": float(co[4]),
                                   "t_min_c": _fmt(lo), "t_max_c": _fmt(hi), "source": src}
        # Pitzer rows of the pair
        fitted = {(sp[0], sp[3]): res.parameters["/".join(sp)] for sp in specs if sp[0] != "lnk"}
        if fitted:
            tab = model.db.binary
            pair = tab[(tab["cation"] == cat) & (tab["anion"] == an)]
            m_max = max(float(pair["m_max"].max()), float(np.max(msat)))
            for row in pair.itertuples():
                if row.parameter in ("alpha1", "alpha2"):
                    continue
                mine = {c: v for (p, c), v in fitted.items() if p == row.parameter}
                upd = {"t_min_c": _fmt(tmin), "t_max_c": _fmt(tmax), "m_max": f"{m_max:.3g}"}
                parts = [_a0_part(row.source)]
                if mine:
                    for c, v in mine.items():
                        if c == "cp":  # c [Tr (1/T - 1/Tr) + ln(T/Tr)]
                            upd["a3"], upd["a4"] = v * tempfn.TR, v
                        else:
                            upd[c] = v
                    txt = ", ".join(f"{c} {v:+.4g} ± {res.stderr['/'.join((row.parameter, cat, an, c))]:.2g}"
                                    for c, v in mine.items())
                    parts.append(f"{'/'.join(mine)} fitted in this project to the solubility of {salt} "
                                 f"{rows['temp_c'].min():g}–{rows['temp_c'].max():g} °C ({REF} role=fit, "
                                 f"{len(rows)} rows, {np.min(msat):.2g}–{np.max(msat):.2g} mol/kg, along the "
                                 f"saturation curve only){_aw_text(salt, cfg)} with ln K from NBS82 dH and dCp: {txt} "
                                 f"(choice: {cfg['why']})")
                    for c in ("a1", "a2"):
                        if c not in mine and getattr(row, c) != 0:  # kept, e.g. a calorimetric a1
                            parts.append(f"{c} kept as in the previous data file (not refitted)")
                elif row.parameter in [z.split(":")[0] for z in cfg.get("zero", [])]:
                    for z in cfg.get("zero", []):
                        p_, c_ = z.split(":")
                        if p_ == row.parameter:
                            upd.update({"a3": 0.0, "a4": 0.0} if c_ == "cp" else {c_: 0.0})
                    parts.append("temperature coefficients set to zero by the calibration (a previous value "
                                 "recalled with low confidence was dropped; the saturated solutions do not "
                                 "determine it)")
                else:
                    tail = "; ".join(x.strip() for x in row.source.split(";")[1:])
                    if row.a1 != 0 or row.a2 != 0:
                        parts.append(tail if "not refitted" in tail else
                                     f"{tail}, not refitted (the saturated solutions do not constrain it)")
                    else:
                        parts.append("no temperature dependence: held at the 25 °C value (the saturated "
                                     "solutions do not constrain it)")
                if (cat, an, row.parameter) in tern_sources:
                    coef, v, txt = tern_sources[(cat, an, row.parameter)]
                    upd[coef] = v
                    # the older parts of the source, without a previous text of this coefficient
                    parts = [_a0_part(row.source)] + [x.strip() for x in row.source.split(";")[1:]
                                                      if not x.strip().startswith(f"{coef} ")] + [txt]
                upd["source"] = "; ".join(parts)
                binary_updates[(cat, an, row.parameter)] = upd
        # sanity of the activity up to saturation, with the solids' new validity ranges
        sol_tab = model.db.solids.copy()
        for (name,), upd in solid_updates.items():
            sol_tab.loc[sol_tab["solid"] == name, ["t_min_c", "t_max_c"]] = [float(upd["t_min_c"]), float(upd["t_max_c"])]
        model = Model(model.db.with_tables(solids=sol_tab))
        lo_s = min(float(solid_updates[(s,)]["t_min_c"]) for s in cfg["solids"])
        hi_s = max(float(solid_updates[(s,)]["t_max_c"]) for s in cfg["solids"])
        line = []
        for t in sorted(set(np.arange(lo_s, hi_s + 0.1, 10.0).tolist() + [hi_s])):
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore", ValidityWarning)
                    r = pk.solubility(salt, float(t), model=model)
            except Exception as exc:  # noqa: BLE001 — reported below
                problems.append(f"{salt} {t:g} °C: no solubility ({exc})")
                continue
            problems += activity_sanity(model, salt, r.molality, float(t))
            line.append(f"{t:g}:{r.water_activity:.3f}")
        print("   water activity at saturation (°C:a_w)", " ".join(line))
        if len(trans):
            for tr in trans.itertuples():
                print(f"   transition {tr.solid_below} -> {tr.solid_above} at {tr.temp_c:.2f} °C, "
                      f"{tr.molality:.3f} mol/kg")
    print("\nactivity sanity:", "; ".join(problems) if problems else "ln a± increasing and a_w decreasing up to "
          "saturation for every calibrated salt, every 10 °C of its solids' range")
    if not dry_run:
        n1 = rewrite_csv(data_dir / "solids.csv", ("solid",), solid_updates)
        n2 = rewrite_csv(data_dir / "pitzer_binary.csv", ("cation", "anion", "parameter"), binary_updates)
        print(f"wrote data/solids.csv ({n1} rows changed) and data/pitzer_binary.csv ({n2} rows changed)")
    return report


if __name__ == "__main__":
    main(dry_run="--dry-run" in sys.argv)
