"""Invariants of the solid–liquid equilibrium solver on random brines of the
Na–K–Mg–Ca–Cl–SO4–H2O system at 0–100 °C (deterministic seeds)."""

import warnings

import numpy as np
import pytest

from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.saturation import SI_TOLERANCE
from phasekit.equilibrium.solver import SI_ENTER
from phasekit.errors import InputError


def random_brine(rng):
    """A charge-balanced brine from dilute to far beyond saturation (seawater-like ratios, perturbed)."""
    cf = 10 ** rng.uniform(-1, 1.8)
    comp = {"Na": rng.uniform(0, 1) * 0.5, "K": rng.uniform(0, 1) * 0.1, "Mg": rng.uniform(0, 1) * 0.1,
            "Ca": rng.uniform(0, 1) * 0.02, "SO4": rng.uniform(0, 1) * 0.06}
    comp = {k: v * cf for k, v in comp.items()}
    pos = comp["Na"] + comp["K"] + 2 * comp["Mg"] + 2 * comp["Ca"]
    if 2 * comp["SO4"] > pos:
        comp["SO4"] = pos / 2 * rng.uniform(0, 1)
    comp["Cl"] = pos - 2 * comp["SO4"]
    return comp, rng.uniform(0, 100)


CASES = [random_brine(np.random.default_rng(seed)) for seed in range(240)]


def _liquid(r):
    return r.liquid.molalities if hasattr(r.liquid, "molalities") else r.liquid


@pytest.mark.parametrize("comp,temp_c", CASES)
def test_invariants_random_brines(model, comp, temp_c):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = model.equilibrate(comp, temp_c)
    liq = _liquid(r)
    # mass balance of every species to 1e-10 relative (per kg of initial water)
    for s, total in comp.items():
        in_solids = sum(n * model.solid_stoichiometry(k).get(s, 0) for k, n in r.solids.items())
        assert r.water_kg * liq.get(s, 0.0) + in_solids == pytest.approx(total, rel=1e-10)
    # water balance: liquid + hydrate water = 1 kg
    hyd = sum(n * model.solid_stoichiometry(k).get("H2O", 0) for k, n in r.solids.items()) * M_WATER
    assert r.water_kg + hyd == pytest.approx(1.0, rel=1e-10)
    # present solids at SI = 0, absent ones not supersaturated, no negative amounts
    sat = r.saturation["saturation_index"]
    for k, n in r.solids.items():
        assert n > 0
        assert abs(sat[k]) < 1e-8
    absent = [k for k in sat.index if k not in r.solids]
    assert (sat[absent] <= SI_ENTER).all()
    # phase rule at fixed T and P: solids <= components - 1 (species present, + water, - electroneutrality)
    assert len(r.solids) <= len([v for v in comp.values() if v > 0]) - 1
    assert r.converged["mass_balance_residual"] < 1e-10


@pytest.mark.parametrize("comp,temp_c", CASES[:40])
def test_same_answer_from_another_start(model, comp, temp_c):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        a = model.equilibrate(comp, temp_c)
        start = ["halite", "gypsum", "sylvite"] if not a.solids else list(reversed(list(a.solids)))[:1] + ["anhydrite"]
        b = model.equilibrate(comp, temp_c, initial_solids=start)
        c = model.equilibrate(comp, temp_c)
    assert set(a.solids) == set(b.solids)
    for k in a.solids:
        assert b.solids[k] == pytest.approx(a.solids[k], rel=1e-8, abs=1e-12)
    assert a.solids == c.solids  # deterministic: identical numbers on a repeat


def test_dilute_brine_dissolves_everything(model):
    r = model.equilibrate({"Na": 0.1, "Cl": 0.1}, 25)
    assert r.solids == {} and r.water_kg == 1.0
    assert _liquid(r)["Na"] == pytest.approx(0.1, rel=1e-14)


def test_added_solid_partly_dissolves(model):
    """Adding 8 mol halite to 1 kg water: what dissolves is the solubility, the rest stays."""
    r = model.equilibrate({"Na": 1e-9, "Cl": 1e-9}, 25, add_solids={"halite": 8.0})
    sol = model.solids  # noqa: F841
    import phasekit as pk

    s = pk.solubility("NaCl", 25).molality
    assert _liquid(r)["Na"] == pytest.approx(s, rel=1e-6)
    assert r.solids["halite"] == pytest.approx(8.0 - s, rel=1e-6)


def test_incongruent_carnallite(model):
    """Carnallite dissolves incongruently in water at 25 °C: sylvite is left (common practice, no source)."""
    r = model.equilibrate({"K": 1e-9, "Cl": 1e-9}, 25, add_solids={"carnallite": 3.0})
    assert "sylvite" in r.solids and "carnallite" not in r.solids


@pytest.mark.parametrize("bad,field", [({"Na": -1, "Cl": -1}, "Na"), ({"Na": 1, "Xx": 1}, "species"),
                                       ({"Na": 1.0, "Cl": 0.5}, "charge")])
def test_bad_input(model, bad, field):
    with pytest.raises(InputError) as err:
        model.equilibrate(bad, 25)
    assert field in str(err.value)


def test_bad_added_solid(model):
    with pytest.raises(InputError):
        model.equilibrate({"Na": 1, "Cl": 1}, 25, add_solids={"unobtainium": 1})
    with pytest.raises(InputError):
        model.equilibrate({"Na": 1, "Cl": 1}, 25, add_solids={"halite": -1})


def test_saturation_table(model):
    sat = model.saturation({"Na": 6.5, "Cl": 6.5}, 25)
    assert sat.loc["halite", "state"] == "supersaturated"
    # the amount that must crystallize brings the brine exactly to halite saturation
    xi = sat.loc["halite", "dissolvable_mol_per_kg_water"]
    assert xi < 0
    again = model.saturation({"Na": 6.5 + xi, "Cl": 6.5 + xi}, 25)
    assert abs(again.loc["halite", "saturation_index"]) < 1e-9
    assert again.loc["halite", "state"] == "saturated"
    assert SI_TOLERANCE > 0


def test_non_convergence_raises_with_state(model):
    """A solver that cannot finish raises ConvergenceError carrying its state, never an answer."""
    import numpy as np

    from phasekit.equilibrium.solver import solve
    from phasekit.errors import ConvergenceError

    b = np.zeros(len(model.species))
    for s, v in {"Na": 8.0, "K": 5.0, "Cl": 13.0}.items():
        b[model.index[s]] = v
    with pytest.raises(ConvergenceError) as err:
        solve(model, b, 1.0, 25.0, max_changes=0)
    assert err.value.state["active"]


def test_too_little_water_for_a_liquid_is_a_clear_error(model):
    """6 mol Na2SO4 per kg water at 20 °C: mirabilite (10 H2O) would need 1.08 kg water — no liquid."""
    from phasekit.errors import ConvergenceError

    with pytest.raises(ConvergenceError) as err:
        model.equilibrate({"Na": 12.0, "SO4": 6.0}, 20.0)
    assert "no liquid" in str(err.value) and "mirabilite" in str(err.value)
