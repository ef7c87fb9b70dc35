"""Models with changed parameters (fits, Monte Carlo samples) are copies with changed coefficient
arrays; they must be the models a rebuilt database gives, number for number (issue 20)."""

import pickle
import warnings

import numpy as np
import pytest

import phasekit as pk
from phasekit import fitting
from phasekit.errors import InputError, ValidityWarning
from phasekit.model import Model
from phasekit.thermo.database import PendingDatabase
from phasekit.uncertainty import monte_carlo, onset_predictor, perturbed_model

SPECS = [("theta", "Na", "K"), ("psi", "Na", "K", "Cl"), ("beta0", "Na", "Cl"), ("lnk", "halite", "a0"),
         ("beta1", "Mg", "SO4", "a1"), ("psi", "Cl", "SO4", "Mg"), ("lnk", "sylvite", "cp"),
         ("theta", "Cl", "SO4", "a1")]
#: the invented intake of the demo salt works, mg/kg
INTAKE = {"Na": 10780.0, "K": 399.0, "Mg": 1290.0, "Ca": 412.0, "Cl": 19350.0, "SO4": 2710.0}


def _rebuilt(model, specs, values):
    """The model as built before: edited tables through the database checks."""
    return Model(model.db.with_tables(**fitting._edited_tables(model.db, specs, values)))


def _same_model(a, b):
    for name in ("_co_theta_c", "_co_theta_a", "_co_psi_c", "_co_psi_a", "_binary_range", "_binary_mmax",
                 "_binary_has"):
        assert np.array_equal(getattr(a, name), getattr(b, name)), name
    for k in b._co_binary:
        assert np.array_equal(a._co_binary[k], b._co_binary[k]), k
    assert np.array_equal(a.solids.coeffs, b.solids.coeffs)
    assert a.solids.solids == b.solids.solids
    assert a._mixing_ranges == b._mixing_ranges
    for t in ("binary", "mixing", "solids"):
        assert getattr(a.db, t).equals(getattr(b.db, t)), t


def test_with_parameters_equals_a_rebuilt_database(model):
    values = [fitting.parameter_value(model, s) if s[-1] != "cp" else 0.0 for s in SPECS]
    values = [v + d for v, d in zip(values, [0.003, -0.001, 0.002, 0.01, 0.05, 0.0007, 3.0, 1e-4])]
    fast = fitting.with_parameters(model, SPECS, values)
    assert isinstance(fast.db, PendingDatabase)
    slow = _rebuilt(model, SPECS, values)
    brine = pk.Brine.from_analysis(INTAKE, units="mg/kg").balance(on="Cl")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for t in (5.0, 25.0, 70.0):
            assert fast.saturation(brine, t).equals(slow.saturation(brine, t))
            ef, es = fast.equilibrate(brine.scaled(8.0), t), slow.equilibrate(brine.scaled(8.0), t)
            assert ef.solids  # past saturation: the solids and the liquid are compared
            assert ef.solids == es.solids and ef.liquid.molalities == es.liquid.molalities
    _same_model(fast, slow)  # tables last: reading them writes the pending tables
    # the values really moved, and the model given is unchanged
    assert fast.solids["halite"].coeffs[0] == model.solids["halite"].coeffs[0] + 0.01
    assert not np.array_equal(fast._co_theta_c, model._co_theta_c)
    _same_model(model, pk.default_model())


def test_a_missing_mixing_row_is_added_as_before(model):
    absent = ("psi", "Li", "Ca", "NO3")
    assert fitting.parameter_value(model, absent + ("a0",)) == 0.0
    fast = fitting.with_parameters(model, [absent], [0.01])
    _same_model(fast, _rebuilt(model, [absent], [0.01]))


def test_bad_specs_are_refused_as_before(model):
    for spec in [("theta", "Na", "Xx"), ("beta0", "Na", "Cl", "a9"), ("lnk", "nosuchsolid")]:
        with pytest.raises(InputError):
            fitting.with_parameters(model, [spec], [0.0])
    with pytest.raises(InputError):
        perturbed_model(model, [("solid", "nosuchsolid", "a0")], [0.0])


def test_perturbed_model_pickles_and_keeps_overlays(model, test_overlays):
    over = model.with_overlays(test_overlays["plus"])
    assert over.overlays
    new = perturbed_model(over, [("solid", "halite", "a0"), ("solid", "halite", "a0"), ("theta", "Na", "K")],
                          [0.01, 0.02, 0.001])
    assert new.overlays == over.overlays
    assert new.solids["halite"].coeffs[0] == over.solids["halite"].coeffs[0] + 0.01 + 0.02
    back = pickle.loads(pickle.dumps(new))
    _same_model(back, new)


def test_monte_carlo_samples_are_those_of_rebuilt_models(model):
    brine = pk.Brine.from_analysis(INTAKE, units="mg/kg").balance(on="Cl")
    params = [(("theta", "Na", "K"), 0.003), (("solid", "halite", "a0"), 0.01)]
    res = monte_carlo(onset_predictor(brine, 25.0), params, n=6, seed=3, model=model)
    predict = onset_predictor(brine, 25.0)
    for _, row in res.samples.iterrows():
        d_theta, d_halite = row["theta/Na/K"], row["solid/halite/a0"]
        slow = _rebuilt(model, [("theta", "Na", "K"), ("lnk", "halite", "a0")],
                        [fitting.parameter_value(model, ("theta", "Na", "K", "a0")) + d_theta,
                         model.solids["halite"].coeffs[0] + d_halite])
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            assert predict(slow) == row["prediction"]
