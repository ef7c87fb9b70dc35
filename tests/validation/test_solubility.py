"""Single-salt solubilities 0–100 °C, stable solids and hydrate transitions.

Reference values: the single-salt solubilities of ``data/reference/measured_binaries.csv``
(:func:`phasekit.calibration.measurements.binary_solubility_table`): the CRC Handbook of Chemistry and
Physics, 98th ed. (2017), "Aqueous solubility of inorganic compounds at various temperatures" (CRC98),
its molality table (CRC98m), and the NaCl correlation of Potter, Babcock & Brown 1977 (PBB1977), read as
the file's header says, and three recalled Na2SO4 rows (0, 10, 15 °C) of ``measured_recalled.csv``
(from memory: the table's cells are blank in the typed copies read). Only its ``role=check`` rows (0, 25, 50, 75, 100 °C, set by
rule before any model was run) are checks here; the ``role=fit`` rows calibrated ln K a0 of the solids and
the temperature coefficients of the Pitzer parameters (``scripts/calibrate_solids.py``, configured by
``data/reference/calibration.toml``, with ΔH° and ΔCp° of ``data/reference/thermochemistry.csv``), within
the temperature window a salt's entry there may set. Every 25 °C row is a check: the 25 °C solubility is
predicted from ln K fitted at the other temperatures. ``test_no_check_row_is_a_fit_row`` and ``test_fit_rows_are_what_the_calibration_used``
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
NaCl       1.0 %   0.18 %, 12
KCl        1.0 %   0.07 %, 5
K2SO4      1.0 %   0.27 %, 4
Na2SO4     1.0 %   0.14 %, 1 (two hydrates, dCp of both refitted)
MgSO4      1.2 %   0.60 %, 2 (three hydrates, and the 48 °C transition): 3 x 0.41 % in mass percent
MgCl2      1.0 %   0.05 %, 4
KNO3       1.0 %   0.16 %, 2
NaNO3      1.0 %   0.23 %, 4
CaCl2      1.0 %   0, 0 (two fit rows, 0-25 °C window)
CaSO4      5.0 %   0.28 %, 5 (8 rows and 2 transitions, 4 fitted; see above)
LiCl       1.0 %   0, 0 (four rows, 0-50 °C window)
Li2SO4     2.7 %   1.2 %, 3 (0-40 °C window): 3 x 0.9 % in mass percent
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
from phasekit.calibration.measurements import binary_solubility_table
from phasekit.errors import ValidityWarning

ROOT = Path(__file__).resolve().parents[2]
REF = binary_solubility_table()
CHECK = REF[REF["role"] == "check"]
FIT = REF[REF["role"] == "fit"]

TOL = {"NaCl": 0.010, "KCl": 0.010, "K2SO4": 0.010, "Na2SO4": 0.010, "MgSO4": 0.012, "MgCl2": 0.010,
       "KNO3": 0.010, "NaNO3": 0.010, "CaCl2": 0.010, "CaSO4": 0.050, "LiCl": 0.010, "Li2SO4": 0.027}

_GAP = ("the fit rows leave a gap from 0 to 50 °C (the 25 °C row is a check), and the model family fitted "
        "(a1 and a heat-capacity term of beta0 with ln K from NBS82 dH and dCp) bends between them less than the "
        "data do; ")
_EDGE = ("the fit rows end 10 K inside the range (the role rule makes the 0 and 100 °C rows checks), so this check is "
         "an extrapolation of the salt's temperature functions; ")
#: checks that miss their tolerance, with the finding (salt, solid, temp_c) -> note
DEVIATIONS = {
    ("K2SO4", "arcanite", 0.0): _EDGE + "model -3.5 %. The K2SO4 temperature terms are limited to beta0 (a1, a2 and a "
    "heat-capacity term) because every set that frees beta1 and fits the 0-1.4 mol/kg rows makes K2SO4-MgSO4-H2O "
    "unphysical above 65 °C (calibration.toml says which); beta1 a1 would bend the 0-10 °C end the way the data do.",
    ("MgSO4", "epsomite", 0.0): _EDGE + "model +1.5 % (tolerance 1.2 %).",
    ("MgSO4", "hexahydrite", 50.0): "model +1.9 %: 50 °C lies 1.5 K above the fitted epsomite/hexahydrite transition "
    "(48 °C, SSHADE, rounded) and hexahydrite has one fit row (60 °C): its ln K a0 rests on that row, the transition "
    "and the recalled NBS82 dH and dCp of its dissolution.",
    ("NaNO3", "nitratine", 0.0): _EDGE + "model -1.3 %.",
    ("Na2SO4", "mirabilite", 0.0): _EDGE + "model -3.3 % against a recalled value (4.50 %, measured_recalled.csv): "
    "mirabilite's solubility triples between 0 and 20 °C, so 1 K of error in the curve is 5 %; the 0 and 10 °C cells "
    "of the table read are blank, verify the recalled value first.",
    ("CaCl2", "antarcticite", 25.0): "model -1.9 %: with two fit rows (10, 20 °C) and one coefficient, the 25 °C "
    "value is an extrapolation into 7.3 mol/kg where the HMW84 Ca-Cl parameters (fitted to 6 mol/kg) put "
    "ln IAP of CaCl2·6H2O close to its maximum: a small error in ln K moves the solubility a lot.",
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
    # one row per point and publication; recalled values only in the one file that holds them
    assert not REF.duplicated(key + ["source"]).any()
    assert set(REF.loc[REF["memory"], "source"].str.extract(r"\((.*)\)")[0]) <= {"measured_recalled.csv"}


@pytest.mark.validation
def test_fit_rows_are_what_the_calibration_used():
    sys.path.insert(0, str(ROOT / "scripts"))
    import calibrate_solids as cs

    model, ref_fit, thermo, settings = cs.load_inputs(ROOT / "data")
    used = {(s, r.solids, float(r.temp_c), r.source) for s in settings for r in cs.fit_rows_of(ref_fit, s).itertuples()}
    # every fit row of a calibrated solid within its salt's window, and nothing else
    window = [r.salt in settings and r.solid in settings[r.salt]["solids"]
              and settings[r.salt].get("fit_t_min_c", -1e9) <= r.temp_c <= settings[r.salt].get("fit_t_max_c", 1e9)
              for r in FIT.itertuples()]
    inside = FIT[window]
    assert used == {(r.salt, r.solid, float(r.temp_c), r.source) for r in inside.itertuples()}
    # every calibrated solid names the number of fit rows it was fitted to
    for salt, cfg in settings.items():
        for solid in cfg["solids"]:
            n = int(((inside["salt"] == salt) & (inside["solid"] == solid)).sum())
            if n == 0:  # known by its transition points only (anhydrite)
                continue
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
    # 32.4 °C, SALTWIKI's mirabilite page (read; role=check in measured_binaries.csv). Tolerance 1 K: d ln m/dT of mirabilite near 30 °C is
    # about 0.09 /K against -0.006 /K for thenardite; 1.5 % in mass percent (2.3 % in m) moves the
    # crossing by 0.25 K, the rest allows for the steepness of the mirabilite curve near its end.
    tr = _transitions("Na2SO4")
    assert list(tr) == [("mirabilite", "thenardite")]
    assert tr[("mirabilite", "thenardite")] == pytest.approx(32.4, abs=1.0)


@pytest.mark.validation
def test_epsomite_hexahydrite():
    # Not an independent check: 48 °C (SSHADE, read, rounded) is a FIT row of the MgSO4 calibration (a transition
    # residual); this guards that the calibration holds it. Tolerance 4 K: the two curves cross at a shallow
    # angle (d ln m/dT 0.014 /K and 0.008 /K), so 2 % in mass percent (2.9 % in m) moves the
    # crossing by 4.4 K.
    tr = _transitions("MgSO4")
    assert ("epsomite", "hexahydrite") in tr
    assert tr[("epsomite", "hexahydrite")] == pytest.approx(48.0, abs=4.0)


@pytest.mark.validation
def test_hexahydrite_kieserite():
    # 68 °C, SSHADE (read, rounded to 1 K; role=check in measured_binaries.csv). Tolerance 2.2 K: d ln m/dT of
    # +0.0076 /K and -0.0055 /K; 2 % in mass percent (2.9 % in m) moves the crossing by 2.2 K.
    tr = _transitions("MgSO4")
    assert tr[("hexahydrite", "kieserite")] == pytest.approx(68.0, abs=2.2)


@pytest.mark.validation
def test_gypsum_anhydrite():
    # Published values 42-58 °C (read, measured_binaries.csv: Bock 1961 42, Can. J. Chem. 1984 42.55, Blount &
    # Dickson 1973 56 ± 3, Hardie 1967 58 ± 2). Two of them (42.55, 56) fitted anhydrite's ln K a0, so this is a
    # range guard, not an independent check: the model's value must lie within the published spread.
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
@pytest.mark.xfail(strict=True, reason=(
    "the model's thenardite curve has a shallow minimum near 92 °C (29.85 %) and rises by 0.08 mass-% to 100 °C, "
    "where the measured curve (CRC98) still falls (29.79 % at 90, 29.67 % at 100 °C): the ln K of thenardite "
    "(NBS82 dH, dCp refitted) and the Na-SO4 terms fitted to 40-90 °C bend upwards past the last fit row."))
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
