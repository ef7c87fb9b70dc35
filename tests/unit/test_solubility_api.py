"""pk.solubility and pk.polytherm: fields, consistency, bad input and warnings.

These are behaviour tests: the values compared are computed by the model itself (no
published data), so the tolerances are numerical (1e-9 relative for exact identities,
1e-6 for the solver's saturation condition, which it meets to 1e-11 in ln IAP).
"""

import math
import warnings

import numpy as np
import pytest

import phasekit as pk
from phasekit.chemistry.salts import salt_formula_mass
from phasekit.errors import InputError, RangeError, ValidityWarning
from phasekit.fitting import with_parameters


@pytest.fixture(autouse=True)
def _quiet_validity():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        yield


@pytest.mark.parametrize("salt,temp_c", [("KCl", 40.0), ("Na2SO4", 20.0), ("MgSO4", 55.0), ("CaSO4", 25.0)])
def test_fields_are_consistent(model, salt, temp_c):
    r = pk.solubility(salt, temp_c)
    mw = salt_formula_mass(r.salt)
    assert r.grams_per_100g_water == pytest.approx(r.molality * mw / 10.0, rel=1e-9)
    g = r.grams_per_100g_water
    assert r.mass_percent == pytest.approx(100.0 * g / (100.0 + g), rel=1e-9)
    ions = {s: n * r.molality for s, n in model.solids[r.solid].ions.items()}
    scale = sum(model.solids[r.solid].ions.values()) / sum(pk.chemistry.salts.parse_salt(r.salt).values())
    ions = {s: v / scale for s, v in ions.items()}
    act = model.activity(ions, temp_c)
    assert r.water_activity == pytest.approx(act.water_activity, rel=1e-9)
    # the saturation condition: ln IAP = ln K of the reported solid
    solid = model.solids[r.solid]
    ln_iap = sum(n * (math.log(ions[s]) + act.ln_gamma[s]) for s, n in solid.ions.items())
    ln_iap += solid.water * act.ln_water_activity
    ln_k = model.solids.ln_k(temp_c)[model.solids.index[r.solid]]
    assert ln_iap == pytest.approx(ln_k, abs=1e-6)
    # the stable solid is the least soluble of the candidates
    cand = r.candidates["molality"].dropna()
    assert r.solid == cand.idxmin()
    assert r.molality == pytest.approx(cand.min(), rel=1e-12)


def test_as_dict_round_trip():
    r = pk.solubility("NaCl", 25)
    d = r.as_dict()
    assert d["solid"] == "halite" and d["salt"] == "NaCl"
    assert d["molality"] == r.molality and isinstance(d["warnings"], list)


def test_solid_stoichiometry_carnallite(model):
    assert model.solid_stoichiometry("carnallite") == {"K": 1, "Mg": 1, "Cl": 3, "H2O": 6}


def test_named_solid_gives_its_own_solubility():
    stable = pk.solubility("Na2SO4", 20.0)
    meta = pk.solubility("thenardite", 20.0)
    assert stable.solid == "mirabilite"
    assert meta.solid == "thenardite"
    # a metastable solid is more soluble than the stable one
    assert meta.molality > stable.molality
    # and it is used outside the range of its data: a warning says so
    assert any("thenardite" in w and "outside" in w for w in meta.warnings)


def test_unknown_salt():
    with pytest.raises(InputError) as e:
        pk.solubility("XyCl", 25)
    assert e.value.field == "salt" and "XyCl" in str(e.value)


def test_salt_without_solid():
    with pytest.raises(InputError) as e:
        pk.solubility("Mg(NO3)2", 25)
    assert e.value.field == "salt"
    assert "solid" in str(e.value) and "KCl" in str(e.value)  # names what would be accepted


@pytest.mark.parametrize("bad", ["hot", None, float("nan"), True])
def test_temperature_not_a_number(bad):
    with pytest.raises(InputError) as e:
        pk.solubility("KCl", bad)
    assert e.value.field == "temp_c"


@pytest.mark.parametrize("temp_c", [-5.0, 120.0])
def test_temperature_outside_the_data(temp_c):
    with pytest.raises(RangeError) as e:
        pk.solubility("KCl", temp_c)
    assert e.value.field == "temp_c" and e.value.value == temp_c
    assert "0–100" in str(e.value)


def test_warning_near_the_edge_of_a_range(model):
    solid = model.solids["antarcticite"]
    t = solid.t_max_c - 1.0
    with pytest.warns(ValidityWarning):
        r = pk.solubility("CaCl2", t)
    assert any("near the edge" in w for w in r.warnings)


def test_warning_above_the_molality_of_the_parameters(model):
    r = pk.solubility("KNO3", 25.0)
    assert not any("highest molality" in w for w in r.warnings)
    mmax = float(model.db.binary.query("cation == 'Ca' and anion == 'Cl'")["m_max"].max())
    with pytest.warns(ValidityWarning, match="highest molality"):
        r = pk.solubility("CaCl2", 25.0)
    assert r.molality > mmax


def test_polytherm_grid_and_transition():
    curve, tr = pk.polytherm("Na2SO4", 0.0, 60.0, 2.0)
    assert curve["temp_c"].is_monotonic_increasing
    assert set(curve["solid"]) == {"mirabilite", "thenardite"}
    assert len(tr) == 1 and tr["solid_below"][0] == "mirabilite"
    t = tr["temp_c"][0]
    # both solids give the same molality at the transition
    a = pk.solubility("mirabilite", t).molality
    b = pk.solubility("thenardite", t).molality
    assert a == pytest.approx(b, rel=1e-5)
    assert tr["molality"][0] == pytest.approx(a, rel=1e-5)
    # the grid solubilities are those of pk.solubility
    row = curve[curve["temp_c"] == 20.0].iloc[0]
    assert row["molality"] == pytest.approx(pk.solubility("Na2SO4", 20.0).molality, rel=1e-9)


def test_polytherm_bad_input():
    with pytest.raises(InputError) as e:
        pk.polytherm("KCl", 50, 20)
    assert e.value.field == "t_max_c"
    with pytest.raises(InputError) as e:
        pk.polytherm("KCl", 0, 50, 0)
    assert e.value.field == "step_c"
    with pytest.raises(RangeError) as e:
        pk.polytherm("KCl", 0, 150)
    assert e.value.field == "t_max_c"


def test_polytherm_with_a_solid_that_never_saturates(model):
    # kieserite made extremely soluble: it must drop out, not break the polytherm
    mod = with_parameters(model, [("lnk", "kieserite", "a0")], [300.0])
    curve, tr = pk.polytherm("MgSO4", 0.0, 100.0, 5.0, model=mod)
    assert "kieserite" not in set(curve["solid"])
    assert curve["molality"].notna().all()
    assert list(tr["solid_below"]) == ["epsomite"]


def test_polytherm_where_no_solid_saturates(model):
    mod = with_parameters(model, [("lnk", "halite", "a0")], [300.0])
    with pytest.warns(ValidityWarning, match="no solid of NaCl saturates"):
        curve, tr = pk.polytherm("NaCl", 0.0, 20.0, 10.0, model=mod)
    assert curve["solid"].isna().all() and curve["molality"].isna().all() and tr.empty
    with pytest.raises(pk.ConvergenceError):
        pk.solubility("NaCl", 10.0, model=mod)


def test_narrow_maximum_of_the_ion_activity_product_is_not_missed(model):
    # CaCl2·6H2O: ln IAP has a maximum near 9 mol/kg, close above the saturation molality.
    r = pk.solubility("CaCl2", 20.0)
    assert np.isfinite(r.molality) and 5.0 < r.molality < 9.0
