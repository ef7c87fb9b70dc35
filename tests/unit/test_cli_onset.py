"""Command line: ``phasekit onset`` (first saturation on evaporation, with Monte Carlo uncertainty)."""

import warnings

import pytest
from cli_runner import run_json

import phasekit as pk
from phasekit.cli.main import main
from phasekit.data_files import data_dir
from phasekit.uncertainty import onset_concentration_factor

BRINE = ["--salts", "NaNO3=1.5,KCl=1.0", "--units", "mol/kg", "--temp", "25"]
EXAMPLE = str(data_dir() / "overlays" / "halite_pbb1977.toml")


def scalars(capsys, *argv):
    doc = run_json(capsys, *argv)
    return doc.get("scalars", doc)


def test_nominal_onset_is_the_library_value(capsys):
    sc = scalars(capsys, "onset", *BRINE)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        lib = onset_concentration_factor(pk.default_model(), pk.Brine.from_salts({"NaNO3": 1.5, "KCl": 1.0},
                                                                                 units="mol/kg"), 25.0)
    assert sc["concentration_factor"] == pytest.approx(lib, rel=1e-9)
    assert "std" not in sc


def test_stated_uncertainties_spread_the_onset(capsys):
    sc = scalars(capsys, "onset", *BRINE, "--sd", "psi:Cl:NO3:K=0.002", "--sd", "theta:Cl:NO3=0.005",
                  "--samples", "20")
    assert sc["std"] > 0 and sc["p2_5"] <= sc["p50"] <= sc["p97_5"]
    zero = scalars(capsys, "onset", *BRINE, "--sd", "theta:Cl:NO3=0", "--samples", "5")
    assert zero["std"] == pytest.approx(0.0, abs=1e-12)


def test_overlay_stderr_is_sampled(capsys):
    args = ["onset", "--salts", "NaCl=3.0", "--units", "mol/kg", "--temp", "25", "--overlay", EXAMPLE,
            "--overlay-stderr", "--samples", "20"]
    sc = scalars(capsys, *args)
    assert sc["std"] > 0 and "halite after Potter" in sc["database"]


@pytest.mark.parametrize("extra,word", [(["--sd", "psi:Cl:NO3:K"], "--sd"), (["--sd", "theta:Cl:NO3=-1"], "--sd"),
                                        (["--overlay-stderr"], "--overlay-stderr")])
def test_bad_options(capsys, extra, word):
    code = main(["onset", *BRINE, *extra])
    _, err = capsys.readouterr()
    assert code == 2 and word in err
