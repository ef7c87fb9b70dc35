"""Lithium salts: single-salt and ternary solubilities at 25 °C (and 20–40 °C), and a salar-pond evaporation.

Which data fitted what
----------------------
* LiCl·2H2O, LiCl·H2O and Li2SO4·H2O: ln K a0 (and a1 and a heat-capacity term of Li-Cl beta0) fitted by
  ``scripts/calibrate_solids.py`` to the ``role=fit`` rows of ``data/reference/measured_binaries.csv`` (CRC Handbook
  98th ed., read; LiCl 10 °C as LiCl·2H2O, 20, 30, 40 °C as LiCl·H2O; Li2SO4 10, 20, 30, 40 °C). Checked here: its
  ``role=check`` rows up to 35 °C (LiCl 0, 25 °C; Li2SO4 0, 25 °C), with the tolerances of
  ``tests/validation/test_solubility.py`` (same rule: three times the fit rms, at least 1 %), and the
  dihydrate/monohydrate transition (19.1 °C, Linke & Seidell, from memory).
* LiKSO4 and LiCl·MgCl2·7H2O: ln K (25 °C, held constant) fitted by ``scripts/calibrate_lithium.py`` to one
  invariant point each, the ``role=fit`` rows of ``data/reference/lithium_invariants.csv`` (LiKSO4 +
  arcanite; bischofite + LiCl·MgCl2·7H2O). Checked here: the other invariant point of the same system
  (``role=check``), never the fit point.
* Water activity of saturated LiCl: Greenspan 1977, J. Res. Natl. Bur. Stand. 81A, 89 (relative humidity
  over saturated salt solutions; from memory): 11.31 % (20 °C), 11.30 % (25 °C), 11.28 % (30 °C),
  11.21 % (40 °C). The 25 °C value fitted the 25 °C Li-Cl parameters (``scripts/fit_concentrated_binaries.py``,
  with Pitzer & Mayorga 1973's own phi and ln gamma to 6 mol/kg); 20, 30 and 40 °C are the checks (their
  temperature dependence comes from SP77's slopes and the LiCl·H2O solubility fit, not from Greenspan).

Tolerances
----------
Invariant points: 2 mass-% absolute on each salt, the uncertainty of the recalled values (LS65, from memory,
low confidence, recalled to about ±2 %), fixed before the model was run against them. Water activity:
0.01 absolute (Greenspan's stated uncertainty is about 0.003; the rest for the remembered digits).

Findings (strict xfails: they fail the suite as soon as they pass, so the note is revisited)
-------------------------------------------------------------------------------------------
First finding, resolved: the Pitzer & Mayorga 1973 Li-Cl parameters (fitted to 6 mol/kg) extrapolated to the
20 mol/kg of saturated LiCl gave an osmotic coefficient of about 5.1 instead of 3.0 (a_w 0.025 against
0.113); the LiCl·H2O ln K fitted to the solubilities absorbed it for the pure salt but not in mixtures.
The Li-Cl parameters are now fitted to saturation in the two-alpha form of B (see
``scripts/fit_concentrated_binaries.py``): a_w of saturated LiCl is right at 20-40 °C and the LiCl-MgCl2 check
point is within its tolerance. What remains: the LiCl-NaCl and Li2SO4-K2SO4 checks (reasons beside them);
no theta(Li,Mg) or psi with lithium and Mg or sulfate is known to us (all zero).
"""

import warnings

import numpy as np
import pytest

import phasekit as pk
from phasekit.calibration.measurements import binary_solubility_table
from phasekit.data_files import read_csv
from phasekit.paths import ion_loss_point

REF = binary_solubility_table()
TERN = read_csv("reference/lithium_invariants.csv")
AW = read_csv("reference/saturated_water_activity.csv")  # Greenspan 1977 (from memory)
BRINE = read_csv("demo/lithium_brine.csv")  # INVENTED demo brine (see the file header)

TOL_BINARY = {"LiCl": 0.010, "Li2SO4": 0.027}  # as tests/validation/test_solubility.py
TOL_MASS_PERCENT = 2.0

LI_SOLIDS = ("LiCl·H2O", "Li2SO4·H2O", "LiKSO4", "LiCl·MgCl2·7H2O")

@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pk.ValidityWarning)
        yield


def _check_rows(system):
    rows = TERN[(TERN["system"] == system) & (TERN["role"] == "check")]
    assert len(rows), system
    return rows


def _point(iso, solids):
    ip = iso.invariant_points
    hit = ip[[set(s) == set(solids) for s in ip["solids"]]]
    assert len(hit) == 1, f"{solids} not an invariant point of the model: {list(ip['solids'])}"
    return hit.iloc[0]


# ------------------------------------------------------------------ separation of fit and check
@pytest.mark.validation
def test_fit_and_check_rows_are_separate():
    key = ["system", "solids", "temp_c"]
    fit = TERN[TERN["role"] == "fit"]
    assert set(TERN["role"]) == {"fit", "check"}
    assert not set(map(tuple, fit[key].to_numpy().tolist())) & set(
        map(tuple, TERN[TERN["role"] == "check"][key].to_numpy().tolist()))
    # the stored ln K are what the script gives from the fit rows
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "scripts"))
    import calibrate_lithium as cl

    model = pk.default_model()
    for solid, (a0, *_rest) in cl.fit(cl.DATA).items():
        k = model.solids.index[solid]
        assert model.solids.coeffs[k, 0] == pytest.approx(a0, rel=1e-8)
        assert "fitted in this project to 1 invariant point" in model.db.solids.set_index("solid").loc[solid, "source"]


# ------------------------------------------------------------------ single salts
BIN = REF[REF["salt"].isin(["LiCl", "Li2SO4"]) & (REF["role"] == "check")]


@pytest.mark.validation
@pytest.mark.parametrize("salt,solid,temp_c,expected,source",
                         [(r.salt, r.solid, float(r.temp_c), float(r.mass_percent), r.source)
                          for r in BIN.itertuples() if r.temp_c <= 35],
                         ids=lambda v: str(v))
def test_binary_solubility(salt, solid, temp_c, expected, source):
    r = pk.solubility(salt, temp_c)
    assert r.solid == solid
    assert r.mass_percent == pytest.approx(expected, rel=TOL_BINARY[salt]), source


@pytest.mark.validation
def test_binary_outside_the_data_is_refused():
    # Li2SO4 50 °C (24.8 %, CRC Handbook, from memory) lies beyond its fit rows (0-40 °C) and LiCl 60 °C beyond
    # its (0-50 °C): the model refuses rather than extrapolating.
    for salt, t in (("Li2SO4", 50.0), ("LiCl", 60.0)):
        with pytest.raises(pk.RangeError):
            pk.solubility(salt, t)


@pytest.mark.validation
@pytest.mark.xfail(strict=True, reason=(
    "model 21.8 °C against 19.1 °C: the dihydrate's ln K rests on two recalled solubilities (0, 10 °C) and on "
    "dfH of LiCl·2H2O (NBS82, from memory, low confidence) with an additive Cp estimate; the a0 fitted has ± 0.011 "
    "(0.6 K) and a 1 kJ/mol error in dH moves the transition by about 0.4 K, so the miss points to the recalled "
    "0-10 °C solubilities or dH; unresolved without the tables"))
def test_licl_dihydrate_monohydrate_transition():
    # LiCl·2H2O -> LiCl·H2O + H2O at 19.1 °C in the saturated solution (Linke & Seidell 1965, from memory)
    tr = pk.polytherm("LiCl", 0.0, 50.0, 1.0)[1]
    row = tr[(tr["solid_below"] == "LiCl·2H2O") & (tr["solid_above"] == "LiCl·H2O")]
    assert len(row) == 1
    assert float(row["temp_c"].iloc[0]) == pytest.approx(19.1, abs=1.0)


@pytest.mark.validation
def test_licl_dihydrate_below_the_transition():
    assert pk.solubility("LiCl", 5.0).solid == "LiCl·2H2O"
    assert pk.solubility("LiCl", 35.0).solid == "LiCl·H2O"


@pytest.mark.validation
@pytest.mark.parametrize("temp_c,a_w", [(float(r.temp_c), float(r.water_activity)) for r in AW.itertuples()
                                         if r.salt == "LiCl" and r.role == "check"])
def test_water_activity_of_saturated_licl(temp_c, a_w):
    # Greenspan 1977, J. Res. Natl. Bur. Stand. 81A, 89 (from memory): the check rows (20, 30, 40 degC) of
    # data/reference/saturated_water_activity.csv; its 25 degC row is a fit point
    assert pk.solubility("LiCl", temp_c).water_activity == pytest.approx(a_w, abs=0.01)


# ------------------------------------------------------------------ ternary systems, 25 °C
@pytest.mark.validation
def test_licl_mgcl2_solids():
    # LS65 (from memory): at 25 °C lithium carnallite has its own field between LiCl·H2O and bischofite
    iso = pk.isotherm(["LiCl", "MgCl2"], temp_c=25)
    assert set(iso.curves["solid"]) == {"LiCl·H2O", "LiCl·MgCl2·7H2O", "bischofite"}
    assert {frozenset(s) for s in iso.invariant_points["solids"]} == {
        frozenset({"LiCl·H2O", "LiCl·MgCl2·7H2O"}), frozenset({"LiCl·MgCl2·7H2O", "bischofite"})}


@pytest.mark.validation
def test_licl_mgcl2_invariant_point():
    iso = pk.isotherm(["LiCl", "MgCl2"], temp_c=25)
    for r in _check_rows("LiCl-MgCl2").itertuples():
        p = _point(iso, r.solids.split("+"))
        assert p["LiCl_mass_percent"] == pytest.approx(r.mass_percent_1, abs=TOL_MASS_PERCENT), r.source
        assert p["MgCl2_mass_percent"] == pytest.approx(r.mass_percent_2, abs=TOL_MASS_PERCENT), r.source


@pytest.mark.validation
def test_li2so4_k2so4_solids():
    # LS65 (from memory): the double salt LiKSO4 has a field at 25 °C between Li2SO4·H2O and arcanite
    iso = pk.isotherm(["Li2SO4", "K2SO4"], temp_c=25)
    assert set(iso.curves["solid"]) == {"Li2SO4·H2O", "LiKSO4", "arcanite"}


@pytest.mark.validation
@pytest.mark.xfail(strict=True, reason=(
    "model 24.9 % Li2SO4 + 1.4 % K2SO4 against 22.3 % + 6.1 % (LS65, from memory, low confidence). At the "
    "recalled fit point (7.6 % + 12.3 %) arcanite, not fitted there, is supersaturated by ln 0.55: the model's "
    "K activity in Li2SO4 solutions is too high. No published psi(Li,K,SO4) is known to us (zero) and "
    "theta(Li,K) = -0.022 comes from chloride solutions (Pitzer & Kim 1974); psi(Li,K,SO4) = -0.060 would "
    "put arcanite on the fit point (not adopted: it would be fitted to the same recalled point as ln K)"))
def test_li2so4_k2so4_invariant_point():
    iso = pk.isotherm(["Li2SO4", "K2SO4"], temp_c=25)
    for r in _check_rows("Li2SO4-K2SO4").itertuples():
        p = _point(iso, r.solids.split("+"))
        assert p["Li2SO4_mass_percent"] == pytest.approx(r.mass_percent_1, abs=TOL_MASS_PERCENT), r.source
        assert p["K2SO4_mass_percent"] == pytest.approx(r.mass_percent_2, abs=TOL_MASS_PERCENT), r.source


@pytest.mark.validation
@pytest.mark.xfail(strict=True, reason=(
    "model 0.05 % NaCl at the LiCl·H2O + halite point against a few tenths of a per cent (LS65, from "
    "memory, low confidence; 0.0008 % before the Li-Cl parameters were fitted to saturation): "
    "theta(Na,Li) and psi(Na,Li,Cl) of Pitzer & Kim 1974 come from solutions of I <= 6 mol/kg, the "
    "point lies at 20 mol/kg LiCl"))
def test_licl_nacl_halite_in_saturated_licl():
    iso = pk.isotherm(["LiCl", "NaCl"], temp_c=25)
    for r in _check_rows("LiCl-NaCl").itertuples():
        p = _point(iso, r.solids.split("+"))
        # only the order of magnitude is recalled: within a factor 3 either way
        assert r.mass_percent_2 / 3 <= p["NaCl_mass_percent"] <= 3 * r.mass_percent_2, r.source


# ------------------------------------------------------------------ invented salar brine, evaporated
def _brine():
    row = BRINE.iloc[0]
    ana = {s: float(row[s]) for s in ("Li", "Na", "K", "Mg", "Cl", "SO4")}
    return pk.Brine.from_analysis(ana, units="mg/kg").balance(on="Cl")


@pytest.fixture(scope="module")
def salar_path():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pk.ValidityWarning)
        return pk.evaporate(_brine(), temp_c=25, mode="fractional")


@pytest.mark.validation
def test_salar_brine_is_plausible():
    # invented demo brine: near halite saturation, as salar brines are (common practice (no source))
    b = _brine()
    si = pk.default_model().saturation(b, 25)["saturation_index"]
    assert abs(si["halite"]) < 0.05
    assert (si.drop("halite") < 0).all()


@pytest.mark.validation
def test_salar_evaporation_halite_first(salar_path):
    first = salar_path.first_solid
    assert first["solid"] == "halite"
    assert first["concentration_factor"] < 1.05


@pytest.mark.validation
def test_salar_evaporation_lithium_balance(salar_path):
    model = pk.default_model()
    li0 = float(salar_path.steps["Li"].iloc[0])
    liquid = salar_path.steps["Li"] * salar_path.steps["liquid_water_kg"]
    solids = sum(salar_path.precipitated[s] * model.solid_stoichiometry(s).get("Li", 0.0)
                 for s in salar_path.precipitated.columns)
    assert np.allclose(liquid + solids, li0, rtol=0, atol=1e-8)


@pytest.mark.validation
def test_salar_evaporation_lithium_concentrates_until_its_first_solid(salar_path):
    loss = ion_loss_point(salar_path, "Li")
    assert loss is not None and loss.solid in LI_SOLIDS
    app = salar_path.events[salar_path.events["event"] == "appears"]
    before = app[app["concentration_factor"] < loss.concentration_factor]
    assert "halite" in set(before["solid"]) and not set(before["solid"]) & set(LI_SOLIDS)
    steps = salar_path.steps[salar_path.steps["concentration_factor"] <= loss.concentration_factor * (1 + 1e-9)]
    d_cf, d_li = np.diff(steps["concentration_factor"].to_numpy()), np.diff(steps["Li"].to_numpy())
    moved = d_cf > 1e-9 * steps["concentration_factor"].to_numpy()[1:]
    assert np.all(d_li[moved] > 0)  # rising with every step of evaporation (a phase change is recorded
    assert np.all(np.abs(d_li[~moved]) < 1e-9)  # as two steps at the same concentration factor)
    # no lithium lost before: the molality is the initial one times the concentration factor
    li0 = float(salar_path.steps["Li"].iloc[0])
    assert loss.molality == pytest.approx(li0 * loss.concentration_factor, rel=1e-8)
    assert loss.fraction_in_liquid == pytest.approx(1.0, abs=1e-8)
    # and beyond it the liquid holds less than all of the lithium
    last = salar_path.steps.iloc[-1]
    assert last["Li"] * last["liquid_water_kg"] < li0 * (1 - 1e-3)
