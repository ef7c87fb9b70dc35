"""Freezing points, boiling points and vapour pressures against published values.

Every value is a row of ``data/reference/colligative.csv`` (role=check: none of them fits a parameter; the file
header cites each source in full and says where it was read):

* freezing-point depressions of NaCl, KCl, MgCl2 and Na2SO4 solutions at 20 °C compositions, CRC Handbook 102nd
  ed., "Concentrative properties of aqueous solutions" (from Wolf 1966), read in a typed copy of the table;
* the freezing point of seawater, UNESCO 1983 (Fofonoff & Millard, Unesco Tech. Pap. Mar. Sci. 44, p. 29), the
  polynomial's coefficients read and evaluated at S = 35, and its printed worked example at S = 33;
* boiling-point elevations of concentrated seawater at 1 atm, Hakuta, Goto & Ishizaka 1974 (Bull. Soc. Sea Water
  Sci. Jpn. 28, 156), their correlation of their ebulliometer measurements, evaluated at 100 °C;
* boiling points of saturated NaCl and KCl solutions at 1 atm, CRC Handbook (from memory);
* vapour pressures of the saturated NaCl solution at 10–40 °C and of pure water, CRC Handbook 87th ed. p. 6-93
  (Apelblat & Korin 1998).

The seawater composition is the reference composition of tests/validation/test_mixtures.py (Millero et al. 2008,
from memory), scaled to the salinity.

Tolerances, fixed from what the model can claim, not from its results:

* freezing-point depressions and boiling-point elevations: 0.02 K + 1 % of the published value. A depression or
  an elevation is proportional to ln a_w = -M_w Σm φ, so 1 % of it is 1 % of the osmotic coefficient, the accuracy
  with which Pitzer parameters of this kind reproduce osmotic coefficients of single salts and of seawater at 25 °C
  (test_mixtures.py checks seawater's φ to 0.45 %); 0.02 K covers the table's rounding (0.01 K) and the largest
  deviation of the seawater correlation from its measurements (0.020 K). Below 0 °C every Pitzer parameter is
  extrapolated (valid from 0 °C, so each freezing point carries validity warnings) and above 100 °C most are: a miss
  beyond this tolerance is a finding about that extrapolation, kept as a strict xfail with its reason.
* saturated boiling points (from memory): the same rule on the elevation, with the saturated molality at the
  boiling point extrapolated linearly from the model's solubilities at 90 and 100 °C (the solubility API stops at
  the data's 100 °C).
* vapour pressure of the saturated NaCl solution: 1 % of the value. The two published water activities of this
  solution at 25 °C differ by 0.6 % (Apelblat & Korin's 2.401 kPa / 3.169 kPa = 0.758; Greenspan 1977, in
  data/reference/saturated_water_activity.csv, 0.753), and the model's result also carries its solubility error.
* vapour pressure of pure water: 0.1 % + 0.001 kPa (the table's last digit); a check of the IAPWS-IF97 path.

Findings on the misses are written beside them (``_MISSES``).
"""

import math
import warnings

import pandas as pd
import pytest

import phasekit as pk
from phasekit.chemistry.salts import parse_salt
from phasekit.data_files import data_dir
from phasekit.errors import ValidityWarning
from tests.validation.test_mixtures import SEAWATER, _balanced

ROWS = pd.read_csv(data_dir() / "reference" / "colligative.csv", comment="#", dtype=str, keep_default_na=False)
#: salt of the reference composition per kg of seawater at S = 35 (g), as in test_mixtures.py
SEAWATER_SALT_G = 35.165

_MISSES = {
    ("freezing_point_depression", "NaCl=5.111"): (
        "NaCl 23 mass %: the model freezes at -20.35 °C, the handbook at -20.67 °C (0.32 K, 1.5 % short; tolerance "
        "0.23 K). The Na-Cl β(0) temperature terms were fitted along the saturation curve at 10-90 °C (6.1-6.7 mol/kg, "
        "data/pitzer_binary.csv) with a constant ΔCp; extrapolated 20 K below their range at 5.1 mol/kg they leave the "
        "osmotic coefficient about 1.5 % low. The rows up to 20 mass % (-16.5 °C) pass."),
    ("freezing_point_depression", "MgCl2=0.438"): (
        "MgCl2 4 mass %: model depression 2.344 K against 2.30 K (1.9 % high; tolerance 0.043 K). The Mg-Cl β(0) "
        "temperature terms were fitted in this project to bischofite solubilities at 10-90 °C (5.6-7.2 mol/kg) and "
        "β(1)'s slope is recalled with low confidence (data/pitzer_binary.csv); extrapolated below 0 °C they raise "
        "the model's osmotic coefficient of a 0.55 mol/kg solution from 0.961 at 25 °C to 1.000 at -3 °C, too steep."),
    ("freezing_point_depression", "MgCl2=0.553"): (
        "MgCl2 5 mass %: model depression 3.08 K against 3.01 K (2.3 % high; tolerance 0.050 K); same cause as at "
        "4 mass %: Mg-Cl temperature terms fitted only near saturation above 10 °C, extrapolated to -3 °C at "
        "0.55 mol/kg."),
    ("boiling_point_elevation", "X=7.0"): (
        "seawater 7 mass %: model elevation 1.091 K against 1.123 K (2.9 % low; tolerance 0.031 K). Lumping the "
        "minor ions (Br into Cl, Sr into Ca, carbonate and borate dropped: 0.1 % of the ionic strength) explains "
        "at most a few tenths of a per cent; the rest is the model's osmotic coefficient of a seawater brine at "
        "100 °C and I ≈ 1.5 mol/kg, whose binary temperature terms (Mg-Cl, Na-SO4, Mg-SO4) were fitted along "
        "single-salt saturation curves only. The 3.5 mass % row passes; the cause is not isolated further."),
    ("boiling_point_elevation", "X=10.5"): (
        "seawater 10.5 mass %: model elevation 1.778 K against 1.817 K (2.1 % low; tolerance 0.038 K); same cause "
        "as at 7 mass %."),
}


def _rows(quantity):
    out = []
    for r in ROWS[ROWS["quantity"] == quantity].itertuples():
        marks = ()
        reason = _MISSES.get((r.quantity, r.composition))
        if reason:
            marks = (pytest.mark.xfail(strict=True, raises=AssertionError, reason=reason),)
        out.append(pytest.param(r, marks=marks, id=f"{r.system}:{r.composition or 'water'}:{r.temp_c}"))
    return out


def _brine(salt, molality):
    return pk.Brine({ion: n * molality for ion, n in parse_salt(salt).items()})


def _seawater(factor):
    return pk.Brine({ion: v * factor for ion, v in _balanced(SEAWATER).items()})


def _quiet(fn, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return fn(*args, **kwargs)


def _colligative_tolerance(published):
    return 0.02 + 0.01 * abs(published)


def test_the_reference_file_holds_checks_only():
    assert set(ROWS["role"]) == {"check"}
    assert set(ROWS["from_memory"]) <= {"yes", "no"}
    assert (ROWS["reference"] != "").all() and (ROWS["read_at"] != "").all()


@pytest.mark.validation
@pytest.mark.parametrize("row", _rows("freezing_point_depression"))
def test_freezing_point_depression_of_single_salts(row):
    salt, _, molality = row.composition.partition("=")
    res = _quiet(pk.freezing_point, _brine(salt, float(molality)))
    published = float(row.value)  # CRC102 (row.reference), read at row.read_at
    assert res.warnings, "a freezing point below 0 °C uses extrapolated Pitzer parameters and must say so"
    assert res.depression_c == pytest.approx(published, abs=_colligative_tolerance(published))


@pytest.mark.validation
@pytest.mark.parametrize("row", _rows("freezing_point"))
def test_freezing_point_of_seawater(row):
    salinity = float(row.composition.partition("=")[2])
    factor = salinity / 35.0  # practical salinity; the reference composition is that of S = 35
    res = _quiet(pk.freezing_point, _seawater(factor))
    published = float(row.value)  # UNESCO1983
    assert res.temp_c == pytest.approx(published, abs=_colligative_tolerance(published))


@pytest.mark.validation
@pytest.mark.parametrize("row", _rows("boiling_point_elevation"))
def test_boiling_point_elevation_of_concentrated_seawater(row):
    x = float(row.composition.partition("=")[2])  # salinity, mass % of the solution
    factor = (x / (100.0 - x)) / (SEAWATER_SALT_G / (1000.0 - SEAWATER_SALT_G))
    res = _quiet(pk.boiling_point, _seawater(factor), pressure_kpa=float(row.pressure_kpa))
    published = float(row.value)  # Hakuta1974 correlation at 100 °C
    assert res.elevation_c == pytest.approx(published, abs=_colligative_tolerance(published))


def _saturated_boiling_point(salt, pressure_kpa):
    """Fixed point T = boiling point of the solution saturated at T (solubility extrapolated from 90-100 °C)."""
    m90, m100 = (_quiet(pk.solubility, salt, temp_c=t).molality for t in (90.0, 100.0))
    t = 100.0
    for _ in range(50):
        res = _quiet(pk.boiling_point, _brine(salt, m100 + (m100 - m90) / 10.0 * (t - 100.0)), pressure_kpa)
        if abs(res.temp_c - t) < 1e-5:
            return res
        t = res.temp_c
    raise AssertionError(f"no fixed point for the saturated boiling point of {salt}")


@pytest.mark.validation
@pytest.mark.parametrize("row", _rows("boiling_point"))
def test_boiling_point_of_saturated_solutions(row):
    salt = row.composition.partition("=")[0]
    res = _saturated_boiling_point(salt, float(row.pressure_kpa))
    published = float(row.value)  # CRCbp (from memory)
    assert res.warnings, "above 100 °C the Pitzer parameters are extrapolated and the result must say so"
    assert res.temp_c == pytest.approx(published, abs=_colligative_tolerance(published - 100.0))


@pytest.mark.validation
@pytest.mark.parametrize("row", _rows("vapour_pressure"))
def test_vapour_pressure(row, model):
    t = float(row.temp_c)
    published = float(row.value)  # CRC87vp
    if row.system == "H2O":
        res = model.vapour_pressure(pk.Brine({"Na": 0.0, "Cl": 0.0}), t)
        assert res.pressure_kpa == pytest.approx(published, rel=1e-3, abs=1e-3)
        return
    salt = row.composition.partition("=")[0]
    m = _quiet(pk.solubility, salt, temp_c=t).molality
    res = model.vapour_pressure(_brine(salt, m), t)
    assert res.pressure_kpa == pytest.approx(res.water_activity * res.pure_water_kpa, rel=1e-12)
    assert res.pressure_kpa == pytest.approx(published, rel=0.01)


@pytest.mark.validation
def test_pure_water_boils_at_its_saturation_temperature():
    # pure water boils at 99.974 °C at 101.325 kPa on the ITS-90 scale (IAPWS-IF97; from memory)
    res = pk.boiling_point(_brine("NaCl", 1e-6))
    assert res.temp_c == pytest.approx(99.974, abs=0.002)
    assert res.elevation_c == pytest.approx(0.0, abs=1e-3)
    assert math.isfinite(res.water_activity)
