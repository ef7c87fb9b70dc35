"""phasekit.fitting: recovery of a known perturbation, uncertainty, bad input.

The synthetic data are solubilities computed by the model itself with one parameter
perturbed, plus Gaussian noise of 0.2 % in ln m drawn with a fixed seed (about the scatter
of handbook solubilities). A fit started from the unperturbed value must recover the
perturbed value within three of its reported standard errors (a 99.7 % interval, so that
a correct implementation fails on no reasonable seed, while a wrong covariance or a fit
that does not move does).
"""

import warnings

import numpy as np
import pandas as pd
import pytest

import phasekit as pk
from phasekit.errors import InputError, ValidityWarning
from phasekit.fitting import fit_ln_k, fit_parameters, with_parameters


@pytest.fixture(autouse=True)
def _quiet_validity():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        yield


def _synthetic(model, salt, temps, noise, seed=20240611):
    rng = np.random.default_rng(seed)
    rows = []
    for t in temps:
        r = pk.solubility(salt, t, model=model)
        m = r.molality * np.exp(rng.normal(0.0, noise))
        rows.append({"salt": salt, "temp_c": t, "molality": m, "solids": r.solid})
    return pd.DataFrame(rows)


@pytest.mark.parametrize("residual", ["ln_m", "solubility"])
def test_recovers_a_known_perturbation(model, residual):
    spec = ("beta0", "K", "SO4", "a1")
    base = float(model.db.binary.query("cation == 'K' and anion == 'SO4' and parameter == 'beta0'")["a1"].iloc[0])
    true = base + 4e-4
    truth = with_parameters(model, [spec], [true])
    data = _synthetic(truth, "K2SO4", np.arange(0.0, 101.0, 10.0), noise=0.002)
    res = fit_parameters([spec, ("lnk", "arcanite", "a0")], data, model=model, residual=residual)
    name = "/".join(spec)
    se = res.stderr[name]
    assert 0 < se < 2e-4  # informative: the perturbation is well resolved
    assert abs(res.parameters[name] - true) < 3 * se
    assert abs(res.parameters[name] - base) > 3 * se  # it did move away from the start
    assert res.dof == len(data) - 2 and res.n_points == len(data)
    assert res.rms == pytest.approx(np.sqrt(np.mean(res.residuals**2)))
    # the returned model carries the fitted value
    got = res.model.db.binary.query("cation == 'K' and anion == 'SO4' and parameter == 'beta0'")["a1"].iloc[0]
    assert got == pytest.approx(res.parameters[name])


def test_fit_ln_k_recovers_coefficients(model):
    # data generated with a known ln K(T) of halite: a0 shifted by 0.01, a3 by 50
    k = model.solids.index["halite"]
    co = model.solids.coeffs[k].copy()
    truth = with_parameters(model, [("lnk", "halite", "a0"), ("lnk", "halite", "a3")], [co[0] + 0.01, co[3] + 50.0])
    data = _synthetic(truth, "NaCl", np.arange(0.0, 101.0, 10.0), noise=0.0)
    res = fit_ln_k("halite", data, terms=("a0", "a1", "a2", "a3", "a4"), model=model)
    t = np.arange(0.0, 101.0, 5.0) + 273.15
    from phasekit.thermo import tempfn

    fitted = tempfn.basis(t) @ np.array([res.parameters[c] for c in tempfn.COEFFS])
    expected = tempfn.basis(t) @ truth.solids.coeffs[k]
    assert np.max(np.abs(fitted - expected)) < 1e-6


def test_too_few_points(model):
    data = pd.DataFrame({"salt": ["KCl"], "temp_c": [25.0], "mass_percent": [26.2], "solids": ["sylvite"]})
    with pytest.raises(InputError) as e:
        fit_parameters([("beta0", "K", "Cl", "a1"), ("lnk", "sylvite", "a0")], data, model=model)
    assert e.value.field == "data" and "at least 2" in str(e.value)
    with pytest.raises(InputError) as e:
        fit_ln_k("sylvite", data, terms=("a0", "a3"), model=model)
    assert e.value.field == "data"


def test_bad_specs_and_options(model):
    data = pd.DataFrame({"salt": ["KCl", "KCl"], "temp_c": [0.0, 50.0], "mass_percent": [21.7, 30.0],
                         "solids": ["sylvite", "sylvite"]})
    with pytest.raises(InputError) as e:
        fit_parameters([("gamma", "K", "Cl")], data, model=model)
    assert e.value.field == "parameter"
    with pytest.raises(InputError):
        fit_parameters([("beta0", "K", "Cl", "a1")], data, model=model, residual="chi2")
    with pytest.raises(InputError):
        fit_parameters([("lnk", "unobtainium", "a0")], data, model=model)
    with pytest.raises(InputError):
        fit_parameters([], data, model=model)
    with pytest.raises(InputError):
        fit_parameters([("beta0", "K", "Cl", "a1")], data.drop(columns="solids"), model=model)


def test_with_parameters_leaves_the_model_alone(model):
    before = model.db.binary.copy()
    new = with_parameters(model, [("beta0", "Na", "Cl", "a2"), ("theta", "Na", "Li")], [1e-6, 0.01])
    pd.testing.assert_frame_equal(model.db.binary, before)
    assert new.db.binary.query("cation == 'Na' and anion == 'Cl' and parameter == 'beta0'")["a2"].iloc[0] == 1e-6
    th = new.db.mixing.query("kind == 'theta' and ((species1 == 'Na' and species2 == 'Li') or "
                             "(species1 == 'Li' and species2 == 'Na'))")
    assert len(th) == 1 and th["a0"].iloc[0] == 0.01
