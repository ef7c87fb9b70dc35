"""The example overlay fitted to a published data set: halite's ln K(T) from the NaCl solubility
correlation of Potter, Babcock & Brown 1977, J. Res. U.S. Geol. Survey 5, 389 (its equation read in the abstract, USGS publications page),
made by scripts/make_example_overlay.py (data/overlays/halite_pbb1977.toml)."""

import warnings

import pytest

import phasekit as pk
from phasekit.calibration.measurements import binary_solubility_table
from phasekit.data_files import data_dir, read_csv
from phasekit.fitting import fit_ln_k
from phasekit.overlay import read_overlay

OVERLAY = data_dir() / "overlays" / "halite_pbb1977.toml"


def _pbb(t):
    return 26.218 + 0.0072 * t + 0.000106 * t * t  # mass-% NaCl, Potter, Babcock & Brown 1977


@pytest.fixture(scope="module")
def overlaid():
    return pk.load_model(overlays=[OVERLAY])


def _sol(salt, t, model):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.solubility(salt, temp_c=t, model=model).mass_percent


@pytest.mark.validation
@pytest.mark.parametrize("temp_c", [5.0, 25.0, 45.0, 65.0, 85.0, 95.0])
def test_overlay_reproduces_the_correlation_between_its_points(overlaid, temp_c):
    # the fit rows are every 10 degC from 0; these temperatures lie between them
    assert _sol("NaCl", temp_c, overlaid) == pytest.approx(_pbb(temp_c), abs=0.1)


@pytest.mark.validation
def test_overlay_agrees_with_the_handbook_check_rows(overlaid):
    ref = binary_solubility_table()
    rows = ref[(ref["salt"] == "NaCl") & (ref["role"] == "check") & ref["source"].str.startswith("CRC98")]
    for _, r in rows.iterrows():  # CRC Handbook 98th ed. (read), independent of the 1977 correlation
        assert _sol("NaCl", float(r["temp_c"]), overlaid) == pytest.approx(float(r["mass_percent"]), abs=0.35)


@pytest.mark.validation
def test_stored_overlay_is_reproduced_by_refitting_its_table():
    data = read_csv("reference/halite_solubility_pbb1977.csv")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        fit = fit_ln_k("halite", data, terms=("a0", "a3", "a4"))
    stored = read_overlay(OVERLAY)["solid"][0]
    for k in ("a0", "a3", "a4"):
        assert fit.parameters[k] == pytest.approx(stored[k], rel=1e-6)
        assert stored["stderr"][k] > 0


@pytest.mark.validation
def test_implied_enthalpy_of_solution_is_near_nbs(overlaid):
    # ln K = a0 + a3 (1/T - 1/Tr) + a4 ln(T/Tr): dH(Tr) = -R (a3 - a4 Tr); NBS82 dH_sol(NaCl) = 3.87 kJ/mol
    # (data/reference/thermochemistry.csv, from memory), which the overlay's fit never saw
    s = read_overlay(OVERLAY)["solid"][0]
    dh = -8.314462618e-3 * (s["a3"] - s["a4"] * 298.15)
    assert dh == pytest.approx(3.87, abs=0.5)


@pytest.mark.validation
def test_overlay_changes_only_halite(overlaid, model):
    assert "halite after Potter" in overlaid.label
    assert _sol("KCl", 60.0, overlaid) == pytest.approx(_sol("KCl", 60.0, model), rel=1e-12)
    assert _sol("NaCl", 60.0, overlaid) != _sol("NaCl", 60.0, model)
    assert model.label == "embedded database"
