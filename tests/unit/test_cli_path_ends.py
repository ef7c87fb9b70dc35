"""Command line: stop reasons, the exit code of a partial path, --exclude and --beyond-validity."""

import json

from phasekit.cli.common import EXIT_INPUT, EXIT_OK, EXIT_PARTIAL
from tests.unit.cli_runner import run, run_json

SEAWATER = ("--brine", "Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710", "--units", "mg/kg")
# a Ca-Mg chloride brine whose evaporation reaches I = 20 mol/kg before any invariant point
HIGH = ("--brine", "Mg=2,Ca=1,Cl=6", "--units", "mol/kg")


def test_evaporate_reports_why_it_ended(capsys):
    doc = run_json(capsys, "evaporate", *SEAWATER, "--temp", "25")
    assert doc["complete"] is True and doc["stop_reason"] in ("eutonic", "drying point")
    assert {"point"} <= set(doc["events"][0])
    assert doc["exclude"] == []


def test_partial_path_exit_code_and_rows_written(capsys):
    code, out, err = run(capsys, "evaporate", *HIGH, "--temp", "25", "--format", "json")
    assert code == EXIT_PARTIAL
    doc = json.loads(out)
    assert doc["complete"] is False and doc["stop_reason"] == "validity limit"
    assert len(doc["steps"]) > 3 and doc["steps"][-1]["ionic_strength"] <= 20.0 * (1 + 1e-9)
    assert "partial result" in err and "validity limit" in err
    code, out, err = run(capsys, "evaporate", *HIGH, "--temp", "25", "--beyond-validity", "--format", "json")
    assert code == EXIT_OK
    doc = json.loads(out)
    assert doc["beyond_validity"] is True and doc["steps"][-1]["ionic_strength"] > 20.0
    assert "above the model's validity limit" in err


def test_exclude_on_evaporate_ponds_saturation_and_equilibrate(capsys):
    doc = run_json(capsys, "evaporate", *SEAWATER, "--temp", "25", "--exclude", "anhydrite")
    assert doc["exclude"] == ["anhydrite"]
    assert "anhydrite" not in {r["solid"] for r in doc["events"]}
    assert "gypsum" in {r["solid"] for r in doc["summary"]}
    doc = run_json(capsys, "ponds", *SEAWATER, "--pond", "name=Heron 1;temp=30;until=halite", "--exclude",
                   "anhydrite")
    assert doc["exclude"] == ["anhydrite"] and doc["ponds"][0]["main_solid"] == "gypsum"
    doc = run_json(capsys, "saturation", *SEAWATER, "--exclude", "anhydrite,polyhalite")
    names = {r["solid"] for r in doc["saturation"]}
    assert "anhydrite" not in names and "polyhalite" not in names and "gypsum" in names
    doc = run_json(capsys, "equilibrate", "--brine", "Na=6.5,Cl=6.5,Ca=0.05,SO4=0.05", "--units", "mol/kg",
                   "--exclude", "anhydrite")
    assert doc["exclude"] == ["anhydrite"] and "anhydrite" not in {r["solid"] for r in doc["solids"]}
    code, out, err = run(capsys, "evaporate", *SEAWATER, "--exclude", "kryptonite")
    assert code == EXIT_INPUT and "kryptonite" in err


def test_exclude_is_a_column_of_csv_exports(capsys):
    code, out, err = run(capsys, "evaporate", *SEAWATER, "--exclude", "anhydrite", "--format", "csv")
    assert code == EXIT_OK
    header, first = out.splitlines()[:2]
    assert "exclude" in header.split(",") and first.split(",")[header.split(",").index("exclude")] == "anhydrite"


def test_equilibrate_beyond_the_limit_needs_the_option(capsys):
    code, out, err = run(capsys, "equilibrate", "--brine", "Mg=10,Cl=20", "--units", "mol/kg")
    assert code == EXIT_INPUT and "ionic strength" in err and "--beyond-validity" in err
    code, out, err = run(capsys, "equilibrate", "--brine", "Mg=10,Cl=20", "--units", "mol/kg", "--beyond-validity",
                         "--format", "json")
    assert code == EXIT_OK and "above the model's validity limit" in err
