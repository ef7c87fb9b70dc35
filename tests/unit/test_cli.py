"""The ``phasekit`` command: every subcommand on a small example, values checked; errors and exit codes."""

import io
import json
import os
import shutil
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from cli_runner import run, run_json

import phasekit as pk
from phasekit.cli import common
from phasekit.cli.main import ORDER, main
from phasekit.fitting import fit_ln_k

ROOT = Path(__file__).resolve().parents[2]
SEAWATER_LIKE = "Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710"  # invented intake of the demo works, mg/kg




def _balanced_intake():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        raw = pk.Brine.from_analysis({k: float(v) for k, v in (p.split("=") for p in SEAWATER_LIKE.split(","))},
                                     units="mg/kg")
        return raw.balance(on="Cl")


# ------------------------------------------------------------------------------ help
@pytest.mark.parametrize("command", ORDER)
def test_every_subcommand_has_help_with_an_example(capsys, command):
    with pytest.raises(SystemExit) as exc:
        main([command, "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    assert "examples:" in out and f"phasekit {command} " in out and "exit codes:" in out


def test_top_level_help_lists_subcommands_and_exit_codes(capsys):
    code, out, _ = run(capsys)
    assert code == 0
    for command in ORDER:
        assert command in out
    assert "exit codes: 0 success; 1 batch" in out and "3 a solver did not converge" in out


# ------------------------------------------------------------------------------ subcommands
def test_solubility_json_carries_the_library_values(capsys):
    doc = run_json(capsys, "solubility", "KCl", "--temp", "25")
    ref = pk.solubility("KCl", 25)
    for key in ("solid", "molality", "grams_per_100g_water", "mass_percent", "water_activity"):
        assert doc[key] == getattr(ref, key)
    assert doc["solid"] == "sylvite"


def test_solubility_table_is_readable(capsys):
    code, out, _ = run(capsys, "solubility", "NaCl", "--temp", "40")
    assert code == 0 and "halite" in out and f"{pk.solubility('NaCl', 40).molality:.6g}" in out


def test_polytherm_csv_and_plot(capsys, tmp_path):
    png = tmp_path / "na2so4.png"
    code, out, _ = run(capsys, "polytherm", "Na2SO4", "--from", "0", "--to", "40", "--step", "10",
                       "--format", "csv", "--plot", str(png))
    assert code == 0
    curve = pd.read_csv(io.StringIO(out))
    ref, _ = pk.polytherm("Na2SO4", 0, 40, 10)
    assert list(curve["solid"]) == list(ref["solid"])
    assert np.allclose(curve["molality"], ref["molality"], rtol=1e-12)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_saturation_from_arguments(capsys, model):
    doc = run_json(capsys, "saturation", "--brine", SEAWATER_LIKE, "--units", "mg/kg", "--temp", "25")
    ref = model.saturation(_balanced_intake(), 25.0)
    got = {r["solid"]: r for r in doc["saturation"]}
    assert set(got) == set(ref.index)
    for solid in ref.index:
        assert got[solid]["saturation_index"] == pytest.approx(ref.loc[solid, "saturation_index"], abs=1e-12)
        assert got[solid]["state"] == ref.loc[solid, "state"]
    assert any(w.startswith("balanced on Cl") for w in doc["warnings"])


def test_saturation_from_a_row_of_a_file_and_xlsx_output(capsys, tmp_path, model):
    src = tmp_path / "wells.csv"
    src.write_text("sample,Na,K,Mg,Ca,Cl,SO4\nIntake-A,10780,399,1290,412,19350,2710\nHeron-2,43100,1600,5150,980,"
                   "77400,10800\n")
    out = tmp_path / "sat.xlsx"
    code, _, err = run(capsys, "saturation", "--input", str(src), "--row", "Intake-A", "--units", "mg/kg",
                       "--output", str(out))
    assert code == 0, err
    sheet = pd.read_excel(out, sheet_name="saturation").set_index("solid")
    ref = model.saturation(_balanced_intake(), 25.0)
    assert sheet.loc["gypsum", "saturation_index"] == pytest.approx(ref.loc["gypsum", "saturation_index"], abs=1e-12)
    code, _, err = run(capsys, "saturation", "--input", str(src), "--row", "Nowhere", "--units", "mg/kg")
    assert code == 2 and "--row: got 'Nowhere'" in err and "Traceback" not in err


def test_equilibrate_a_supersaturated_brine(capsys, model):
    doc = run_json(capsys, "equilibrate", "--brine", "Na=6.5,Cl=6.5", "--units", "mol/kg", "--temp", "25")
    ref = model.equilibrate(pk.Brine({"Na": 6.5, "Cl": 6.5}), 25.0)
    assert [r["solid"] for r in doc["solids"]] == ["halite"]
    assert doc["solids"][0]["mol_per_kg_water"] == pytest.approx(ref.solids["halite"], rel=1e-12)
    liquid = {r["species"]: r["molality"] for r in doc["liquid"]}
    assert liquid["Na"] == pytest.approx(pk.solubility("NaCl", 25).molality, rel=1e-8)


def test_evaporate_json_and_plot(capsys, tmp_path):
    svg = tmp_path / "evap.svg"
    brine = "Na=1.0,K=0.3,Cl=1.3"
    doc = run_json(capsys, "evaporate", "--brine", brine, "--units", "mol/kg", "--temp", "25", "--plot", str(svg))
    ref = pk.evaporate(pk.Brine({"Na": 1.0, "K": 0.3, "Cl": 1.3}), temp_c=25)
    assert doc["first_solid"] == ref.first_solid["solid"] == "halite"
    assert doc["first_solid_concentration_factor"] == pytest.approx(ref.first_solid["concentration_factor"])
    assert [e["solid"] for e in doc["events"]] == list(ref.events["solid"])
    assert doc["end_point"] == ref.end_point
    assert "<svg" in svg.read_text()


def test_cool_json(capsys):
    doc = run_json(capsys, "cool", "--brine", "K=5.0,Cl=5.0", "--units", "mol/kg", "--start", "60", "--end", "20")
    ref = pk.cool(pk.Brine({"K": 5.0, "Cl": 5.0}), start_c=60, end_c=20)
    assert doc["first_solid"] == "sylvite" and doc["first_solid_temp_c"] == pytest.approx(ref.first_solid["temp_c"])
    final = {r["solid"]: r["mol_per_kg_water"] for r in doc["summary"]}
    assert final["sylvite"] == pytest.approx(ref.summary().loc["sylvite", "mol_per_kg_water"], rel=1e-10)


def test_mix_json(capsys):
    # a bittern and a near-saturated salt brine: the common ion salts out halite
    doc = run_json(capsys, "mix", "--brine", "Mg=4.0,K=0.3,Cl=8.3", "--brine", "Na=6.1,Cl=6.1", "--units",
                   "mol/kg", "--ratio", "0.5", "--temp", "25")
    ref = pk.mix(pk.Brine({"Mg": 4.0, "K": 0.3, "Cl": 8.3}), pk.Brine({"Na": 6.1, "Cl": 6.1}), 0.5, 25)
    got = {r["solid"]: r["mol_per_kg_water"] for r in doc["solids"]}
    assert got.keys() == ref.solids.keys() and "halite" in got
    for s in got:
        assert got[s] == pytest.approx(ref.solids[s], rel=1e-10)


def test_mix_needs_two_brines(capsys):
    code, _, err = run(capsys, "mix", "--brine", "Na=1,Cl=1", "--units", "mol/kg", "--ratio", "0.5")
    assert code == 2 and "2 brines" in err


def test_ponds_from_arguments_and_from_a_file(capsys, tmp_path):
    brine = "Na=1.0,K=0.2,Cl=1.2"
    pond_args = ["--pond", "name=Heron 1;temp=30;cf=3", "--pond", "name=Heron 2;temp=30;until=sylvite"]
    doc = run_json(capsys, "ponds", "--brine", brine, "--units", "mol/kg", *pond_args)
    ref = pk.pond_train(pk.Brine({"Na": 1.0, "K": 0.2, "Cl": 1.2}),
                        [pk.Pond("Heron 1", 30, concentration_factor=3), pk.Pond("Heron 2", 30, until_saturated="sylvite")])
    assert [p["pond"] for p in doc["ponds"]] == ["Heron 1", "Heron 2"]
    assert doc["ponds"][1]["concentration_factor"] == pytest.approx(ref.ponds.loc[1, "concentration_factor"])
    assert doc["ponds"][1]["main_solid"] == ref.ponds.loc[1, "main_solid"] == "halite"
    train = tmp_path / "train.csv"
    train.write_text("name,temp_c,concentration_factor,until_saturated\nHeron 1,30,3,\nHeron 2,30,,sylvite\n")
    doc2 = run_json(capsys, "ponds", "--brine", brine, "--units", "mol/kg", "--ponds", str(train))
    assert doc2["ponds"] == doc["ponds"]
    code, _, err = run(capsys, "ponds", "--brine", brine, "--units", "mol/kg", "--pond", "name=X;depth=3")
    assert code == 2 and "--pond 1" in err and "depth=3" in err


def test_fit_ln_k_recovers_the_database_solubility(capsys, tmp_path, model):
    temps = [10.0, 25.0, 40.0, 60.0, 80.0]
    rows = [{"salt": "KCl", "temp_c": t, "molality": pk.solubility("KCl", t).molality} for t in temps]
    data = tmp_path / "kcl.csv"
    pd.DataFrame(rows).to_csv(data, index=False)
    doc = run_json(capsys, "fit", "--solid", "sylvite", "--data", str(data), "--terms", "a0,a3,a4")
    params = {r["parameter"]: r["value"] for r in doc["parameters"]}
    assert set(params) == {"a0", "a3", "a4"} and doc["n_points"] == 5
    ref = fit_ln_k("sylvite", pd.DataFrame(rows), terms=("a0", "a3", "a4"))
    for k in params:
        assert params[k] == pytest.approx(ref.parameters[k], rel=1e-9)
    # the data are the model's own solubilities: the fitted ln K is the database's at 25 °C
    assert params["a0"] == pytest.approx(float(model.solids.ln_k(25.0)[model.solids.index["sylvite"]]), abs=1e-3)


def test_isotherm_or_not_available(capsys, tmp_path):
    png = tmp_path / "iso.png"
    code, out, err = run(capsys, "isotherm", "NaCl", "KCl", "--temp", "25", "--format", "json", "--plot", str(png))
    try:
        from phasekit.diagrams import isotherm
    except ImportError:
        assert code == common.EXIT_UNAVAILABLE and "not available" in err
        return
    assert code == 0, err
    doc = json.loads(out)
    ref = isotherm(["NaCl", "KCl"], temp_c=25)
    assert len(doc["invariant_points"]) == len(ref.invariant_points) == 1
    assert doc["invariant_points"][0]["KCl_molality"] == pytest.approx(ref.invariant_points["KCl_molality"].iloc[0])
    assert png.read_bytes()[:4] == b"\x89PNG"


def test_app_subcommand_starts_the_web_app(capsys, monkeypatch):
    import webapp.app

    seen = {}
    monkeypatch.setattr(webapp.app, "run", lambda host, port, overlays=(), allow_hosts=(): seen.update(
        host=host, port=port, overlays=overlays, allow_hosts=allow_hosts))
    assert main(["app", "--port", "8123"]) == 0
    assert seen == {"host": "127.0.0.1", "port": 8123, "overlays": [], "allow_hosts": []}
    assert main(["app", "--overlay", "a.toml", "--overlay", "b.toml", "--allow-host", "pk.saltworks.example"]) == 0
    assert seen["overlays"] == ["a.toml", "b.toml"] and seen["allow_hosts"] == ["pk.saltworks.example"]


# ------------------------------------------------------------------------------ batch
def _table(tmp_path, bad=True):
    lines = ["sample,Na,K,Mg,Ca,Cl,SO4", "Intake-A,10780,399,1290,412,19350,2710",
             "Heron-2,43100,1600,5150,980,77400,10800"]
    if bad:
        lines += ["Bad-1,abc,399,1290,412,19350,2710", "Bad-2,10780,-4,1290,412,19350,2710"]
    path = tmp_path / "wells.csv"
    path.write_text("\n".join(lines) + "\n")
    return path


def test_batch_writes_every_row_and_counts_the_failures(capsys, tmp_path):
    from phasekit.batch import run_batch

    src, out = _table(tmp_path), tmp_path / "states.csv"
    code, stdout, err = run(capsys, "batch", str(src), "--units", "mg/kg", "--temp", "25", "--output", str(out))
    assert code == common.EXIT_ROWS_FAILED
    assert "4 rows, 2 ok, 2 failed" in err and "Traceback" not in err and "it/s" not in err  # no bar when piped
    got = pd.read_csv(out, keep_default_na=False, na_values=[""])
    assert list(got["sample"]) == ["Intake-A", "Heron-2", "Bad-1", "Bad-2"]
    assert list(got["status"]) == ["ok", "ok", "error", "error"]
    assert "column['Na']" in got.loc[2, "error"] and "'abc'" in got.loc[2, "error"]
    ref = run_batch(src, "mg/kg", 25.0).table
    assert np.allclose(got["si_gypsum"].to_numpy(float), ref["si_gypsum"].to_numpy(float), equal_nan=True, rtol=1e-15)
    assert list(got["first_solid"].fillna("")) == list(ref["first_solid"])


def test_batch_all_good_exits_zero_and_json(capsys, tmp_path):
    code, out, err = run(capsys, "batch", str(_table(tmp_path, bad=False)), "--units", "mg/kg", "--format", "json")
    assert code == 0, err
    doc = json.loads(out)
    assert doc["rows"] == 2 and doc["failed"] == 0 and doc["results"][0]["first_solid"] == "gypsum"


def test_progress_bar_only_on_a_terminal(monkeypatch):
    from phasekit.cli import cmd_batch

    monkeypatch.setattr(sys.stderr, "isatty", lambda: False, raising=False)
    assert cmd_batch._progress_bar(10, True) is None
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True, raising=False)
    bar = cmd_batch._progress_bar(10, True)
    assert bar is not None and bar.total == 10
    bar.close()
    assert cmd_batch._progress_bar(10, False) is None


# ------------------------------------------------------------------------------ errors
def test_bad_input_gives_one_line_and_exit_code_2(capsys, tmp_path):
    cases = [
        (["batch", str(tmp_path / "missing.csv"), "--units", "mg/kg"], "no such file"),
        (["batch", str(_table(tmp_path)), "--units", "ppm"], "units: got 'ppm'"),
        (["batch", str(_table(tmp_path))], "--units: got None"),
        (["saturation", "--brine", "Na=-5,Cl=10", "--units", "mg/kg"], "--brine['Na']: got '-5'"),
        (["saturation", "--brine", "Na10780", "--units", "mg/kg"], "--brine: got 'Na10780'"),
        (["solubility", "KBr", "--temp", "25"], "salt: got 'KBr'"),
        (["solubility", "KCl", "--temp", "500"], "temp_c: got 500"),
        (["polytherm", "KCl", "--plot", "fig.gif"], "--plot: got 'fig.gif'"),
        (["saturation", "--brine", "Na=10780,Cl=19350", "--units", "mg/kg", "--balance-on", "none"],
         "charge balance"),
    ]
    odd = tmp_path / "odd.csv"
    odd.write_text("sample,Na,Cl,Colour\nA,1,2,blue\n")
    cases.append((["batch", str(odd), "--units", "mg/kg"], "column: got 'Colour'"))
    cases.append((["batch", str(_table(tmp_path)), "--units", "mg/kg", "-o", str(tmp_path / "no" / "x.csv")],
                  "does not exist"))
    cases.append((["batch", str(_table(tmp_path)), "--units", "mg/kg", "--format", "xlsx"], "--output: got None"))
    empty = tmp_path / "empty.csv"
    empty.write_text("")
    cases.append((["batch", str(empty), "--units", "mg/kg"], "file is empty"))
    for argv, text in cases:
        code, _, err = run(capsys, *argv)
        assert code == common.EXIT_INPUT, (argv, err)
        lines = [ln for ln in err.splitlines() if ": error: " in ln]
        assert len(lines) == 1 and text in lines[0], (argv, err)
        assert "Traceback" not in err


def test_a_file_of_100_mb_is_refused(capsys, tmp_path):
    big = tmp_path / "big.csv"
    with open(big, "wb") as fh:  # sparse file: nothing of the 100 MB is written
        fh.write(b"sample,Na,Cl\n")
        fh.truncate(100 * 10**6)
    code, _, err = run(capsys, "batch", str(big), "--units", "mg/kg")
    assert code == 2 and "100.0 MB" in err and "at most 64 MB" in err


def test_usage_errors_exit_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["solubility", "KCl", "--temp", "warm"])
    assert exc.value.code == 2
    assert "invalid float value: 'warm'" in capsys.readouterr().err


def test_convergence_error_exit_3(capsys, monkeypatch):
    from phasekit.errors import ConvergenceError
    from phasekit.model import Model

    def fail(self, brine, temp_c, **kw):
        raise ConvergenceError("Newton iteration failed for the assemblage ['halite'] at 25 °C")

    monkeypatch.setattr(Model, "equilibrate", fail)
    code, _, err = run(capsys, "equilibrate", "--brine", "Na=6.5,Cl=6.5", "--units", "mol/kg")
    assert code == common.EXIT_CONVERGENCE and "convergence error: Newton iteration failed" in err


def test_not_available_exit_4(capsys, monkeypatch):
    from phasekit.cli import cmd_diagrams

    def missing(name):
        raise common.Unavailable(f"{name}: phase diagrams are not available in this installation")

    monkeypatch.setattr(cmd_diagrams, "diagram_function", missing)
    code, _, err = run(capsys, "isotherm", "NaCl", "KCl")
    assert code == common.EXIT_UNAVAILABLE and "isotherm: not available: isotherm: phase diagrams" in err


def test_internal_error_is_one_line_exit_5(capsys, monkeypatch):
    def broken(salt, temp_c, model=None):
        raise TypeError("unexpected")

    monkeypatch.setattr(pk, "solubility", broken)
    code, _, err = run(capsys, "solubility", "KCl")
    assert code == common.EXIT_INTERNAL and "internal error: TypeError: unexpected" in err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1


# ------------------------------------------------------------------------------ a real process
def _env():
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    return env


def test_module_entry_point_in_a_subprocess(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "phasekit.cli.main", "solubility", "KCl", "--temp", "25",
                           "--format", "json"], capture_output=True, text=True, env=_env(), cwd=tmp_path, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["molality"] == pk.solubility("KCl", 25).molality
    proc = subprocess.run([sys.executable, "-m", "phasekit.cli", "batch", "missing.csv", "--units", "mg/kg"],
                          capture_output=True, text=True, env=_env(), cwd=tmp_path, timeout=300)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr
    assert proc.stderr.strip() == ("phasekit batch: error: input: got 'missing.csv'; expected the path of an "
                                   "existing .csv or .xlsx file (no such file)")


def test_installed_console_script(tmp_path):
    exe = shutil.which("phasekit")
    if exe is None:
        pytest.skip("the phasekit console script is not installed (pip install -e .)")
    proc = subprocess.run([exe, "solubility", "NaCl", "--temp", "25", "--format", "json"], capture_output=True,
                          text=True, cwd=tmp_path, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["solid"] == "halite"
