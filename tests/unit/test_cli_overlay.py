"""Database overlays on the command line: --overlay on every computing subcommand, the database named on
every result, fit --save-overlay, and the errors of bad overlays.

The overlays (fixture ``test_overlays`` of tests/conftest.py) are invented for these tests: sylvite's ln K
at 25 °C (a0) raised or lowered by 0.2 from the embedded value, and one naming a solid that does not exist.
"""

import io
import math
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from cli_runner import run, run_json

import phasekit as pk
from phasekit.cli import common

PLUS_LABEL = "embedded database + overlay test sylvite +0.2"
SHIFT = 0.2 / math.log(10)  # of sylvite's saturation index at 25 °C
KCL_NACL = "Na=2.0,K=1.0,Cl=3.0"  # mol/kg, undersaturated




@pytest.fixture()
def ov(test_overlays):
    """"plus": sylvite a0 + 0.2; "minus": sylvite a0 - 0.2 (conflicts with "plus"); "unknown": a solid not in
    the database."""
    return test_overlays


def _quiet(fn, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return fn(*args, **kwargs)


# ------------------------------------------------------------------------------ results change, label shown
def test_raising_sylvite_ln_k_raises_kcl_solubility(capsys, ov):
    base = run_json(capsys, "solubility", "KCl", "--temp", "25")
    plus = run_json(capsys, "solubility", "KCl", "--temp", "25", "--overlay", ov["plus"])
    minus = run_json(capsys, "solubility", "KCl", "--temp", "25", "--overlay", ov["minus"])
    assert base["database"] == "embedded database"
    assert plus["database"] == PLUS_LABEL
    assert minus["molality"] < base["molality"] < plus["molality"]
    ref = _quiet(pk.solubility, "KCl", 25, model=pk.load_model(overlays=[ov["plus"]]))
    assert plus["molality"] == ref.molality


def test_saturation_index_shifts_by_the_change_of_ln_k(capsys, ov):
    # SI = (ln IAP - ln K) / ln 10 and the overlay changes ln K alone: at 25 °C (a0 is the 25 °C value)
    # sylvite's SI falls by 0.2 / ln 10 and no other solid's SI moves
    args = ["saturation", "--brine", KCL_NACL, "--units", "mol/kg", "--temp", "25"]
    base = {r["solid"]: r["saturation_index"] for r in run_json(capsys, *args)["saturation"]}
    doc = run_json(capsys, *args, "--overlay", ov["plus"])
    plus = {r["solid"]: r["saturation_index"] for r in doc["saturation"]}
    assert doc["database"] == PLUS_LABEL
    assert plus["sylvite"] - base["sylvite"] == pytest.approx(-SHIFT, abs=1e-9)
    assert plus["halite"] == base["halite"]


def test_paths_diagrams_and_ponds_use_the_overlay(capsys, ov):
    evap = ["evaporate", "--brine", "Na=1.0,K=0.3,Cl=1.3", "--units", "mol/kg", "--temp", "25"]
    a, b = run_json(capsys, *evap), run_json(capsys, *evap, "--overlay", ov["plus"])
    assert a["first_solid"] == b["first_solid"] == "halite"
    sylvite = [[e["concentration_factor"] for e in d["events"] if e["solid"] == "sylvite"][0] for d in (a, b)]
    assert sylvite[1] > sylvite[0]  # a more soluble sylvite comes out later
    iso = ["isotherm", "NaCl", "KCl", "--temp", "25"]
    k_base = run_json(capsys, *iso)["invariant_points"][0]["KCl_molality"]
    doc = run_json(capsys, *iso, "--overlay", ov["plus"])
    assert doc["database"] == PLUS_LABEL and doc["invariant_points"][0]["KCl_molality"] > k_base
    doc = run_json(capsys, "ponds", "--brine", KCL_NACL, "--units", "mol/kg", "--overlay", ov["plus"],
                   "--pond", "name=Heron 1;temp=25;until=halite")
    assert doc["database"] == PLUS_LABEL


def test_label_in_table_csv_and_xlsx(capsys, ov, tmp_path):
    code, out, _ = run(capsys, "solubility", "KCl", "--overlay", ov["plus"])
    assert code == 0 and any(ln.startswith("database") and PLUS_LABEL in ln for ln in out.splitlines())
    code, out, _ = run(capsys, "polytherm", "KCl", "--from", "10", "--to", "30", "--step", "10", "--overlay", ov["plus"],
                       "--format", "csv")
    curve = pd.read_csv(io.StringIO(out))
    assert code == 0 and set(curve["database"]) == {PLUS_LABEL} and len(curve) == 3
    xlsx = tmp_path / "sat.xlsx"
    code, _, err = run(capsys, "saturation", "--brine", KCL_NACL, "--units", "mol/kg", "--overlay", ov["plus"],
                       "-o", str(xlsx))
    assert code == 0, err
    summary = pd.read_excel(xlsx, sheet_name="summary").set_index("key")["value"]
    assert summary["database"] == PLUS_LABEL


def test_leach_driving_force_uses_the_overlay(capsys, ov):
    args = ["leach", "--ore", "sylvite=0.5", "--ore-kg", "1.0", "--water-kg", "1", "--d50", "400", "--temp", "25",
            "--time", "3000"]
    base, plus = run_json(capsys, *args), run_json(capsys, *args, "--overlay", ov["plus"])
    dissolved = [[r["dissolved_kg"] for r in d["summary"]][0] for d in (base, plus)]
    assert plus["database"] == PLUS_LABEL
    assert 0.3 < dissolved[0] < dissolved[1] < 0.5  # more sylvite dissolves before the brine saturates


def test_batch_overlay_in_this_process_and_in_workers(capsys, ov, tmp_path):
    src = tmp_path / "wells.csv"
    src.write_text("sample,Na,K,Cl\nA,2.0,1.0,3.0\nB,4.0,2.2,6.2\nC,1.0,3.5,4.5\n")
    argv = ["batch", str(src), "--units", "mol/kg", "--chunk-rows", "1"]
    base = run_json(capsys, *argv)
    here = run_json(capsys, *argv, "--overlay", ov["plus"])
    pool = run_json(capsys, *argv, "--overlay", ov["plus"], "--workers", "2")
    assert base["database"] == "embedded database" and here["database"] == pool["database"] == PLUS_LABEL
    assert here["results"] == pool["results"]
    for b, h in zip(base["results"], here["results"]):
        assert h["si_sylvite"] == pytest.approx(b["si_sylvite"] - SHIFT, abs=1e-9)


# ------------------------------------------------------------------------------ fit
def _kcl_data(tmp_path, model) -> Path:
    temps = np.linspace(10, 90, 9)
    m = [_quiet(pk.solubility, "KCl", t, model=model).molality for t in temps]
    path = tmp_path / "works_kcl.csv"
    pd.DataFrame({"salt": "KCl", "solids": "sylvite", "temp_c": temps, "molality": m}).to_csv(path, index=False)
    return path


def test_fit_save_overlay_round_trip(capsys, ov, tmp_path):
    truth = pk.load_model(overlays=[ov["plus"]])
    data = _kcl_data(tmp_path, truth)
    out = tmp_path / "works_kcl.toml"
    doc = run_json(capsys, "fit", "--solid", "sylvite", "--data", str(data), "--save-overlay", str(out))
    assert doc["overlay_name"] == "works_kcl" and doc["overlay_saved"] == str(out)
    fitted = pk.default_model().with_overlays(out)
    assert fitted.label == "embedded database + overlay works_kcl"
    solid = fitted.solids["sylvite"]
    assert (solid.t_min_c, solid.t_max_c) == (10.0, 90.0)  # the range of the data
    doc = run_json(capsys, "solubility", "KCl", "--temp", "50", "--overlay", str(out))
    assert doc["molality"] == pytest.approx(_quiet(pk.solubility, "KCl", 50, model=truth).molality, rel=1e-6)
    assert doc["database"] == "embedded database + overlay works_kcl"
    named = tmp_path / "named.toml"
    doc = run_json(capsys, "fit", "--solid", "sylvite", "--data", str(data), "--save-overlay", str(named),
                   "--overlay-name", "Saltmarsh lab 2026")
    assert pk.default_model().with_overlays(named).overlays == ["Saltmarsh lab 2026"]


def test_fit_on_top_of_an_overlay(capsys, ov, tmp_path):
    # data made with the overlay's sylvite: fitted on top of the same overlay, K–Cl beta0 needs no change;
    # fitted on the embedded database, it must absorb the difference in ln K
    data = _kcl_data(tmp_path, pk.load_model(overlays=[ov["plus"]]))
    beta0 = pk.default_model().db.binary
    beta0 = float(beta0[(beta0.cation == "K") & (beta0.anion == "Cl") & (beta0.parameter == "beta0")]["a0"].iloc[0])
    on = run_json(capsys, "fit", "--param", "beta0:K:Cl", "--data", str(data), "--overlay", ov["plus"])
    off = run_json(capsys, "fit", "--param", "beta0:K:Cl", "--data", str(data))
    assert on["database"] == PLUS_LABEL
    assert on["parameters"][0]["value"] == pytest.approx(beta0, abs=1e-6)
    assert abs(off["parameters"][0]["value"] - beta0) > 1e-3


def test_fit_save_overlay_refusals(capsys, ov, tmp_path):
    data = _kcl_data(tmp_path, pk.default_model())
    cases = [
        (["--solid", "sylvite", "--save-overlay", str(tmp_path / "fit.txt")], "a file name ending in .toml"),
        (["--solid", "sylvite", "--save-overlay", str(tmp_path / "no" / "fit.toml")], "existing directory"),
        (["--solid", "sylvite", "--overlay-name", "x"], "--save-overlay FILE.toml"),
        (["--param", "lnk:sylvite", "--save-overlay", str(tmp_path / "fit.toml")], "lnk:sylvite"),
        (["--solid", "sylvite", "--overlay", ov["plus"], "--save-overlay", ov["plus"]], "other than the inputs"),
    ]
    for extra, text in cases:
        code, _, err = run(capsys, "fit", "--data", str(data), *extra)
        assert code == common.EXIT_INPUT, (extra, err)
        lines = [ln for ln in err.splitlines() if ": error: " in ln]
        assert len(lines) == 1 and text in lines[0], (extra, err)
    assert not (tmp_path / "fit.toml").exists()


# ------------------------------------------------------------------------------ errors
@pytest.mark.parametrize("argv", [
    ["solubility", "KCl"],
    ["polytherm", "KCl"],
    ["saturation", "--brine", KCL_NACL, "--units", "mol/kg"],
    ["equilibrate", "--brine", KCL_NACL, "--units", "mol/kg"],
    ["isotherm", "NaCl", "KCl"],
    ["evaporate", "--brine", KCL_NACL, "--units", "mol/kg"],
    ["cool", "--brine", KCL_NACL, "--units", "mol/kg", "--start", "60", "--end", "20"],
    ["mix", "--brine", KCL_NACL, "--brine", "Na=1,Cl=1", "--units", "mol/kg", "--ratio", "0.5"],
    ["ponds", "--brine", KCL_NACL, "--units", "mol/kg", "--pond", "name=P;temp=25;cf=2"],
    ["leach", "--ore", "sylvite=0.5", "--ore-kg", "0.5", "--water-kg", "1", "--d50", "400", "--time", "10"],
    ["batch", "WELLS", "--units", "mol/kg"],
    ["fit", "--solid", "sylvite", "--data", "WELLS"],
    ["app", "--port", "1"],
])
def test_bad_overlays_give_one_line_and_exit_code_2(capsys, ov, tmp_path, argv):
    wells = tmp_path / "wells.csv"
    wells.write_text("salt,temp_c,molality\nKCl,20,4.6\nKCl,40,5.3\nKCl,60,5.9\nKCl,80,6.5\n")
    argv = [str(wells) if a == "WELLS" else a for a in argv]
    bad_toml = tmp_path / "broken.toml"
    bad_toml.write_text("[overlay\nname = 'x'\n")
    cases = [
        ([str(tmp_path / "missing.toml")], f"--overlay: got '{tmp_path / 'missing.toml'}'; expected an existing "
                                           "overlay file"),
        ([str(bad_toml)], "expected a valid TOML overlay file"),
        ([ov["unknown"]], "solid[0].name: got 'unobtainite'; expected a solid of the database"),
        ([ov["plus"], ov["minus"]], "expected overlays that do not set solid/sylvite/a0 to different values"),
    ]
    for files, text in cases:
        if argv[0] == "app" and files == [ov["plus"], ov["minus"]]:
            continue  # the app offers conflicting overlays one at a time (tests/app)
        extra = [x for f in files for x in ("--overlay", f)]
        code, out, err = run(capsys, *argv, *extra)
        assert code == common.EXIT_INPUT, (argv, files, err)
        lines = [ln for ln in err.splitlines() if ": error: " in ln]
        assert len(lines) == 1 and text in lines[0], (argv, files, err)
        assert "Traceback" not in err and out == ""
