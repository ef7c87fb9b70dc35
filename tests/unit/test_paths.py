"""Process paths: mass balance at every step, mode agreement, cooling yields, bad input."""

import warnings

import numpy as np
import pytest

import phasekit as pk
from phasekit.chemistry.species import M_WATER
from phasekit.errors import InputError, RangeError

SEAWATER = {"Mg": 0.0547421, "Ca": 0.0106568, "K": 0.0105797, "Cl": 0.5657647, "SO4": 0.0292643}
SEAWATER["Na"] = SEAWATER["Cl"] + 2 * SEAWATER["SO4"] - SEAWATER["K"] - 2 * SEAWATER["Mg"] - 2 * SEAWATER["Ca"]


@pytest.fixture(scope="module")
def paths():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return {mode: pk.evaporate(SEAWATER, 25, mode=mode) for mode in ("fractional", "equilibrium")}


def _check_balance(model, res, initial):
    steps, prec = res.steps, res.precipitated
    for i in range(len(steps)):
        w = steps["liquid_water_kg"].iloc[i]
        for s, total in initial.items():
            in_solids = sum(prec[c].iloc[i] * model.solid_stoichiometry(c).get(s, 0) for c in prec.columns)
            assert w * steps[s].iloc[i] + in_solids == pytest.approx(total, rel=1e-10)
        hyd = sum(prec[c].iloc[i] * model.solid_stoichiometry(c).get("H2O", 0) for c in prec.columns) * M_WATER
        assert w + hyd + steps["water_removed_fraction"].iloc[i] == pytest.approx(1.0, rel=1e-10)


@pytest.mark.parametrize("mode", ["fractional", "equilibrium"])
def test_mass_balance_every_step(model, paths, mode):
    _check_balance(model, paths[mode], SEAWATER)


def test_cooling_path_mass_balance(model):
    brine = {"Na": 3.0, "K": 2.0, "Cl": 5.0}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = pk.cool(brine, 90, 15)
    _check_balance(model, res, brine)


def test_modes_agree_before_second_solid_and_differ_after(paths):
    fr, eq = paths["fractional"], paths["equilibrium"]
    ev_f, ev_e = fr.events, eq.events
    assert ev_f.iloc[0]["solid"] == ev_e.iloc[0]["solid"]
    assert ev_f.iloc[0]["concentration_factor"] == pytest.approx(ev_e.iloc[0]["concentration_factor"], rel=1e-9)
    second = ev_f.iloc[1]["water_removed_fraction"]
    # before the second event the liquid paths are the same
    for res_a, res_b in ((fr, eq),):
        a = res_a.steps[res_a.steps["water_removed_fraction"] < second]
        b = res_b.steps[res_b.steps["water_removed_fraction"] < second]
        common = np.intersect1d(a["water_removed_fraction"].round(12), b["water_removed_fraction"].round(12))
        assert len(common) > 3
        for r in common:
            ra = a[a["water_removed_fraction"].round(12) == r].iloc[0]
            rb = b[b["water_removed_fraction"].round(12) == r].iloc[0]
            assert ra["Mg"] == pytest.approx(rb["Mg"], rel=1e-8)
            assert ra["Ca"] == pytest.approx(rb["Ca"], rel=1e-8)
    # afterwards: in equilibrium mode a reaction solid redissolves completely (its amount returns
    # to zero), while the fractional harvest of the same solid stays
    gone = ev_e[ev_e["event"] == "disappears"]["solid"].tolist()
    assert gone
    for s in gone:
        assert eq.precipitated[s].iloc[-1] == pytest.approx(0.0, abs=1e-12)
        if s in fr.precipitated:
            assert fr.precipitated[s].iloc[-1] > 0


def test_events_land_on_saturation(model, paths):
    """Each appearance is located where the solid's SI is 0 (root-finding, not a grid)."""
    res = paths["fractional"]
    for _, ev in res.events[res.events["event"] == "appears"].iterrows():
        comp = {s: ev[s] for s in SEAWATER if ev[s] > 0}
        si = model.saturation(comp, 25.0, amounts=False)["saturation_index"]
        assert abs(si[ev["solid"]]) < 1e-7


def test_single_salt_cooling_yield_is_difference_of_solubilities():
    s60 = pk.solubility("KCl", 60).molality
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = pk.cool({"K": s60, "Cl": s60}, 60, 20)
    s20 = pk.solubility("KCl", 20).molality
    assert res.precipitated["sylvite"].iloc[-1] == pytest.approx(s60 - s20, rel=1e-8)
    assert res.first_solid["solid"] == "sylvite" and res.first_solid["temp_c"] == pytest.approx(60.0)


def test_two_salt_cooling_hand_worked():
    """The NaCl–KCl eutonic brine of 90 °C cooled to 20 °C at fixed water.

    Hand-worked from the NaCl–KCl–H2O diagram (common practice, no source): along the eutonic
    line NaCl's solubility rises on cooling while KCl's falls steeply, so the brine leaves the
    eutonic at once: sylvite crystallizes, halite does not (any trace redissolves), the Na
    molality stays that of the 90 °C brine, and the brine ends on the sylvite curve at 20 °C.
    So: yield of KCl = K(90 °C eutonic) - K(sylvite-saturated at 20 °C with that Na), and the
    path's end state is the equilibrium of the same total composition at 20 °C.
    """
    model = pk.default_model()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        e90 = model.equilibrate({"Na": 8, "K": 5, "Cl": 13}, 90)
        liq90 = dict(e90.liquid.molalities)
        res = pk.cool(liq90, 90, 20)
        direct = model.equilibrate(liq90, 20)
    last = res.precipitated.iloc[-1]
    assert last.get("halite", 0.0) == pytest.approx(0.0, abs=1e-12)
    assert set(direct.solids) == {"sylvite"}
    k20 = dict(direct.liquid.molalities)["K"]
    assert res.steps["Na"].iloc[-1] == pytest.approx(liq90["Na"], rel=1e-10)
    assert last["sylvite"] == pytest.approx(liq90["K"] - k20, rel=1e-8)
    assert last["sylvite"] == pytest.approx(direct.solids["sylvite"], rel=1e-8)


def test_mix_and_dissolve():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        # mixing a brine with itself changes nothing
        r = pk.mix({"Na": 2.0, "Cl": 2.0}, {"Na": 2.0, "Cl": 2.0}, 0.3, 25)
        liq = r.liquid.molalities if hasattr(r.liquid, "molalities") else r.liquid
        assert liq["Na"] == pytest.approx(2.0, rel=1e-12)
        # hot leach: in 90 °C water all the KCl of a small ore charge dissolves, NaCl partly
        d = pk.dissolve({"sylvite": 300, "halite": 400}, 90)
    assert d.table.loc["sylvite", "dissolved_fraction"] == pytest.approx(1.0)
    assert 0 < d.table.loc["halite", "dissolved_fraction"] < 1


def test_pond_train_passes_brine_on():
    ponds = [pk.Pond("Saltmarsh 1", 30, until_saturated="halite"), pk.Pond("Saltmarsh 2", 30, water_removed=0.5)]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        tr = pk.pond_train(SEAWATER, ponds)
    assert list(tr.ponds["pond"]) == ["Saltmarsh 1", "Saltmarsh 2"]
    first = tr.harvest[tr.harvest["pond"] == "Saltmarsh 1"]
    assert set(first["solid"]) <= {"gypsum", "anhydrite"}
    assert tr.ponds["outflow_water_kg"].iloc[1] < tr.ponds["outflow_water_kg"].iloc[0]
    second = tr.harvest[tr.harvest["pond"] == "Saltmarsh 2"]
    assert second.set_index("solid").loc["halite", "purity"] > 0.9


@pytest.mark.parametrize(
    "call,exc",
    [
        (lambda: pk.evaporate({"Na": 1, "Cl": 1}, 200), RangeError),
        (lambda: pk.evaporate({"Na": 1, "Cl": 1}, 25, mode="sideways"), InputError),
        (lambda: pk.cool({"Na": 1, "Cl": 1}, 60, 400), RangeError),
        (lambda: pk.mix({"Na": 1, "Cl": 1}, {"K": 1, "Cl": 1}, -0.2), InputError),
        (lambda: pk.pond_train({"Na": 1, "Cl": 1}, []), InputError),
        (lambda: pk.evaporate({"Na": 20, "Cl": 20}, 25), InputError),  # already at its end point
    ],
)
def test_bad_input(call, exc):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with pytest.raises(exc):
            call()
