"""pk.Brine: unit conversions against hand-worked examples, charge balance, tables, bad input.

Hand-worked examples use the IUPAC standard atomic weights (conventional values, common
practice): Na 22.98977, K 39.0983, Mg 24.305, Cl 35.45, S 32.06, O 15.999, H 1.008. phasekit
takes its molar masses from the ``periodictable`` package, whose values differ in the 5th
figure (Cl 35.453); the hand-worked checks therefore use rel=2e-4. Round trips and identities
are exact to rounding.

Demo brines belong to the invented scenario of the project: the "Salina Vieja" solar salt works
and its ponds P1 (intake) to P6 (bittern); all analyses are invented.
"""

import math
import warnings

import pandas as pd
import pytest

import phasekit as pk
from phasekit.chemistry.brine import (
    CHARGE_BALANCE_MAX_PERCENT,
    CHARGE_BALANCE_WARN_PERCENT,
    AnalysisWarning,
    Brine,
)
from phasekit.errors import InputError, RangeError

# invented intake brine of pond P1, balanced (mol/kg water)
P1 = {"Na": 0.49, "K": 0.011, "Mg": 0.055, "Ca": 0.011, "SO4": 0.029}
P1["Cl"] = P1["Na"] + P1["K"] + 2 * P1["Mg"] + 2 * P1["Ca"] - 2 * P1["SO4"]


def quiet(fn, *a, **k):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return fn(*a, **k)


# ----------------------------------------------------------------------------- construction
def test_exported_from_package():
    assert pk.Brine is Brine
    assert "Brine" in pk.__all__


def test_molalities_are_a_plain_dict_in_canonical_names():
    b = Brine({"Mg2+": 1.0, "Cl-": 2.0, "SO4--": 0.0})
    m = b.molalities
    assert type(m) is dict and m == {"Mg": 1.0, "Cl": 2.0, "SO4": 0.0}
    m["Mg"] = 99.0  # a copy: the brine is not changed through it
    assert b.molalities["Mg"] == 1.0


# ----------------------------------------------------------------------------- hand-worked conversions
def test_mg_per_kg_of_solution_hand_worked():
    # 10780 mg/kg Na + 19350 mg/kg Cl (per kg of SOLUTION):
    #   dissolved mass S = 10.780 + 19.350 = 30.130 g per kg solution -> water = 969.870 g
    #   Na: 10.780 / 22.98977 = 0.468904 mol -> 0.468904 / 0.969870 = 0.483471 mol/kg water
    #   Cl: 19.350 / 35.45    = 0.545839 mol -> 0.545839 / 0.969870 = 0.562796 mol/kg water
    #   charge balance = 100 (0.483471 - 0.562796) / (0.483471 + 0.562796) = -7.582 %
    with pytest.warns(AnalysisWarning, match="charge balance"):
        b = Brine.from_analysis({"Na": 10780, "Cl": 19350}, units="mg/kg")
    assert b.molalities["Na"] == pytest.approx(0.483471, rel=2e-4)
    assert b.molalities["Cl"] == pytest.approx(0.562796, rel=2e-4)
    assert b.charge_balance() == pytest.approx(-7.582, abs=0.02)
    assert any("charge balance" in w for w in b.warnings)
    assert b.total_dissolved_solids == pytest.approx(30.130, rel=1e-9)  # g per kg solution, exact
    # the same analysis in g/kg and mass %
    g = quiet(Brine.from_analysis, {"Na": 10.780, "Cl": 19.350}, units="g/kg")
    pct = quiet(Brine.from_analysis, {"Na": 1.0780, "Cl": 1.9350}, units="mass%")
    for other in (g, pct):
        for s in ("Na", "Cl"):
            assert other.molalities[s] == pytest.approx(b.molalities[s], rel=1e-12)


def test_salt_mass_percent_hand_worked():
    # 26.4 mass% NaCl: 26.4 g NaCl + 73.6 g water per 100 g solution
    #   M(NaCl) = 22.98977 + 35.45 = 58.43977 g/mol; 26.4 / 58.43977 = 0.451747 mol
    #   m = 0.451747 mol / 0.0736 kg = 6.13787 mol/kg water (Na and Cl alike)
    b = Brine.from_salts({"NaCl": 26.4}, units="mass%")
    assert b.molalities["Na"] == pytest.approx(6.13787, rel=2e-4)
    assert b.molalities["Cl"] == pytest.approx(b.molalities["Na"], rel=1e-12)
    assert b.charge_balance() == pytest.approx(0.0, abs=1e-9)
    assert sum(b.mass_percent.values()) == pytest.approx(26.4, rel=1e-12)
    assert b.warnings == []


def test_salt_mixture_hand_worked():
    # 5 mass% MgCl2 + 3 mass% KCl: 92 g water per 100 g solution
    #   M(MgCl2) = 24.305 + 2(35.45) = 95.205; 5 / 95.205 = 0.0525183 mol -> / 0.092 = 0.570851 mol/kg Mg
    #   M(KCl) = 39.0983 + 35.45 = 74.5483;    3 / 74.5483 = 0.0402424 mol -> / 0.092 = 0.437417 mol/kg K
    #   Cl = 2(0.570851) + 0.437417 = 1.579118 mol/kg
    b = Brine.from_salts({"MgCl2": 5, "KCl": 3}, units="mass%")
    assert b.molalities["Mg"] == pytest.approx(0.570851, rel=2e-4)
    assert b.molalities["K"] == pytest.approx(0.437417, rel=2e-4)
    assert b.molalities["Cl"] == pytest.approx(1.579118, rel=2e-4)


def test_hydrate_water_joins_the_solvent():
    # 24.65 mass% of epsomite MgSO4·7H2O:
    #   M(MgSO4) = 24.305 + 32.06 + 4(15.999) = 120.361; M(MgSO4·7H2O) = 120.361 + 7(18.015) = 246.466
    #   24.65 / 246.466 = 0.100014 mol; anhydrous salt 0.100014 x 120.361 = 12.0378 g
    #   water = 100 - 12.0378 = 87.9622 g (hydrate water included) -> m = 0.100014 / 0.0879622 = 1.13701
    for spelling in ("MgSO4·7H2O", "MgSO4.7H2O", "MgSO4(H2O)7"):
        b = Brine.from_salts({spelling: 24.65}, units="mass%")
        assert b.molalities["Mg"] == pytest.approx(1.13701, rel=2e-4)
    anhydrous = Brine.from_salts({"MgSO4": 12.0378}, units="mass%")
    assert anhydrous.molalities["SO4"] == pytest.approx(1.13701, rel=2e-4)


def test_per_litre_with_given_density_hand_worked():
    # 96 g/L Na + 148 g/L Cl at 1.15 kg/L:
    #   per kg of solution: Na 96/1.15 = 83.4783 g, Cl 148/1.15 = 128.6957 g; water 1000 - 212.1739 = 787.8261 g
    #   Na: 83.4783 / 22.98977 = 3.631105 mol -> / 0.7878261 = 4.60902 mol/kg
    #   Cl: 128.6957 / 35.45   = 3.630343 mol -> / 0.7878261 = 4.60805 mol/kg
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # 1.15 kg/L is within 3 % of the model's 1.155: no warning
        b = Brine.from_analysis({"Na": 96, "Cl": 148}, units="g/L", density=1.15)
    assert b.molalities["Na"] == pytest.approx(4.60902, rel=2e-4)
    assert b.molalities["Cl"] == pytest.approx(4.60805, rel=2e-4)
    assert b.conversion_density == 1.15
    mg = Brine.from_analysis({"Na": 96000, "Cl": 148000}, units="mg/L", density=1.15)
    assert mg.molalities == pytest.approx(b.molalities, rel=1e-12)


def test_per_litre_without_density_iterates_to_the_model_density():
    # The density used must be the model's density of the brine it produced (a fixed point).
    b = Brine.from_analysis({"Na": 118.0, "Cl": 182.0}, units="g/L", temp_c=20.0)
    assert b.conversion_density == pytest.approx(b.density(20.0), rel=1e-10)
    back = b.to_units("g/L", density=b.conversion_density)
    assert back["Na"] == pytest.approx(118.0, rel=1e-10) and back["Cl"] == pytest.approx(182.0, rel=1e-10)
    # and it differs from a naive density of 1 by the size of the brine's density (~1.19)
    naive = quiet(Brine.from_analysis, {"Na": 118.0, "Cl": 182.0}, units="g/L", density=1.0)
    assert naive.molalities["Na"] > 1.15 * b.molalities["Na"]


def test_mol_per_kg_is_taken_as_it_is():
    b = Brine.from_analysis(P1, units="mol/kg")
    assert b.molalities == pytest.approx(Brine(P1).molalities, rel=1e-15)


@pytest.mark.parametrize("units", ["mol/kg", "mg/kg", "g/kg", "mass%", "mg/L", "g/L"])
def test_round_trip_every_unit(units):
    b = Brine(P1)
    given = b.to_units(units, density=1.03)
    back = Brine.from_analysis(given, units=units, density=1.03)
    assert back.molalities == pytest.approx(b.molalities, rel=1e-12)
    # per-litre units with the model density (same temperature both ways)
    model_units = b.to_units(units, temp_c=30.0)
    again = Brine.from_analysis(model_units, units=units, temp_c=30.0)
    assert again.molalities == pytest.approx(b.molalities, rel=1e-9)


# ----------------------------------------------------------------------------- helpers
def test_ionic_strength_mass_fractions_and_scaling():
    # I = 1/2 (1·1 + 0.5·4 + 2·1) = 2.5 ; MgSO4 1 mol/kg: I = 1/2 (4 + 4) = 4
    assert Brine({"Na": 1.0, "Mg": 0.5, "Cl": 2.0}).ionic_strength == pytest.approx(2.5, rel=1e-15)
    assert Brine({"Mg": 1.0, "SO4": 1.0}).ionic_strength == pytest.approx(4.0, rel=1e-15)
    b = Brine(P1)
    f = b.to_mass_fractions()
    assert sum(f.values()) == pytest.approx(1.0, rel=1e-14)
    assert f["H2O"] == pytest.approx(1000.0 / (1000.0 + b.solute_mass_per_kg_water), rel=1e-14)
    assert b.grams_per_kg_water["Na"] == pytest.approx(0.49 * 22.98977, rel=2e-4)
    c = b.scaled(3.0)
    assert c.molalities["Mg"] == pytest.approx(3 * 0.055, rel=1e-15)
    assert c.ionic_strength == pytest.approx(3 * b.ionic_strength, rel=1e-14)
    assert c.charge_balance() == pytest.approx(0.0, abs=1e-9)
    assert b.molalities["Mg"] == 0.055  # unchanged
    text = repr(b)
    assert text.startswith("Brine(") and "Na=0.49" in text and "mol/kg water" in text


@pytest.mark.filterwarnings("ignore:density")  # P1 x 5 lies beyond the Na2SO4 data (a warning)
def test_density_helper_orders_brines():
    assert Brine(P1).density(25) < Brine(P1).scaled(3).density(25) < Brine(P1).scaled(5).density(25)
    assert Brine({"Na": 0.0, "Cl": 0.0}).density(4.0) == pytest.approx(0.99997, abs=2e-5)  # pure water, Kell 1975


# ----------------------------------------------------------------------------- charge balance
def test_charge_balance_formula():
    # cations 1 + 2(0.5) = 2.0 eq, anions 1.5 + 2(0.25) = 2.0 eq -> 0 %
    assert Brine({"Na": 1.0, "Mg": 0.5, "Cl": 1.5, "SO4": 0.25}).charge_balance() == pytest.approx(0.0, abs=1e-12)
    # CaCl with Cl short: cations 2(1.0) = 2 eq, anions 1 eq -> 100 (2 - 1) / (2 + 1) = 33.33 %
    assert Brine({"Ca": 1.0, "Cl": 1.0}).charge_balance() == pytest.approx(100 / 3, rel=1e-12)
    # anion excess gives a negative sign: 100 (1 - 3) / (1 + 3) = -50 %
    assert Brine({"K": 1.0, "SO4": 1.5}).charge_balance() == pytest.approx(-50.0, rel=1e-12)
    assert Brine({"Na": 0.0}).charge_balance() == 0.0


def test_balance_on_the_short_ion():
    # cations 1 + 2(0.5) = 2.0 eq, anions 1.2 + 2(0.25) = 1.7 eq: 0.3 eq of anions short
    b = Brine({"Na": 1.0, "Mg": 0.5, "Cl": 1.2, "SO4": 0.25})
    on_cl = b.balance(on="Cl")
    assert on_cl.molalities["Cl"] == pytest.approx(1.5, rel=1e-14)  # 1.2 + 0.3 / 1
    assert b.balance(on="SO4--").molalities["SO4"] == pytest.approx(0.40, rel=1e-14)  # 0.25 + 0.3 / 2
    assert on_cl.charge_balance() == pytest.approx(0.0, abs=1e-12)
    assert b.molalities["Cl"] == 1.2  # a NEW brine
    assert any("balanced on Cl" in w for w in on_cl.warnings)
    # an ion not yet in the brine may be added
    assert b.balance(on="NO3").molalities["NO3"] == pytest.approx(0.3, rel=1e-14)
    # Na is of the sign in excess: refused unless decreasing is allowed (1.0 - 0.3 = 0.7)
    with pytest.raises(InputError, match="excess of cations") as err:
        b.balance(on="Na")
    assert err.value.field == "on"
    assert b.balance(on="Na", allow_decrease=True).molalities["Na"] == pytest.approx(0.7, rel=1e-14)


def test_balance_refuses_a_negative_amount_and_unknown_ions():
    # cations 0.1 + 2(1.0) = 2.1 eq, anions 1.0 eq: Na would become 0.1 - 1.1 = -1.0
    b = Brine({"Na": 0.1, "Mg": 1.0, "Cl": 1.0})
    with pytest.raises(InputError, match="negative amount"):
        b.balance(on="Na", allow_decrease=True)
    with pytest.raises(InputError) as err:
        b.balance(on="Br")
    assert err.value.field == "on" and err.value.value == "Br"


def test_imbalance_thresholds_of_analyses():
    assert CHARGE_BALANCE_WARN_PERCENT == 5.0 and CHARGE_BALANCE_MAX_PERCENT == 50.0
    # Na 0.50, Cl 0.54 mol/kg: 100 (0.50 - 0.54) / 1.04 = -3.8 %: no warning
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        ok = Brine.from_analysis({"Na": 0.50, "Cl": 0.54}, units="mol/kg")
    assert ok.warnings == []
    # Na 1.0, Cl 0.3: 100 (0.7 / 1.3) = 53.8 % -> refused, naming the balance
    with pytest.raises(InputError) as err:
        Brine.from_analysis({"Na": 1.0, "Cl": 0.3}, units="mol/kg")
    assert err.value.field == "charge balance" and "+53.8" in str(err.value)
    # cations alone: 100 %
    with pytest.raises(InputError, match="charge balance"):
        Brine.from_analysis({"Na": 1000}, units="mg/kg")
    # explicitly balanced: accepted, warned and recorded
    with pytest.warns(AnalysisWarning):
        b = Brine.from_analysis({"Na": 1.0, "Cl": 0.3}, units="mol/kg", balance_on="Cl")
    assert b.molalities["Cl"] == pytest.approx(1.0, rel=1e-14)
    assert any("balanced on Cl" in w for w in b.warnings) and any("+53.8" in w for w in b.warnings)


# ----------------------------------------------------------------------------- bad input
@pytest.mark.parametrize(
    "mol,field",
    [
        ({}, "molalities"),
        ({"Na": -1.0, "Cl": 1.0}, "molalities['Na']"),
        ({"Xx": 1.0}, "molalities['Xx']"),
        ({"Na": float("nan")}, "molalities['Na']"),
        ({"Na": float("inf")}, "molalities['Na']"),
        ({"Na": "abc"}, "molalities['Na']"),
        ({"Na": True}, "molalities['Na']"),
        ({"Na": None}, "molalities['Na']"),
        ({"Na": 1.0, "Na+": 1.0}, "molalities['Na+']"),
        ({"Mg+": 1.0}, "molalities['Mg+']"),
        ([("Na", 1.0)], "molalities"),
    ],
)
def test_bad_molalities(mol, field):
    with pytest.raises(InputError) as err:
        Brine(mol)
    assert err.value.field == field
    assert "expected" in str(err.value)


@pytest.mark.parametrize(
    "kwargs,field,fragment",
    [
        (dict(values={"Na": 1, "Cl": 1.5}, units="ppm"), "units", "ambiguous"),
        (dict(values={"Na": 1, "Cl": 1.5}, units="mmol/L"), "units", "mg/kg"),
        (dict(values={"Na": 1, "Cl": 1.5}, units=3), "units", "mg/kg"),
        (dict(values={"Na": -5, "Cl": 1.5}, units="g/kg"), "values['Na']", ">= 0"),
        (dict(values={"Na": "<0.5", "Cl": 1.5}, units="g/kg"), "values['Na']", "number"),
        (dict(values={"Na": None, "Cl": 1.5}, units="g/kg"), "values['Na']", "missing"),
        (dict(values={"Br": 1, "Cl": 1.5}, units="g/kg"), "values['Br']", "one of"),
        (dict(values={"Na": 40, "Cl": 62}, units="mass%"), "values", "solution"),  # 102 %: more salt than solution
        (dict(values={"Na": 33, "Cl": 51}, units="mass%"), "values", "80"),  # 84 %: absurd
        (dict(values={"Na": 10, "Cl": 15}, units="g/L", density=1197), "density", "kg/m3"),
        (dict(values={"Na": 10, "Cl": 15}, units="g/L", density=0.5), "density", "0.95"),
        (dict(values={"Na": 10, "Cl": 15}, units="g/L", density=2.5), "density", "2"),
        (dict(values={"Na": 10, "Cl": 15}, units="g/L", density="heavy"), "density", "kg/L"),
        (dict(values={"Na": 400, "Cl": 617}, units="g/L", density=1.2), "values", "litre"),
        (dict(values={"Na": 400, "Cl": 617}, units="g/L"), "values", "litre"),
        (dict(values={"Na": 10, "Cl": 15}, units="g/L", temp_c=150), "temp_c", "100"),
        (dict(values={"Na": 10, "Cl": 15}, units="g/kg", temp_c="warm"), "temp_c", "°C"),
        (dict(values={"Na": 10, "Cl": 15}, units="g/kg", missing="maybe"), "missing", "zero"),
        (dict(values="Na=10", units="g/kg"), "values", "mapping"),
    ],
)
def test_bad_analyses(kwargs, field, fragment):
    with pytest.raises(InputError) as err:
        quiet(Brine.from_analysis, **kwargs)
    assert err.value.field == field
    assert fragment in str(err.value)


def test_temperature_outside_density_model_is_a_range_error():
    with pytest.raises(RangeError):
        Brine.from_analysis({"Na": 10, "Cl": 15.4}, units="g/L", temp_c=-5)


def test_missing_values_may_mean_zero_when_asked():
    b = Brine.from_analysis({"Na": 10.0, "Cl": 15.42, "K": None, "Mg": float("nan")}, units="g/kg", missing="zero")
    assert b.molalities["K"] == 0.0 and b.molalities["Mg"] == 0.0


def test_given_density_far_from_model_is_warned():
    # a 300 g/L NaCl brine weighs about 1.19 kg/L; 1.05 is 12 % off
    with pytest.warns(AnalysisWarning, match="differs"):
        b = Brine.from_analysis({"Na": 118.0, "Cl": 182.0}, units="g/L", density=1.05)
    assert any("differs" in w for w in b.warnings)


@pytest.mark.parametrize(
    "salts,units,field",
    [
        ({"NaBr": 5}, "mass%", "salts['NaBr']"),
        ({"NaCl2": 5}, "mass%", "salts['NaCl2']"),
        ({"": 5}, "mass%", "salts['']"),
        ({"NaCl": -1}, "mass%", "salts['NaCl']"),
        ({"NaCl": "lots"}, "mass%", "salts['NaCl']"),
        ({"MgSO4·7H2O": 1.0}, "mol/kg", "salts['MgSO4·7H2O']"),
        ({}, "mass%", "salts"),
        ({"NaCl": 70, "KCl": 31}, "mass%", "values"),
    ],
)
def test_bad_salts(salts, units, field):
    with pytest.raises(InputError) as err:
        Brine.from_salts(salts, units=units)
    assert err.value.field == field


def test_salts_in_mol_per_kg_and_per_litre():
    # 1 mol Na2SO4 per kg water -> Na 2, SO4 1 mol/kg
    b = Brine.from_salts({"Na2SO4": 1.0, "Mg(NO3)2": 0.5}, units="mol/kg")
    assert b.molalities == pytest.approx({"Na": 2.0, "Mg": 0.5, "NO3": 1.0, "SO4": 1.0}, rel=1e-14)
    litre = Brine.from_salts({"KCl": 100.0}, units="g/L", density=1.06)
    # 100 g/L / 1.06 kg/L = 94.340 g KCl per kg solution -> same as 9.4340 mass %
    pct = Brine.from_salts({"KCl": 100.0 / 1.06 / 10.0}, units="mass%")
    assert litre.molalities == pytest.approx(pct.molalities, rel=1e-12)


def test_scaled_refuses_bad_factors():
    for f in (0, -1.0, float("nan"), "x"):
        with pytest.raises(InputError) as err:
            Brine(P1).scaled(f)
        assert err.value.field == "factor"


# ----------------------------------------------------------------------------- tables
def _pond_table():
    # invented analyses of the Salina Vieja ponds, mg/kg of solution; P4 has a text cell,
    # P5 a negative value, P6 a missing cell
    return pd.DataFrame(
        {
            "pond": ["P1", "P2", "P3", "P4", "P5", "P6"],
            "Na": [10900, 21800, 43500, 87000, 91000, 80000],
            "Mg": [1300, 2600, 5200, "<10", 11000, 30000],
            "Cl": [19700, 39300, 78700, 157000, 165000, None],
            "SO4": [2750, 5500, 11000, 22000, -1, 60000],
            "sampled": ["2031-05-02"] * 6,
        }
    )


def test_read_table_keeps_bad_rows_with_reasons():
    df = _pond_table()
    with pytest.warns(AnalysisWarning, match="3 of 6 rows could not be read"):
        out = Brine.read_table(df, units="mg/kg", id_column="pond", ignore_columns=["sampled"])
    assert list(out) == ["P1", "P2", "P3", "P4", "P5", "P6"]
    assert all(isinstance(out[k], Brine) for k in ("P1", "P2", "P3"))
    for key, column in (("P4", "Mg"), ("P5", "SO4"), ("P6", "Cl")):
        err = out[key]
        assert isinstance(err, InputError)
        assert repr(key) in err.field and column in err.field
    assert out["P4"].value == "<10"
    assert "missing" in str(out["P6"])
    # a good row equals the same analysis read alone
    alone = Brine.from_analysis({"Na": 21800, "Mg": 2600, "Cl": 39300, "SO4": 5500}, units="mg/kg")
    assert out["P2"].molalities == pytest.approx(alone.molalities, rel=1e-14)


def test_read_table_csv_and_xlsx(tmp_path):
    df = _pond_table().iloc[:3]
    csv = tmp_path / "ponds.csv"
    df.to_csv(csv, index=False)
    xlsx = tmp_path / "ponds.xlsx"
    df.to_excel(xlsx, index=False, engine="openpyxl")
    from_csv = Brine.read_table(csv, units="mg/kg", id_column="pond", ignore_columns=["sampled"])
    from_xlsx = Brine.read_table(str(xlsx), units="mg/kg", id_column="pond", ignore_columns=["sampled"])
    assert list(from_csv) == list(from_xlsx) == ["P1", "P2", "P3"]
    for k in from_csv:
        assert from_csv[k].molalities == pytest.approx(from_xlsx[k].molalities, rel=1e-14)


def test_read_table_density_column_and_row_labels():
    df = pd.DataFrame({"Na": [96.0, 96.0, 10.0], "Cl": [148.0, 148.0, 15.42], "rho": [1.15, "n/a", None]})
    with pytest.warns(AnalysisWarning, match="1 of 3 rows"):
        out = Brine.read_table(df, units="g/L", density_column="rho")
    assert list(out) == [0, 1, 2]  # row labels when there is no id column
    assert out[0].molalities["Na"] == pytest.approx(4.60902, rel=2e-4)  # as the hand-worked example above
    assert isinstance(out[1], InputError) and "rho" in out[1].field
    assert out[2].conversion_density == pytest.approx(out[2].density(25.0), rel=1e-10)  # empty -> model


@pytest.mark.parametrize(
    "table,kwargs,field",
    [
        (pd.DataFrame({"Na": [1.0], "Cl": [1.0], "pond": ["P1"]}), {}, "column"),
        (pd.DataFrame({"Na": [1.0], "Na+": [1.0], "Cl": [2.0]}), {}, "column"),
        (pd.DataFrame({"Na": [1.0], "Cl": [1.0]}), {"id_column": "sample"}, "id_column"),
        (pd.DataFrame({"Na": [1.0], "Cl": [1.0]}), {"density_column": "rho"}, "density_column"),
        (pd.DataFrame({"Na": [1.0], "Cl": [1.0]}), {"ignore_columns": ["notes"]}, "ignore_columns"),
        (pd.DataFrame({"s": ["A", "A"], "Na": [1.0, 1.0], "Cl": [1.0, 1.0]}), {"id_column": "s"}, "s"),
        (pd.DataFrame({"s": ["A"]}), {"id_column": "s"}, "columns"),
        (pd.DataFrame({"Na": [], "Cl": []}), {}, "source"),
        ("ponds.txt", {}, "source"),
        ("no_such_file.csv", {}, "source"),
        (42, {}, "source"),
    ],
)
def test_read_table_refuses_bad_tables(table, kwargs, field):
    with pytest.raises(InputError) as err:
        Brine.read_table(table, units="mol/kg", **kwargs)
    assert err.value.field == field


def test_read_table_reports_rows_with_warnings_and_missing_ids():
    df = pd.DataFrame({"s": ["A", None], "Na": [0.5, 0.5], "Cl": [0.4, 0.5]})  # A: +11 % imbalance
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        out = Brine.read_table(df, units="mol/kg", id_column="s")
    texts = [str(w.message) for w in rec]
    assert any("rows carry warnings" in t and "'A'" in t for t in texts)
    assert any("could not be read" in t for t in texts)
    assert any("charge balance" in w for w in out["A"].warnings)
    assert isinstance(out["row 2"], InputError)


def test_brine_feeds_the_activity_model(model):
    b = quiet(Brine.from_analysis, {"Na": 10780, "Cl": 19350}, units="mg/kg").balance(on="Na")
    r = model.activity(b.molalities, 25.0)
    assert 0.98 < r.water_activity < 0.99
    assert math.isclose(r.ionic_strength, b.ionic_strength, rel_tol=1e-12)


# ----------------------------------------------------------------------------- the density model's guards
def test_density_model_refuses_what_it_cannot_estimate():
    from phasekit.chemistry import density as dens

    with pytest.raises(InputError, match="cations and anions"):
        dens.estimate_density({"Na": 1.0}, 25.0)
    with pytest.raises(RangeError) as err:
        dens.estimate_density({"Na": 1.0, "Cl": 1.0}, 120.0)
    assert err.value.field == "temp_c"
    # 12 mol/kg NaCl = 41 mass %: far beyond any NaCl data (0.265) -> no number
    with pytest.raises(RangeError, match="give the measured density"):
        dens.estimate_density({"Na": 12.0, "Cl": 12.0}, 25.0)
    with pytest.raises(InputError):
        dens.estimate_density({"Na": -1.0, "Cl": 1.0}, 25.0)
    # 520 g/L of NaCl is not a brine the model covers; with a measured density it is converted
    with pytest.raises(InputError, match="density model"):
        Brine.from_salts({"NaCl": 520}, units="g/L")


def test_density_model_warns_outside_its_data():
    from phasekit.chemistry import density as dens

    # invented bittern of pond P6, mg/L; total solute fraction ~0.30, above the NaCl data (0.265)
    p6 = {"Na": 12000, "K": 14000, "Mg": 80000, "Cl": 190000, "SO4": 85000}
    with pytest.warns(pk.ValidityWarning, match="extrapolated"):
        b = Brine.from_analysis(p6, units="mg/L")
    assert any("NaCl (0.265)" in w for w in b.warnings)
    assert b.to_units("mg/L", density=b.conversion_density)["Mg"] == pytest.approx(80000, rel=1e-10)
    est = dens.estimate_density(Brine(P1), 60.0)
    assert any("20 °C data" in w for w in est.warnings)
    assert dens.estimate_density(Brine(P1), 25.0).warnings == []


def test_density_data_rows_name_sources_and_ranges():
    from phasekit.data_files import read_csv

    for name in ("density/apparent_density_lc2004.csv", "density/single_salt_20c.csv"):
        table = read_csv(name)
        assert table["source"].str.strip().str.len().min() > 0
        assert {"t_min_c", "t_max_c"} <= set(table.columns)
