import math
import warnings

import numpy as np
import pandas as pd
import pytest

import phasekit as pk
from phasekit.errors import InputError, RangeError, ValidityWarning

SEA = {"Na": 0.486, "K": 0.0106, "Mg": 0.0547, "Ca": 0.0107, "SO4": 0.0293}
SEA["Cl"] = SEA["Na"] + SEA["K"] + 2 * SEA["Mg"] + 2 * SEA["Ca"] - 2 * SEA["SO4"]


def test_mapping_gives_scalars_dataframe_gives_arrays(model):
    one = model.activity(SEA, 25)
    assert isinstance(one.osmotic, float) and isinstance(one.gamma["Na"], float)
    df = pd.DataFrame([SEA, {k: 2 * v for k, v in SEA.items()}])
    many = model.activity(df, 25)
    assert many.osmotic.shape == (2,)
    assert many.gamma["Na"][0] == pytest.approx(one.gamma["Na"], rel=1e-13)
    assert many.water_activity[1] < many.water_activity[0]


def test_charged_spellings_and_order_do_not_matter(model):
    a = model.activity({"Mg2+": 1.0, "Cl-": 2.0}, 25)
    b = model.activity({"Cl": 2.0, "Mg": 1.0}, 25)
    assert a.ln_gamma == b.ln_gamma


def test_temperature_array_per_row(model):
    df = pd.DataFrame([{"Na": 1.0, "Cl": 1.0}] * 3)
    r = model.activity(df, np.array([0.0, 25.0, 80.0]))
    r25 = model.activity({"Na": 1.0, "Cl": 1.0}, 25.0)
    assert r.osmotic[1] == pytest.approx(r25.osmotic, rel=1e-13)
    assert len(set(np.round(r.osmotic, 8))) == 3


def test_pure_water_and_dilute_limit(model):
    r = model.activity({"Na": 0.0, "Cl": 0.0}, 25)
    assert r.osmotic == 1.0 and r.water_activity == 1.0 and r.gamma["Na"] == 1.0
    # Debye–Hückel limiting law: ln γ± = -A_phi·3·sqrt(I)·... -> -(3 A_phi) sqrt(m) for 1:1 at m -> 0
    m = 1e-6
    r = model.activity({"Na": m, "Cl": m}, 25)
    aphi = pk.default_model().parameters(25)["aphi"]
    assert math.log(r.mean_gamma({"Na": 1, "Cl": 1})) == pytest.approx(-3 * aphi * math.sqrt(m), rel=2e-3)


@pytest.mark.parametrize(
    "comp,field",
    [
        ({"Na": -1.0, "Cl": -1.0}, "Na"),
        ({"Na": float("nan"), "Cl": 1.0}, "Na"),
        ({"Na": float("inf"), "Cl": 1.0}, "Na"),
        ({"Na": 1.0, "Xy": 1.0}, "species"),
        ({"Na": "lots", "Cl": 1.0}, "Na"),
        ({}, "molalities"),
    ],
)
def test_bad_input_names_field_and_value(model, comp, field):
    with pytest.raises(InputError) as err:
        model.activity(comp, 25)
    assert field in str(err.value)


def test_unbalanced_composition_is_reported_not_fixed(model):
    with pytest.raises(InputError) as err:
        model.activity({"Na": 1.0, "Cl": 0.9}, 25)
    assert "charge imbalance" in str(err.value) and "+0.1" in str(err.value)
    # asked for explicitly, the formal value is computed
    r = model.activity({"Na": 1.0, "Cl": 0.9}, 25, check_charge=False)
    assert np.isfinite(r.osmotic)


def test_dataframe_bad_cell_names_row_and_column(model):
    df = pd.DataFrame({"Na": [1.0, "x"], "Cl": [1.0, 1.0]}, index=["s1", "s2"])
    with pytest.raises(InputError) as err:
        model.activity(df, 25)
    assert "'Na'" in str(err.value) and "s2" in str(err.value)
    with pytest.raises(InputError):
        model.activity(pd.DataFrame(), 25)


@pytest.mark.parametrize("t", [-5.0, 151.0, float("nan")])
def test_temperature_outside_range_is_an_error(model, t):
    with pytest.raises(RangeError) as err:
        model.activity({"Na": 1.0, "Cl": 1.0}, t)
    assert "temp_c" in str(err.value)


def test_outside_validity_gives_visible_warning(model):
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        r = model.activity({"Na": 1.0, "Cl": 1.0}, 120.0)
    assert any("Na-Cl" in w for w in r.warnings)
    assert any(issubclass(w.category, ValidityWarning) for w in rec)
    r = model.activity({"Mg": 8.0, "Cl": 16.0}, 25.0)
    assert any("ionic strength" in w for w in r.warnings)
    assert model.activity({"Na": 1.0, "Cl": 1.0}, 25.0).warnings == []
