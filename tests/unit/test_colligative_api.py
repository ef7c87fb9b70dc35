"""Vapour pressure, boiling point and freezing point: definitions, invariants, errors and the command line."""

import warnings

import pytest
from cli_runner import run, run_json
from iapws import IAPWS97

import phasekit as pk
from phasekit.data_files import data_dir
from phasekit.errors import InputError, RangeError, ValidityWarning

NACL = pk.Brine({"Na": 2.0, "Cl": 2.0})
EXAMPLE = str(data_dir() / "overlays" / "halite_pbb1977.toml")


def quiet(fn, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return fn(*args, **kwargs)


# ------------------------------------------------------------------------------------ vapour pressure
def test_vapour_pressure_is_water_activity_times_that_of_pure_water(model):
    r = model.vapour_pressure(NACL, 40.0)
    assert r.pure_water_kpa == pytest.approx(IAPWS97(T=313.15, x=0).P * 1000.0, rel=1e-12)
    assert r.water_activity == pytest.approx(model.activity(NACL.molalities, 40.0).water_activity, rel=1e-12)
    assert r.pressure_kpa == pytest.approx(r.water_activity * r.pure_water_kpa, rel=1e-12)
    assert float(r) == r.pressure_kpa and r.pressure_kpa < r.pure_water_kpa and r.warnings == []


def test_vapour_pressure_falls_with_concentration_and_rises_with_temperature(model):
    p = [model.vapour_pressure(pk.Brine({"Na": m, "Cl": m}), 25.0).pressure_kpa for m in (0.5, 2.0, 5.0)]
    assert p[0] > p[1] > p[2]
    assert model.vapour_pressure(NACL, 60.0).pressure_kpa > model.vapour_pressure(NACL, 30.0).pressure_kpa


@pytest.mark.parametrize("temp", [-5.0, 151.0])
def test_vapour_pressure_outside_the_model_range_is_refused(model, temp):
    with pytest.raises(RangeError, match="temp_c"):
        model.vapour_pressure(NACL, temp)


@pytest.mark.parametrize("temp", [True, None, "25", float("nan")])
def test_vapour_pressure_temperature_must_be_a_number(model, temp):
    with pytest.raises(InputError, match="temp_c"):
        model.vapour_pressure(NACL, temp)


def test_vapour_pressure_refuses_a_bad_brine(model):
    with pytest.raises(InputError, match="charge imbalance"):
        model.vapour_pressure({"Na": 1.0, "Cl": 2.0}, 25.0)
    with pytest.raises(InputError, match="Xx"):
        model.vapour_pressure({"Xx": 1.0}, 25.0)
    with pytest.raises(InputError, match="Na"):
        model.vapour_pressure({"Na": -1.0, "Cl": -1.0}, 25.0)


# ------------------------------------------------------------------------------------ boiling point
def test_the_brine_boils_where_its_vapour_pressure_is_the_pressure(model):
    for p in (20.0, 101.325, 200.0):
        b = quiet(pk.boiling_point, NACL, pressure_kpa=p)
        vp = quiet(model.vapour_pressure, NACL, b.temp_c)
        assert vp.pressure_kpa == pytest.approx(p, rel=1e-6)
        assert b.elevation_c > 0 and float(b) == b.temp_c


def test_boiling_point_rises_with_pressure_and_concentration():
    t = [quiet(pk.boiling_point, NACL, pressure_kpa=p).temp_c for p in (50.0, 101.325, 150.0)]
    assert t[0] < t[1] < t[2]
    e = [quiet(pk.boiling_point, pk.Brine({"Na": m, "Cl": m})).elevation_c for m in (0.5, 2.0, 5.0)]
    assert e[0] < e[1] < e[2]


def test_boiling_point_above_100_c_carries_the_validity_warning():
    with pytest.warns(ValidityWarning):
        b = pk.boiling_point(NACL)
    assert b.temp_c > 100 and any("extrapolated" in w for w in b.warnings)
    cool = quiet(pk.boiling_point, NACL, pressure_kpa=40.0)
    assert cool.temp_c < 100 and cool.warnings == []


@pytest.mark.parametrize("pressure", [0.1, 1000.0])
def test_a_boiling_point_outside_0_to_150_c_is_refused(pressure):
    with pytest.raises(RangeError, match=r"pressure_kpa: got .*from .* kPa"):
        pk.boiling_point(NACL, pressure_kpa=pressure)


@pytest.mark.parametrize("pressure", [0.0, -5.0, True, "101", float("inf"), None])
def test_boiling_point_pressure_must_be_a_positive_number(pressure):
    with pytest.raises(InputError, match="pressure_kpa"):
        pk.boiling_point(NACL, pressure_kpa=pressure)


# ------------------------------------------------------------------------------------ freezing point
def test_ice_is_saturated_at_the_freezing_point(model):
    f = quiet(pk.freezing_point, NACL)
    r = quiet(model.activity, NACL.molalities, f.temp_c, supercooled=True)
    ice = model.solids.index["ice"]
    assert r.ln_water_activity == pytest.approx(float(model.solids.ln_k(f.temp_c)[ice]), abs=1e-8)
    assert f.water_activity == pytest.approx(r.water_activity, rel=1e-12)
    assert f.ice == "ice" and float(f) == f.temp_c < 0


def test_freezing_point_falls_with_concentration_and_pure_water_freezes_at_0_c():
    t = [quiet(pk.freezing_point, pk.Brine({"Na": m, "Cl": m})).temp_c for m in (0.1, 1.0, 3.0)]
    assert t[0] > t[1] > t[2]
    dilute = quiet(pk.freezing_point, pk.Brine({"Na": 1e-9, "Cl": 1e-9}))
    assert dilute.temp_c == pytest.approx(0.0, abs=2e-3) and dilute.depression_c == pytest.approx(0.0, abs=1e-6)


def test_a_freezing_point_below_0_c_carries_the_validity_warning():
    with pytest.warns(ValidityWarning, match="Na-Cl"):
        f = pk.freezing_point(NACL)
    assert any("extrapolated" in w and "Na-Cl" in w for w in f.warnings)


def test_freezing_below_a_eutectic_names_the_salt_that_would_crystallize():
    f = quiet(pk.freezing_point, pk.Brine({"Na": 0.9, "SO4": 0.45}))
    assert any("supersaturated with mirabilite" in w for w in f.warnings)
    dilute = quiet(pk.freezing_point, pk.Brine({"Na": 0.2, "SO4": 0.1}))
    assert not any("supersaturated" in w for w in dilute.warnings)


def test_a_brine_that_does_not_freeze_above_minus_30_c_is_refused():
    with pytest.raises(RangeError, match="freezes above -30"):
        quiet(pk.freezing_point, pk.Brine({"Ca": 4.0, "Cl": 8.0}))


def test_freezing_point_refuses_a_bad_brine():
    with pytest.raises(InputError, match="charge imbalance"):
        pk.freezing_point({"Na": 1.0})
    with pytest.raises(InputError, match="brine"):
        pk.freezing_point(42)


def test_activity_below_0_c_only_when_asked_for_supercooled_liquid(model):
    with pytest.raises(RangeError, match="from 0 to"):
        model.activity(NACL.molalities, -5.0)
    r = quiet(model.activity, NACL.molalities, -5.0, supercooled=True)
    assert 0 < r.water_activity < 1
    with pytest.raises(RangeError, match="from -30 to"):
        model.activity(NACL.molalities, -31.0, supercooled=True)


def test_results_name_the_database(model):
    over = model.with_overlays(EXAMPLE)
    assert quiet(pk.freezing_point, NACL, model=over).database == over.label != model.label
    assert quiet(pk.boiling_point, NACL, model=over).database == over.label


# ------------------------------------------------------------------------------------ command line
BRINE = ["--salts", "NaCl=2.0", "--units", "mol/kg"]


def test_cli_gives_the_library_values(capsys, model):
    doc = run_json(capsys, "colligative", *BRINE, "--temp", "40", "--pressure", "80")
    assert doc["freezing_point_c"] == pytest.approx(quiet(pk.freezing_point, NACL).temp_c, abs=1e-9)
    assert doc["boiling_point_c"] == pytest.approx(quiet(pk.boiling_point, NACL, 80.0).temp_c, abs=1e-9)
    assert doc["vapour_pressure_kpa"] == pytest.approx(model.vapour_pressure(NACL, 40.0).pressure_kpa, rel=1e-12)
    assert [r["property"] for r in doc["properties"]] == ["freezing point", "boiling point", "vapour pressure"]
    assert doc["database"] == "embedded database"
    assert any("extrapolated" in w for w in doc["warnings"])


def test_cli_only_and_csv(capsys):
    code, out, err = run(capsys, "colligative", *BRINE, "--only", "boiling", "--format", "csv")
    assert code == 0, err
    lines = out.strip().splitlines()
    assert lines[0].startswith("property,value,units") and len(lines) == 2 and lines[1].startswith("boiling point")
    doc = run_json(capsys, "colligative", *BRINE, "--only", "vapour")
    assert "freezing_point_c" not in doc and "boiling_point_c" not in doc and doc["temp_c"] == 25.0


def test_cli_overlay_names_the_database(capsys):
    doc = run_json(capsys, "colligative", *BRINE, "--only", "vapour", "--overlay", EXAMPLE)
    assert "overlay" in doc["database"]


@pytest.mark.parametrize("argv,words", [
    (["--pressure", "0.01"], "--pressure: got 0.01"),
    (["--pressure", "-1"], "--pressure: got -1"),
    (["--only", "vapour", "--temp", "200"], "temp_c: got 200"),
])
def test_cli_errors_name_the_option_and_value(capsys, argv, words):
    code, out, err = run(capsys, "colligative", *BRINE, *argv)
    assert code == 2 and words in err and "Traceback" not in err and out == ""


def test_cli_unfreezable_brine_is_an_input_error(capsys):
    code, _, err = run(capsys, "colligative", "--salts", "CaCl2=4", "--units", "mol/kg", "--only", "freezing")
    assert code == 2 and "freezes above -30" in err


def test_cli_help_lists_the_subcommand(capsys):
    with pytest.raises(SystemExit):
        run(capsys, "--help")
    out = capsys.readouterr().out
    assert "colligative" in out
