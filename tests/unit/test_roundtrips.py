"""Round trips: every export read back gives the same numbers (CLI CSV/JSON/XLSX; diagram files)."""

import json
import warnings

import numpy as np
import pandas as pd
import pytest

import phasekit as pk
from phasekit.cli.main import main

BRINE = "Na=2.2,K=0.05,Mg=0.25,Ca=0.05,Cl=2.65,SO4=0.1"


@pytest.fixture(scope="module")
def path():
    comp = {"Na": 2.2, "K": 0.05, "Mg": 0.25, "Ca": 0.05, "Cl": 2.65, "SO4": 0.1}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.evaporate(comp, 25.0, mode="fractional", concentration_factor=8)


def _run(tmp_path, fmt):
    out = tmp_path / f"evap.{fmt}"
    args = ["evaporate", "--brine", BRINE, "--units", "mol/kg", "--temp", "25", "--cf", "8",
            "--balance-on", "none", "--format", fmt, "--output", str(out)]
    assert main(args) == 0
    return out


def test_csv_roundtrip(tmp_path, path):
    got = pd.read_csv(_run(tmp_path, "csv"))
    for col in ("concentration_factor", "water_removed_fraction", "Na", "Mg", "water_activity"):
        np.testing.assert_allclose(got[col].to_numpy(), path.steps[col].to_numpy(), rtol=1e-12)


def test_json_roundtrip(tmp_path, path):
    doc = json.loads(_run(tmp_path, "json").read_text())
    steps = pd.DataFrame(doc["steps"])
    np.testing.assert_allclose(steps["Cl"].to_numpy(), path.steps["Cl"].to_numpy(), rtol=1e-15)
    ev = pd.DataFrame(doc["events"])
    assert list(ev["solid"]) == list(path.events["solid"])
    np.testing.assert_allclose(ev["concentration_factor"], path.events["concentration_factor"], rtol=1e-15)


def test_xlsx_roundtrip(tmp_path, path):
    out = _run(tmp_path, "xlsx")
    steps = pd.read_excel(out, sheet_name="steps")
    np.testing.assert_allclose(steps["Ca"].to_numpy(), path.steps["Ca"].to_numpy(), rtol=1e-15)


def test_diagram_file_roundtrip(tmp_path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        d = pk.isotherm(["NaCl", "KCl"], 25.0)
    text = d.to_json()
    back = pk.read_diagram(text)
    a = d.invariant_points.reset_index(drop=True)
    b = back.invariant_points.reset_index(drop=True)
    np.testing.assert_allclose(a["NaCl_molality"], b["NaCl_molality"], rtol=1e-15)
