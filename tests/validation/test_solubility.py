"""Single-salt solubilities 0–100 °C, stable solids and hydrate transitions.

Reference values: ``data/reference/binary_solubility.csv`` (CRC Handbook of Chemistry and
Physics, "Aqueous solubility of inorganic compounds at various temperatures", compiling Linke &
Seidell; CaSO4 from Marshall & Slusher 1966 and Blount & Dickson 1973 — all from memory). Only its
``role=check`` rows are checks here; the ``role=fit`` rows calibrated ln K a0 of the solids and the
temperature coefficients of the Pitzer parameters (``scripts/calibrate_solids.py``, configured by
``data/reference/calibration.toml``, with ΔH° and ΔCp° of ``data/reference/thermochemistry.csv``).
Every 25 °C row is a check: the 25 °C solubility is predicted from ln K fitted at the other
temperatures. ``test_no_check_row_is_a_fit_row`` and ``test_fit_rows_are_what_the_calibration_used``
guard that separation.

Tolerances (relative, on the mass percent of anhydrous salt), fixed by one rule before the check rows
of this calibration were compared: three times the rms residual of the salt's fit rows (converted from
ln m to mass percent, factor 1 - w/100), but at least 1 %: every fit has one degree of freedom or none,
so its rms says little about the true scatter, and 1 % is what remembered three-to-four-figure handbook
values and the model's smoothness between fit rows 20–50 K apart can be asked to meet. CaSO4 gets 5 %:
gypsum and anhydrite solubilities of different authors differ by 3–5 %.

=========  ======  ==========================================================
salt       tol     fit rms (ln m), dof
=========  ======  ==========================================================
NaCl       1.0 %   0.23 %, 1
KCl        1.0 %   0.03 %, 1
K2SO4      1.0 %   0.06 %, 1
Na2SO4     1.0 %   0.29 %, 1 (two hydrates)
MgSO4      1.8 %   0.87 %, 1 (three hydrates): 3 x 0.59 % in mass percent
MgCl2      1.0 %   0.06 %, 1
KNO3       1.0 %   0, 0 (six coefficients on six rows)
NaNO3      2.3 %   1.5 %, 1: 3 x 0.75 % in mass percent
CaCl2      1.0 %   0, 0
CaSO4      5.0 %   0, 0 (see above)
LiCl       1.0 %   0.04 %, 1
Li2SO4     2.0 %   0.9 %, 2: 3 x 0.67 % in mass percent
=========  ======  ==========================================================

Checks that miss their tolerance are kept, marked ``xfail(strict=True)`` with the finding beside them
(``DEVIATIONS``): they fail the suite as soon as they pass, so that the note is revisited.

Transition temperatures in pure water are found by root-finding in ``pk.polytherm`` and compared
with the literature (from memory): mirabilite → thenardite 32.38 °C (CRC Handbook); epsomite →
hexahydrite 48.1 °C and hexahydrite → kieserite about 68 °C (Linke & Seidell); gypsum → anhydrite
between 42 and 60 °C (Hardie 1967, Am. Mineral. 52, 171: 58 ± 2 °C; Marshall & Slusher 1966,
J. Phys. Chem. 70, 4015 and Blount & Dickson 1973, Am. Mineral. 58, 323: about 42–46 °C). Each
tolerance is the shift that the salt's solubility tolerance allows: a relative error δ in the
molality of one solid moves the crossing by δ / |d ln m_a/dT - d ln m_b/dT|.
"""

import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

import phasekit as pk
from phasekit.data_files import read_csv
from phasekit.errors import ValidityWarning

ROOT = Path(__file__).resolve().parents[2]
REF = read_csv("reference/binary_solubility.csv", ROOT / "data")
CHECK = REF[REF["role"] == "check"]
FIT = REF[REF["role"] == "fit"]

TOL = {"NaCl": 0.010, "KCl": 0.010, "K2SO4": 0.010, "Na2SO4": 0.010, "MgSO4": 0.018, "MgCl2": 0.010,
       "KNO3": 0.010, "NaNO3": 0.023, "CaCl2": 0.010, "CaSO4": 0.050, "LiCl": 0.010, "Li2SO4": 0.020}

_GAP = ("the fit rows leave a gap from 0 to 50 °C (the 25 °C row is a check), and the model family fitted "
        "(a1 and a heat-capacity term of beta0 with ln K from NBS82 dH and dCp) bends between them less than the "
        "data do; ")
#: checks that miss their tolerance, with the finding (salt, solid, temp_c) -> note
DEVIATIONS = {
    # (KCl 10-30 degC, +1.1 to +1.4 % with the linear C^phi(T) of K-Cl, now within 1 %: the curvature of
    # C^phi fitted to the 100 degC NaCl-KCl eutonic (calibration.toml [ternary.NaCl-KCl]) lets the
    # refitted beta0 heat-capacity term of K-Cl bend the solubility curve as the data do.)
    ("Na2SO4", "mirabilite", 25.0): "model -1.1 %: mirabilite rises from 4.5 to 29 % between 0 and 30 °C; three "
    "fit rows (0, 15, 30 °C) and shared Na-SO4 coefficients leave 1 % between them",
    ("MgCl2", "bischofite", 25.0): _GAP + "model -1.3 % at 25 °C while 10, 20 and 40 °C are within 0.5 %: the "
    "remembered 25 °C value (35.9 %) itself lies 0.8 % above a smooth line through 20 and 40 °C (35.3, 36.5 %); "
    "suspect the remembered value.",
    ("KNO3", "niter", 30.0): "model +1.05 % (25 °C +0.6 %, 10 °C -0.4 %): six coefficients on six rows "
    "interpolate 20–40 °C with a small overshoot",
    ("CaCl2", "antarcticite", 25.0): "model -1.6 %: with two fit rows (0, 20 °C) and one coefficient, the 25 °C "
    "value is an extrapolation into 7.4 mol/kg where the HMW84 Ca-Cl parameters (fitted to 6 mol/kg) put "
    "ln IAP of CaCl2·6H2O close to its maximum: a small error in ln K moves the solubility a lot. The model's "
    "a_w of the saturated solution, 0.26, is also below the 0.29 of the deliquescence humidity of CaCl2·6H2O "
    "(from memory): the 25 °C Ca-Cl parameters, not the temperature terms, are the limit.",
}


def _mark_known(request, salt, solid, temp_c):
    note = DEVIATIONS.get((salt, solid, float(temp_c)))
    if note:
        request.applymarker(pytest.mark.xfail(strict=True, reason=note))
POLYTHERM_SALTS = ["NaCl", "KCl", "K2SO4", "MgSO4", "Na2SO4", "MgCl2", "KNO3", "NaNO3"]


@pytest.fixture(autouse=True)
def _quiet_validity():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        yield


def _rows(frame):
    for r in frame.itertuples():
        yield pytest.param(r.salt, r.solid, float(r.temp_c), float(r.mass_percent), r.source,
                           id=f"{r.salt}-{r.solid}-{r.temp_c:g}")


# ------------------------------------------------------------------ separation of fit and check
@pytest.mark.validation
def test_no_check_row_is_a_fit_row():
    key = ["salt", "solid", "temp_c"]
    fit = set(map(tuple, FIT[key].to_numpy().tolist()))
    check = set(map(tuple, CHECK[key].to_numpy().tolist()))
    assert fit and check and not fit & check
    assert set(REF["role"]) == {"fit", "check"}
    # and no two rows of the same role say different things about the same point
    assert not REF.duplicated(key).any()


@pytest.mark.validation
def test_fit_rows_are_what_the_calibration_used():
    sys.path.insert(0, str(ROOT / "scripts"))
    import calibrate_solids as cs

    model, ref_fit, thermo, settings = cs.load_inputs(ROOT / "data")
    used = {(s, r.solids, float(r.temp_c)) for s in settings for r in cs.fit_rows_of(ref_fit, s).itertuples()}
    assert used == {(r.salt, r.solid, float(r.temp_c)) for r in FIT.itertuples()}
    # every calibrated solid names the number of fit rows it was fitted to
    for salt, cfg in settings.items():
        for solid in cfg["solids"]:
            n = int(((FIT["salt"] == salt) & (FIT["solid"] == solid)).sum())
            src = model.db.solids.set_index("solid").loc[solid, "source"]
            assert f"fitted in this project to {n} solubilities" in src
    # and the stored values are what the calibration gives (one salt rerun: MgCl2)
    rows = cs.fit_rows_of(ref_fit, "MgCl2")
    res, specs, _ = cs.calibrate_salt(model, "MgCl2", settings["MgCl2"], rows, thermo)
    k = model.solids.index["bischofite"]
    assert res.parameters["lnk/bischofite/a0"] == pytest.approx(model.solids.coeffs[k, 0], rel=1e-6)
    tab = model.db.binary.set_index(["cation", "anion", "parameter"])
    for kind, cat, an, coef in specs[1:]:
        stored = tab.loc[(cat, an, kind), "a4" if coef == "cp" else coef]
        assert res.parameters["/".join((kind, cat, an, coef))] == pytest.approx(stored, rel=1e-5)


# ------------------------------------------------------------------ 25 °C, 12 salts
ROWS_25 = CHECK[CHECK["temp_c"] == 25.0]


@pytest.mark.validation
def test_twelve_salts_checked_at_25c():
    assert len(set(ROWS_25["salt"])) >= 12


@pytest.mark.validation
@pytest.mark.parametrize("salt,solid,temp_c,expected,source", list(_rows(ROWS_25)))
def test_solubility_25c(request, salt, solid, temp_c, expected, source):
    _mark_known(request, salt, solid, temp_c)
    r = pk.solubility(salt, temp_c)
    assert r.solid == solid
    assert r.mass_percent == pytest.approx(expected, rel=TOL[salt]), source


# ------------------------------------------------------------------ 0–100 °C, the eight salts
ROWS_T = CHECK[CHECK["salt"].isin(POLYTHERM_SALTS) & (CHECK["temp_c"] != 25.0)]


@pytest.mark.validation
@pytest.mark.parametrize("salt,solid,temp_c,expected,source", list(_rows(ROWS_T)))
def test_solubility_0_100c(request, salt, solid, temp_c, expected, source):
    _mark_known(request, salt, solid, temp_c)
    r = pk.solubility(salt, temp_c)
    assert r.solid == solid  # the right stable solid at this temperature
    assert r.mass_percent == pytest.approx(expected, rel=TOL[salt]), source


@pytest.mark.validation
@pytest.mark.parametrize("salt,solid,temp_c,expected,source",
                         list(_rows(CHECK[CHECK["salt"].isin(["CaSO4", "CaCl2", "Li2SO4", "LiCl"])
                                          & (CHECK["temp_c"] != 25.0)])))
def test_other_checks(request, salt, solid, temp_c, expected, source):
    """Checks of the other salts away from 25 °C, on the named solid (gypsum above its transition
    is metastable: its solubility is measured and checked all the same, as an extrapolation of its
    ln K beyond its fit rows when it lies outside the solid's range)."""
    try:
        pk.solubility(salt, temp_c)
    except pk.RangeError:
        pytest.skip(f"{temp_c:g} °C outside the data of {salt}: the model refuses it (checked in "
                    "test_range_is_refused)")
    _mark_known(request, salt, solid, temp_c)
    r = pk.solubility(solid, temp_c)
    assert r.mass_percent == pytest.approx(expected, rel=TOL[salt]), source


@pytest.mark.validation
def test_range_is_refused():
    # Li2SO4·H2O was fitted at 0–30 °C with Li-SO4 parameters held at their 25 °C values: the 50 °C
    # check row (24.8 %, CRC Handbook, from memory) lies outside the data, and the model says so.
    with pytest.raises(pk.RangeError):
        pk.solubility("Li2SO4", 50.0)


# ------------------------------------------------------------------ transitions
def _transitions(salt):
    _, tr = pk.polytherm(salt, 0.0, 100.0, 1.0)
    return {(a, b): t for a, b, t in zip(tr["solid_below"], tr["solid_above"], tr["temp_c"])}


@pytest.mark.validation
def test_mirabilite_thenardite():
    # 32.38 °C, CRC Handbook (from memory). Tolerance 1 K: d ln m/dT of mirabilite near 30 °C is
    # about 0.09 /K against -0.006 /K for thenardite; 1.5 % in mass percent (2.3 % in m) moves the
    # crossing by 0.25 K, the rest allows for the steepness of the mirabilite curve near its end.
    tr = _transitions("Na2SO4")
    assert list(tr) == [("mirabilite", "thenardite")]
    assert tr[("mirabilite", "thenardite")] == pytest.approx(32.38, abs=1.0)


@pytest.mark.validation
def test_epsomite_hexahydrite():
    # 48.1 °C, Linke & Seidell (from memory). Tolerance 4 K: the two curves cross at a shallow
    # angle (d ln m/dT 0.014 /K and 0.008 /K), so 2 % in mass percent (2.9 % in m) moves the
    # crossing by 4.4 K.
    tr = _transitions("MgSO4")
    assert ("epsomite", "hexahydrite") in tr
    assert tr[("epsomite", "hexahydrite")] == pytest.approx(48.1, abs=4.0)


@pytest.mark.validation
@pytest.mark.xfail(strict=True, reason=(
    "model 71.3 °C against about 68 °C. Finding: the remembered handbook rows themselves put the "
    "crossing at 70.6 °C (hexahydrite 36.0 % at 65 °C extrapolated with its slope 0.0076 /K, kieserite "
    "35.8 % at 80 °C with -0.0055 /K): the model follows its data. Either the 65 °C or the 80 °C row "
    "is off by about 1.5 %, or the literature value is for another definition of the transition; not "
    "resolved without the original tables."))
def test_hexahydrite_kieserite():
    # about 68 °C (67.5–68.2), Linke & Seidell (from memory). Tolerance 2.2 K: d ln m/dT of
    # +0.0076 /K and -0.0055 /K; 2 % in mass percent (2.9 % in m) moves the crossing by 2.2 K.
    tr = _transitions("MgSO4")
    assert tr[("hexahydrite", "kieserite")] == pytest.approx(68.0, abs=2.2)


@pytest.mark.validation
def test_gypsum_anhydrite():
    # literature range 42–60 °C (Hardie 1967: 58 ± 2; Marshall & Slusher 1966, Blount & Dickson
    # 1973: 42–46; from memory). The model's value must lie in it.
    _, tr = pk.polytherm("CaSO4", 0.0, 100.0, 1.0)
    assert list(zip(tr["solid_below"], tr["solid_above"])) == [("gypsum", "anhydrite")]
    assert 42.0 <= tr["temp_c"][0] <= 60.0


# ------------------------------------------------------------------ facts of the trade
def _poly(salt):
    curve, _ = pk.polytherm(salt, 0.0, 100.0, 5.0)
    return curve.drop_duplicates("temp_c", keep="last").set_index("temp_c")


@pytest.mark.validation
def test_nacl_changes_little_and_knO3_most():
    # common practice (no source): NaCl's solubility hardly changes from 0 to 100 °C, KNO3's
    # changes most among these salts.
    change = {}
    for salt in POLYTHERM_SALTS:
        c = _poly(salt)["grams_per_100g_water"]
        change[salt] = c.max() / c.min() - 1.0
    assert change["NaCl"] < 0.1
    assert min(change, key=change.get) == "NaCl"
    assert max(change, key=change.get) == "KNO3"
    assert change["KNO3"] > 10 * change["KCl"]


@pytest.mark.validation
def test_thenardite_retrograde():
    # common practice (no source): above the transition, thenardite's solubility falls with temperature.
    c = _poly("Na2SO4")
    above = c[(c.index >= 35.0) & (c["solid"] == "thenardite")]["molality"]
    assert len(above) >= 10
    assert np.all(np.diff(above.to_numpy()) < 0)


@pytest.mark.validation
@pytest.mark.parametrize("salt", POLYTHERM_SALTS + ["CaCl2", "LiCl", "Li2SO4", "CaSO4"])
def test_activity_sensible_up_to_saturation(model, salt):
    """ln a± rises and a_w falls with molality from 1e-3 mol/kg up to saturation, every 10 °C of
    the salt's range (no sign change in the derivatives, no blow-up): the temperature coefficients
    fitted on the saturation curve must not spoil the solution below it. Common practice (no source)."""
    from phasekit.chemistry.salts import parse_salt

    ions = parse_salt(salt)
    vec = np.zeros(len(model.species))
    for s, n in ions.items():
        vec[model.index[s]] = n
    info_lo = min(model.solids[s].t_min_c for s in pk.solubility(salt, 25.0).candidates.index)
    info_hi = max(model.solids[s].t_max_c for s in pk.solubility(salt, 25.0).candidates.index)
    for t in np.arange(info_lo, info_hi + 0.1, 10.0):
        m_sat = pk.solubility(salt, float(t)).molality
        ms = np.geomspace(1e-3, m_sat, 150)
        ln_g, _, ln_aw, _, _ = model.compute(ms[:, None] * vec[None, :], float(t))
        ln_a = (np.log(ms)[:, None] + np.log(np.where(vec > 0, vec, 1.0))[None, :] + ln_g) @ vec
        assert np.all(np.diff(ln_a) > 0), f"{salt} {t:g} °C"
        assert np.all(np.diff(ln_aw) < 0), f"{salt} {t:g} °C"
        assert 0.0 < np.exp(ln_aw[-1]) < 1.0
