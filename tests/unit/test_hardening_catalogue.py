"""The catalogue of bad inputs of the library, the command line and overlay files: every one gives a
clear error naming the field and the value (exit code 2 on the command line), never an internal
error (exit 5) and never a wrong number."""

import math
import warnings

import pandas as pd
import pytest

import phasekit as pk
from phasekit.errors import InputError
from phasekit.overlay import MAX_OVERLAY_BYTES, read_overlay
from tests.unit.cli_runner import run

SRC = "invented for phasekit's tests (not a measurement)"


def _overlay(tmp_path, body, name="t.toml"):
    path = tmp_path / name
    path.write_text('[overlay]\nname = "test"\nsource = "x"\n\n' + body)
    return path


SYLVITE = '[[solid]]\nname = "sylvite"\nsource = "x"\n'


@pytest.mark.parametrize("body,field,words", [
    ('[solid]\nname = "sylvite"\na0 = 2.0\nsource = "x"\n', "[solid]", "[[solid]]"),
    (SYLVITE + 't_min_c = "cold"\n', "t_min_c", "'cold'"),
    (SYLVITE + 'stderr = {a0 = "big"}\n', "stderr.a0", "'big'"),
    (SYLVITE + "A0 = 2.0\n", "solid[0]", "did you mean 'a0'"),
    (SYLVITE + "a_3 = -2400.0\n", "solid[0]", "did you mean 'a3'"),
    (SYLVITE + "a0 = nan\n", "a0", "finite"),
    (SYLVITE + "a0 = inf\n", "a0", "finite"),
    (SYLVITE + "a0 = true\n", "a0", "True"),
    (SYLVITE + "t_min_c = 60.0\nt_max_c = 10.0\n", "t_min_c", "below t_max_c"),
    (SYLVITE + "t_min_c = nan\n", "t_min_c", "temperature"),
    ('[[parameter]]\nkind = "beta0"\nspecies = ["Na", "Cl"]\na0 = 1e6\nsource = "x"\n', "a0", "magnitude"),
    ('[[parameter]]\nkind = "beta0"\nspecies = ["Na", "Cl"]\na0 = 50.0\nsource = "x"\n', "beta0(Na, Cl)",
     "physically sensible"),
    ('[[parameter]]\nkind = "theta"\nspecies = "NaK"\na0 = 0.01\nsource = "x"\n', "species", "not a string"),
    ('[[parameter]]\nkind = "gamma"\nspecies = ["Na", "K"]\na0 = 0.01\nsource = "x"\n', "kind", "theta"),
    ('[[solid]]\nname = "oddsalt"\nformula = "KCl2"\nstoichiometry = "K:1 Cl:2"\nsource = "x"\n',
     "stoichiometry", "charges add up to -1"),
    ('[[solid]]\nname = "oddsalt"\nformula = "KCl"\nstoichiometry = "K:-1 Cl:-1"\nsource = "x"\n',
     "stoichiometry", "amount of K"),
    ('[[solid]]\nname = "oddsalt"\nformula = "KZz"\nstoichiometry = "K:1 Zz:1"\nsource = "x"\n',
     "stoichiometry", "'Zz'"),
    (SYLVITE + "a0 = 500.0\n", "ln K of solid sylvite", "physically sensible"),
    (SYLVITE + "t_max_c = -10.0\n", "validity range", "t_min_c below t_max_c"),
    ("[extra]\nx = 1\n", "overlay", "only [overlay]"),
])
def test_bad_overlays_are_refused_with_the_field_and_value(tmp_path, capsys, body, field, words):
    path = _overlay(tmp_path, body)
    with pytest.raises(InputError) as err:
        pk.default_model().with_overlays(path)
    assert field in str(err.value) and words in str(err.value)
    code, _, stderr = run(capsys, "solubility", "KCl", "--overlay", str(path))
    assert code == 2, stderr
    assert "internal error" not in stderr and words in stderr


def test_a_refused_overlay_never_labels_results(tmp_path):
    path = _overlay(tmp_path, SYLVITE + "A0 = 2.0\n")
    with pytest.raises(InputError):
        pk.load_model(overlays=[path])
    assert pk.default_model().label == "embedded database"


def test_overlay_arguments_of_the_wrong_type(tmp_path, test_overlays):
    model = pk.default_model()
    with pytest.raises(InputError, match=r"overlays\[0\]: got 123"):
        model.with_overlays(123)
    with pytest.raises(InputError, match="not a single string"):
        pk.load_model(overlays=test_overlays["plus"])
    with pytest.raises(InputError, match=r"name: got None; expected a name"):
        model.with_overlays({"solid": [{"name": "sylvite", "a0": 2.0, "source": SRC}]})
    good = read_overlay(test_overlays["plus"])
    assert model.with_overlays(good).overlays == ["test sylvite +0.2"]


def test_an_overlay_file_above_the_size_limit_is_refused_before_parsing(tmp_path):
    path = _overlay(tmp_path, "# " + "x" * (MAX_OVERLAY_BYTES + 10) + "\n")
    with pytest.raises(InputError, match="at most 256 kB"):
        read_overlay(path)


def test_a_sensible_overlay_still_applies(tmp_path):
    a0 = pk.default_model().solids["sylvite"].coeffs[0]
    path = _overlay(tmp_path, SYLVITE + f"a0 = {a0 + 0.05}\nt_min_c = 5.0\nt_max_c = 60.0\nstderr = {{a0 = 0.01}}\n"
                    + '\n[[solid]]\nname = "test double salt"\nformula = "K2Mg(SO4)2(H2O)4"\n'
                    'stoichiometry = "K:2 Mg:1 SO4:2 H2O:4"\na0 = -9.0\nsource = "x"\n')
    model = pk.default_model().with_overlays(path)
    assert model.solids["sylvite"].coeffs[0] == pytest.approx(a0 + 0.05)
    assert "test double salt" in model.solids.names


# ------------------------------------------------------------------ the library
@pytest.mark.parametrize("call,field", [
    (lambda m: m.activity({"Na": 1.0, "Cl": 1.0}, temp_c=None), "temp_c"),
    (lambda m: m.activity({"Na": 1.0, "Cl": 1.0}, temp_c="25"), "temp_c"),
    (lambda m: m.activity({"Na": True, "Cl": True}, 25), "True"),
    (lambda m: m.activity(pd.DataFrame({"Na": [True], "Cl": [True]}), 25), "True/False"),
    (lambda m: m.activity({"Na": 1e300, "Cl": 1e300}, 25), "1000 mol/kg"),
    (lambda m: m.saturation(pk.Brine({"Na": 1e300, "Cl": 1e300}), 25), "1000 mol/kg"),
    (lambda m: pk.evaporate(pk.Brine({"Na": 1.0, "Cl": 1.0}), temp_c=25, concentration_factor=True),
     "concentration_factor"),
    (lambda m: pk.isotherm(["NaCl", "KCl"], temp_c=25, exclude="halite"), "not a string"),
    (lambda m: pk.load_model(overlays="works.toml"), "not a single string"),
    (lambda m: __import__("phasekit.batch", fromlist=["run_batch"]).run_batch(
        pd.DataFrame({"Na": ["1"], "Cl": ["1"]}), "mol/kg", 25, overlays="works.toml"), "not a single string"),
])
def test_library_refuses_booleans_strings_and_absurd_values(call, field):
    with pytest.raises(InputError) as err:
        call(pk.default_model())
    assert field in str(err.value)


def test_validity_warnings_name_the_ionic_strength_of_each_brine():
    model = pk.default_model()
    seen = []
    for m in (30.0, 25.0, 500.0):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            sat = model.saturation(pk.Brine({"Na": m, "Cl": m}), 25)
        seen.append([w for w in sat.attrs["warnings"] if "ionic strength" in w])
    assert "ionic strength 30 mol/kg" in seen[0][0]
    assert "ionic strength 25 mol/kg" in seen[1][0]
    assert "ionic strength 500 mol/kg" in seen[2][0]


# ------------------------------------------------------------------ the command line
def test_leach_with_a_fraction_that_is_not_a_number(capsys):
    code, _, err = run(capsys, "leach", "--ore", "sylvite=abc,halite=0.6", "--ore-kg", "100", "--water-kg", "300",
                       "--time", "600", "--d50", "500")
    assert code == 2 and "--ore sylvite" in err and "'abc'" in err


def test_onset_with_a_scheduler_that_does_not_answer(capsys):
    code, _, err = run(capsys, "onset", "--brine", "Na=10780,Cl=19350", "--units", "mg/kg", "--sd",
                       "solid:sylvite:a0=0.1", "--samples", "4", "--scheduler", "tcp://127.0.0.1:9")
    assert code == 2 and "--scheduler: got 'tcp://127.0.0.1:9'" in err and "running Dask scheduler" in err


def test_onset_names_an_unknown_ion_of_a_parameter(capsys):
    code, _, err = run(capsys, "onset", "--brine", "Na=10780,Cl=19350", "--units", "mg/kg", "--sd",
                       "psi:Cl:NO3:Zz=0.002", "--samples", "4")
    assert code == 2 and "'Zz'" in err
    assert "failed for almost every sample" not in err and "pitzer_mixing.csv" not in err


def test_fit_names_an_unknown_parameter_kind_before_the_data(tmp_path, capsys):
    data = tmp_path / "d.csv"
    data.write_text("temp_c,Na,Cl\n25,6.1,6.1\n50,6.2,6.2\n")
    code, _, err = run(capsys, "fit", "--param", "foo:Na:K", "--data", str(data))
    assert code == 2 and "'foo'" in err and "solids" not in err


def test_balance_messages_use_the_option_not_the_python_argument(capsys):
    code, _, err = run(capsys, "saturation", "--brine", "Na=10780,Cl=19350", "--units", "mg/kg",
                       "--balance-on", "Cl")
    assert code == 2 and "--balance-on" in err and "allow_decrease" not in err


def test_monte_carlo_of_a_valid_spec_still_runs():
    from phasekit.uncertainty import monte_carlo, onset_predictor

    brine = pk.Brine({"Na": 4.0, "Cl": 4.0})
    res = monte_carlo(onset_predictor(brine, 25), [(("solid", "halite", "a0"), 0.01)], n=4)
    assert math.isfinite(res.mean) and res.n_failed == 0
