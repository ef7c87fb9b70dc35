"""The nitrate conversion system Na+, K+ // Cl−, NO3− – H2O and its ternaries.

Sources (all values from memory):

- CRC = CRC Handbook of Chemistry and Physics, "Aqueous solubility of inorganic compounds"
  (mass-% of the saturated solution); only rows with role=check in
  data/reference/measured_binaries.csv (CRC98, read) are used here, the fit rows fitted ln K and the Pitzer
  temperature coefficients of NaNO3 and KNO3 (scripts/calibrate_solids.py).
- LS65 = Linke & Seidell 1965, Solubilities of Inorganic and Metal-Organic Compounds, 4th ed.
- NBS82 = Wagman et al. 1982, J. Phys. Chem. Ref. Data 11, Suppl. 2 (ΔfG° of the solids).

The mixing parameters of the system are Pitzer & Kim 1974's 25 °C values (θ Cl–NO3, ψ
Na/K–Cl–NO3), fitted by them to osmotic data at I ≤ 6 mol/kg, and a temperature function of
ψ chosen in this project (data/pitzer_mixing.csv says why); none of them was fitted to the
solubilities below.
"""

import warnings

import pandas as pd
import pytest

import phasekit as pk
from phasekit.calibration.measurements import binary_solubility_table

R = 8.314462618e-3  # kJ/(mol K)


def _quiet(fn, *a, **k):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return fn(*a, **k)


@pytest.fixture(scope="module")
def squares():
    return {t: _quiet(pk.reciprocal_isotherm, t, anion="NO3") for t in (0.0, 25.0, 50.0, 75.0)}


@pytest.mark.validation
def test_reaction_gibbs_energy_of_the_conversion_matches_nbs(model):
    # NaNO3(s) + KCl(s) -> KNO3(s) + NaCl(s): dG = -RT [ln K(nitratine) + ln K(sylvite) - ln K(niter) - ln K(halite)]
    # NBS82 dfG (kJ/mol): NaNO3 -367.00, KCl -409.14, KNO3 -394.86, NaCl -384.14 -> dG = -2.86 kJ/mol.
    # The four ln K were fitted to solubilities only, so this is an independent check of the database.
    lk = model.solids.ln_k(25.0)
    ix = model.solids.index
    d_ln_k = lk[ix["nitratine"]] + lk[ix["sylvite"]] - lk[ix["niter"]] - lk[ix["halite"]]
    dg = -R * 298.15 * d_ln_k
    assert dg == pytest.approx(-394.86 - 384.14 + 367.00 + 409.14, abs=0.5)


@pytest.mark.validation
@pytest.mark.parametrize("temp_c", [0.0, 25.0, 50.0, 75.0])
def test_stable_pair_is_kno3_nacl(squares, temp_c):
    # KNO3 + NaCl is the stable pair (NBS82 dG < 0 above; the conversion process rests on it): the
    # fields of halite and niter share a boundary, whose two ends are the invariant points with sylvite
    # and with nitratine; sylvite and nitratine never coexist.
    sq = squares[temp_c]
    assert set(sq.field_solids) == {"halite", "niter", "nitratine", "sylvite"}
    trios = set(sq.invariant_points["solids"])
    assert trios == {("halite", "niter", "sylvite"), ("halite", "niter", "nitratine")}
    assert all("sylvite" not in s or "nitratine" not in s for s in sq.curves["solids"])
    assert float(sq.invariant_points["max_abs_saturation_index"].max()) < 1e-6


@pytest.mark.validation
@pytest.mark.parametrize("temp_c", [0.0, 25.0, 50.0, 75.0])
def test_corners_of_the_square_match_the_binary_solubilities(squares, temp_c):
    ref = binary_solubility_table()
    ref = ref[(ref["role"] == "check") & (ref["temp_c"] == temp_c) & ref["source"].str.startswith("CRC98 ")]
    ref = ref.set_index("salt")
    sp = squares[temp_c].side_points.set_index("side")
    for salt, ion, mw in (("KNO3", "K", 101.1032), ("NaCl", "Na", 58.4428), ("KCl", "K", 74.5513)):
        if salt not in ref.index:
            continue
        m = float(sp.loc[salt, f"{ion}_molality"])
        w = 100 * m * mw / (1000 + m * mw)
        assert w == pytest.approx(float(ref.loc[salt, "mass_percent"]), rel=0.012), salt  # CRC check rows


@pytest.mark.validation
@pytest.mark.parametrize("temp_c,nacl,kcl,src", [
    (25.0, 20.4, 11.1, "LS65 (from memory)"),
    (50.0, 18.8, 15.1, "LS65 (from memory, low confidence)"),
    (75.0, 17.6, 18.7, "LS65 (from memory, low confidence)"),
])
def test_nacl_kcl_side_of_the_square(squares, temp_c, nacl, kcl, src):
    # the NaCl-KCl side of the nitrate square is the NaCl-KCl-H2O eutonic (the 100 degC point fitted
    # two C^phi curvatures; these are checks)
    sp = squares[temp_c].side_points
    row = sp[(sp["location"] == "side") & (sp["side"] == "NaCl–KCl")].iloc[0]
    gn, gk = row["Na_molality"] * 58.4428, row["K_molality"] * 74.5513
    total = 1000 + gn + gk
    assert 100 * gn / total == pytest.approx(nacl, abs=0.6), src
    assert 100 * gk / total == pytest.approx(kcl, abs=0.6), src


@pytest.mark.validation
@pytest.mark.parametrize("temp_c", [0.0, 25.0, 50.0, 75.0])
def test_common_ion_lowers_the_chloride_solubility(temp_c):
    # common-ion effect: at the eutonic of NaCl-NaNO3-H2O and KCl-KNO3-H2O the chloride is less soluble
    # (mol/kg) than alone (LS65 isotherms, from memory: the chloride branch falls from the binary point)
    for pair in (("NaCl", "NaNO3"), ("KCl", "KNO3")):
        ip = _quiet(pk.isotherm, list(pair), temp_c=temp_c).invariant_points
        assert len(ip) == 1
        alone = _quiet(pk.solubility, pair[0], temp_c=temp_c).molality
        assert float(ip[f"{pair[0]}_molality"].iloc[0]) < alone, pair


@pytest.mark.validation
def test_chloride_at_the_eutonics_falls_with_temperature():
    # LS65 (from memory): in NaCl-NaNO3-H2O and KCl-KNO3-H2O the chloride content of the eutonic
    # solution falls as the temperature rises (the nitrate's solubility rises steeply)
    for pair in (("NaCl", "NaNO3"), ("KCl", "KNO3")):
        w = [float(_quiet(pk.isotherm, list(pair), temp_c=t).invariant_points[f"{pair[0]}_mass_percent"].iloc[0])
             for t in (25.0, 50.0, 75.0)]
        assert w[0] > w[1] > w[2], pair


# 25 degC eutonics of the nitrate ternaries as recalled from LS65 (mass-%). Low confidence: the
# recollections are rounded and may be off by 1-2 mass-%. The model uses PK74's mixing parameters
# unchanged (fitted to osmotic data at I <= 6 mol/kg; these eutonics lie at I = 11-14 mol/kg).
EUTONICS_25 = [
    (("NaCl", "NaNO3"), 14.7, 37.3),
    (("KCl", "KNO3"), 20.7, 16.3),
    (("NaNO3", "KNO3"), 35.5, 22.8),
]


THETA_NOTE = ("with theta(Cl,NO3) = 0 instead of PK74's +0.016 the nitrate contents become 35.4 % (NaNO3) and "
              "16.7 % (KNO3), closer to the recollections, the chloride contents hardly move (12.8, 21.7 %): a hint "
              "that the remembered theta is off; not changed without a source to check it against")


@pytest.mark.validation
@pytest.mark.parametrize("pair,w1,w2", [
    pytest.param(*EUTONICS_25[0], marks=pytest.mark.xfail(strict=True, reason=(
        "model 12.5/33.4 % vs 14.7/37.3 % recalled; " + THETA_NOTE))),
    pytest.param(*EUTONICS_25[1], marks=pytest.mark.xfail(strict=True, reason=(
        "model 21.8/14.2 % vs 20.7/16.3 % recalled (KNO3 2.1 mass-% low); " + THETA_NOTE))),
    pytest.param(*EUTONICS_25[2], marks=pytest.mark.xfail(strict=True, reason=(
        "model 40.9/12.9 % vs 35.5/22.8 % recalled: the model salts KNO3 out of NaNO3 solution, the recalled "
        "point salts it in; no psi(Na,K,NO3) of PK74 is in the database and none of either sign moves the model "
        "there (psi < 0 raises both salts, tried -0.002 and -0.004): either the recollection or the KNO3 "
        "binary parameters far beyond their 3.5 mol/kg (PM73) are wrong; unresolved"))),
])
def test_eutonics_at_25c(pair, w1, w2):
    ip = _quiet(pk.isotherm, list(pair), temp_c=25.0).invariant_points
    row = ip.iloc[0]
    assert row[f"{pair[0]}_mass_percent"] == pytest.approx(w1, abs=1.5)  # LS65 (from memory, low confidence)
    assert row[f"{pair[1]}_mass_percent"] == pytest.approx(w2, abs=1.5)  # LS65 (from memory, low confidence)


@pytest.mark.validation
@pytest.mark.parametrize("temp_c", [60.0, 75.0, 90.0])
def test_nitrate_square_is_physical_to_90c(temp_c):
    # one eutonic per side, five field boundaries inside, each once, and every brine with a_w < 1: the
    # square of PK74's psi held constant had a second, spurious halite+niter+sylvite point from 60 degC
    # and no eutonics at 75 degC (see data/pitzer_mixing.csv)
    sq = _quiet(pk.reciprocal_isotherm, temp_c, anion="NO3")
    inner = sq.curves[sq.curves["face"] == "interior"].groupby("boundary")["solids"].first()
    assert sorted(inner) == [("halite", "niter"), ("halite", "nitratine"), ("halite", "sylvite"),
                             ("niter", "nitratine"), ("niter", "sylvite")]
    sides = sq.side_points[sq.side_points["location"] == "side"]
    assert len(sides) == 4 and sides["side"].is_unique
    assert len(sq.invariant_points) == 2
    assert 0 < float(sq.curves["water_activity"].min()) and float(sq.curves["water_activity"].max()) < 1.0


@pytest.mark.validation
def test_nano3_kno3_eutonic_at_100c():
    # near 40 mol/kg of salt; it exists since the 25 degC Na-NO3 parameters were fitted to the saturated
    # solution (scripts/fit_concentrated_binaries.py), before which the nitratine curve turned back. No value
    # to check it against is known to us: physical sense only (both salts saturated, drier than either binary)
    ip = _quiet(pk.isotherm, ["NaNO3", "KNO3"], temp_c=100.0).invariant_points
    assert len(ip) == 1
    aw = [_quiet(pk.solubility, s, temp_c=100.0).water_activity for s in ("NaNO3", "KNO3")]
    assert 0 < float(ip["water_activity"].iloc[0]) < min(aw)
    assert float(ip["max_abs_saturation_index"].iloc[0]) < 1e-6


def _cycle(**kw):
    from phasekit.paths.conversion import hot_cold_cycle

    feed = pk.Brine({"Na": 6.0, "K": 4.0, "Cl": 4.0, "NO3": 6.0})  # NaNO3 : KCl = 1.5 : 1
    return _quiet(hot_cold_cycle, feed, **kw)


@pytest.mark.validation
def test_conversion_cycle_separates_nacl_hot_and_kno3_cold():
    r = _cycle(hot_c=75.0, cold_c=20.0)
    assert set(r.hot_solids) == {"halite"}
    assert set(r.cold_solids) == {"niter"}
    assert 0.3 < r.yields["K"] < 1.0
    # the hot liquor is on the halite-niter boundary: saturated with both at the hot temperature
    model = pk.default_model()
    si = _quiet(model.saturation, pk.Brine(r.hot_liquor), 75.0)["saturation_index"]
    assert abs(si["halite"]) < 1e-6 and abs(si["niter"]) < 1e-6
    # and the cold liquor is saturated with niter, not with halite
    si_c = _quiet(model.saturation, pk.Brine(r.recycle), 20.0)["saturation_index"]
    assert abs(si_c["niter"]) < 1e-6 and si_c["halite"] < 0


@pytest.mark.validation
def test_conversion_yield_rises_with_the_hot_temperature():
    # KNO3's solubility rises steeply with T, NaCl's hardly: the hotter the evaporation, the more water
    # leaves before niter saturates and the more KNO3 the cooling gives (the reason the process runs hot)
    y = [_cycle(hot_c=t, cold_c=20.0).yields["K"] for t in (50.0, 75.0)]
    assert y[1] > y[0]
    cold = [_cycle(hot_c=75.0, cold_c=t).yields["K"] for t in (30.0, 10.0)]
    assert cold[1] > cold[0]


@pytest.mark.validation
def test_conversion_cycle_mass_balance():
    from phasekit.chemistry.salts import salt_formula_mass

    r = _cycle(hot_c=75.0, cold_c=20.0)
    feed = {"Na": 6.0, "K": 4.0, "Cl": 4.0, "NO3": 6.0}
    model = pk.default_model()
    for ion, total in feed.items():
        out = r.recycle.get(ion, 0.0) * r.recycle_water_kg
        for crop in (r.hot_solids, r.cold_solids):
            for solid, g in crop.items():
                st = model.solid_stoichiometry(solid)
                formula = {"halite": "NaCl", "niter": "KNO3", "sylvite": "KCl", "nitratine": "NaNO3"}[solid]
                out += g / salt_formula_mass(formula) * st.get(ion, 0)
        assert out == pytest.approx(total, rel=1e-8), ion
    water = 1.0 - r.stages.set_index("stage").loc["hot", "water_kg"] - r.stages.set_index("stage").loc[
        "dilution", "water_kg"]
    assert r.recycle_water_kg == pytest.approx(water, rel=1e-9)
    assert isinstance(r.stages, pd.DataFrame) and list(r.stages["stage"]) == ["hot", "dilution", "cold"]
