"""Crystallization paths that go the whole way: invariant points classified (transition point or
eutonic), restart from any liquid, the phase rule at the end, partial results, the validity stop,
solids kept out, and the step table at event rows.

Expectations are computed independently of the path engine wherever a number is needed: the
ternary invariant points from pk.isotherm, the formation rates at an invariant point from the
mass balance (solved here with numpy), end states from a fresh equilibrium solve."""

import json
import warnings
from pathlib import Path

import numpy as np
import pytest

import phasekit as pk
from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.solver import solve
from phasekit.errors import ConvergenceError, RangeError

# an Mg-rich chloride-sulfate brine, mg/L, balanced on Cl (the example of the project's issue 16)
MG_BRINE = {"Na": 38000, "K": 5200, "Mg": 31000, "Ca": 350, "Cl": 117000, "SO4": 52000}
SEAWATER = {"Mg": 0.0547421, "Ca": 0.0106568, "K": 0.0105797, "Cl": 0.5657647, "SO4": 0.0292643}
SEAWATER["Na"] = SEAWATER["Cl"] + 2 * SEAWATER["SO4"] - SEAWATER["K"] - 2 * SEAWATER["Mg"] - 2 * SEAWATER["Ca"]
REASONS = {"eutonic", "drying point", "end of programme", "end condition", "validity limit", "failure"}


def _quiet(fn, *a, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return fn(*a, **kw)


def _brine_of(row, species):
    return {s: float(row[s]) for s in species if float(row[s]) > 0}


def _rates(model, comp: dict, solids: list) -> np.ndarray:
    """Formation rates (per kg water removed) of ``solids`` at a fixed liquid ``comp``, solved here:
    Σ ν ξ - m λ = 0 per ion, λ - M_w Σ ν_w ξ = 1 (λ: liquid water lost per kg removed)."""
    ions = sorted(comp)
    a = len(solids)
    mat = np.zeros((len(ions) + 1, a + 1))
    for j, s in enumerate(solids):
        st = model.solid_stoichiometry(s)
        for i, ion in enumerate(ions):
            mat[i, j] = st.get(ion, 0)
        mat[-1, j] = -M_WATER * st.get("H2O", 0)
    mat[: len(ions), a] = [-comp[i] for i in ions]
    mat[-1, a] = 1.0
    rhs = np.zeros(len(ions) + 1)
    rhs[-1] = 1.0
    x, *_ = np.linalg.lstsq(mat, rhs, rcond=None)
    assert np.max(np.abs(mat @ x - rhs)) < 1e-8 * max(1.0, np.max(np.abs(mat)))  # an invariant point
    return x[:a]


def _balance(model, res, initial):
    steps, prec = res.steps, res.precipitated
    stoich = {c: model.solid_stoichiometry(c) for c in prec.columns}
    w = steps["liquid_water_kg"].to_numpy()
    for s, total in initial.items():
        solid = sum(prec[c].to_numpy() * stoich[c].get(s, 0) for c in prec.columns)
        assert np.max(np.abs(w * steps[s].to_numpy() + solid - total)) <= 1e-10 * total, s
    hyd = sum(prec[c].to_numpy() * stoich[c].get("H2O", 0) for c in prec.columns) * M_WATER
    assert np.max(np.abs(w + hyd + steps["water_removed_fraction"].to_numpy() - 1.0)) <= 1e-10


@pytest.fixture(scope="module")
def mg_brine():
    return pk.Brine.from_analysis(MG_BRINE, units="mg/L").balance(on="Cl", allow_decrease=True)


@pytest.fixture(scope="module")
def mg_paths(mg_brine):
    return {mode: _quiet(pk.evaporate, mg_brine, 25.0, mode=mode) for mode in ("fractional", "equilibrium")}


# ------------------------------------------------------------------ the Mg-rich brine
@pytest.mark.parametrize("mode", ["fractional", "equilibrium"])
def test_mg_brine_runs_to_a_eutonic_obeying_the_phase_rule(model, mg_brine, mg_paths, mode):
    res = mg_paths[mode]
    assert res.complete and res.stop_reason == "eutonic"
    species = [s for s in model.species if s in mg_brine.molalities]
    last = res.steps.iloc[-1]
    final = last["solids"].split("+")
    assert len(final) == len(species) - 1  # isothermal, isobaric invariant: ions - 1 solids
    rates = _rates(model, _brine_of(last, species), final)
    assert np.all(rates >= -1e-9 * np.max(np.abs(rates)))  # a eutonic: every solid forms
    assert res.events["point"].iloc[-1] == "eutonic"
    # the path went past the point where the single run used to stop (five solids, one of them
    # redissolving): at least one transition point before the end
    assert (res.events["point"] == "transition point").any()
    _balance(model, res, mg_brine.molalities)


@pytest.mark.parametrize("mode", ["fractional", "equilibrium"])
def test_mg_brine_transition_points_have_a_negative_rate(model, mg_brine, mg_paths, mode):
    res = mg_paths[mode]
    species = [s for s in model.species if s in mg_brine.molalities]
    ev = res.events
    tp = ev[(ev["point"] == "transition point") & (ev["event"] == "appears")]
    assert len(tp)
    for _, e in tp.iterrows():
        # the assemblage on arrival: the solids of the step row at this point plus any leaving here
        at = res.steps[np.isclose(res.steps["water_removed_fraction"], e["water_removed_fraction"], rtol=0,
                                  atol=1e-13)]
        solids = set(at["solids"].iloc[0].split("+"))
        here = ev[np.isclose(ev["water_removed_fraction"], e["water_removed_fraction"], rtol=0, atol=1e-13)]
        solids |= set(here["solid"])
        solids = sorted(solids)
        rates = _rates(model, _brine_of(e, species), solids)
        assert np.min(rates) < 0, (e["solid"], solids, rates)


def test_mg_brine_equilibrium_end_is_the_closed_system_equilibrium(model, mg_brine, mg_paths):
    """In equilibrium mode the end state is the equilibrium of the initial totals with the water
    left: a fresh solve (from the dissolved state), with a little more water removed (the last
    solid has just appeared at the end point), gives the same solids and the same liquid (a
    eutonic liquid does not change while water is removed)."""
    res = mg_paths["equilibrium"]
    last = res.steps.iloc[-1]
    b = np.array([mg_brine.molalities.get(s, 0.0) for s in model.species])
    total_water = (1.0 - last["water_removed_fraction"]) * (1 - 1e-3)
    st = _quiet(solve, model, b, total_water, 25.0)
    assert sorted(model.solids.names[k] for k in st.active if st.n[k] > 0) == sorted(last["solids"].split("+"))
    for i, s in enumerate(model.species):
        if b[i] > 0:
            assert st.m[i] == pytest.approx(last[s], rel=1e-6)


def test_mg_brine_restart_from_intermediate_liquids_gives_the_same_rest(model, mg_brine, mg_paths):
    """Fractional mode: the liquid carries the whole state, so a path restarted from any liquid of
    the path gives the same remaining sequence, at the same concentration factors."""
    res = mg_paths["fractional"]
    species = [s for s in model.species if s in mg_brine.molalities]
    ev_cf = res.events["concentration_factor"].to_numpy()
    steps = res.steps
    # rows strictly between events (a restart exactly on an event point starts saturated twice)
    rows = [i for i in range(1, len(steps) - 1)
            if np.min(np.abs(steps["concentration_factor"].iloc[i] / ev_cf - 1)) > 1e-6]
    for i in (rows[len(rows) // 4], rows[len(rows) // 2], rows[3 * len(rows) // 4]):
        cf0 = float(steps["concentration_factor"].iloc[i])
        again = _quiet(pk.evaporate, pk.Brine(_brine_of(steps.iloc[i], species)), 25.0, mode="fractional")
        rest = res.events[res.events["concentration_factor"] > cf0 * (1 + 1e-9)]
        new = again.events[again.events["concentration_factor"] > 1 + 1e-9]
        assert list(zip(new["solid"], new["event"])) == list(zip(rest["solid"], rest["event"]))
        np.testing.assert_allclose(new["concentration_factor"].to_numpy() * cf0,
                                   rest["concentration_factor"].to_numpy(), rtol=1e-6)
        assert again.stop_reason == res.stop_reason


# ------------------------------------------------------------------ the ternary KCl-MgCl2-H2O
@pytest.fixture(scope="module")
def kmg_points():
    iso = _quiet(pk.isotherm, ["KCl", "MgCl2"], 25.0)
    pts = {tuple(sorted(r["solids"])): r for _, r in iso.invariant_points.iterrows()}
    return pts[("carnallite", "sylvite")], pts[("bischofite", "carnallite")]


@pytest.mark.parametrize("mode", ["fractional", "equilibrium"])
def test_carnallite_ternary_transition_and_end_points(kmg_points, mode):
    """KCl-MgCl2-H2O at 25 °C. A brine with K/Mg = 0.4 (below carnallite's 1) first gives sylvite;
    at the sylvite-carnallite point the liquid cannot stay (sylvite would have to redissolve: a
    transition point, incongruent carnallite); it goes on with carnallite to the carnallite-bischofite
    point, where both form: the eutonic. In equilibrium mode the sylvite is used up at the
    transition point before the liquid leaves it. The compositions are those of the model's own
    isotherm (pk.isotherm)."""
    p, e = kmg_points
    res = _quiet(pk.evaporate, {"K": 0.4, "Mg": 1.0, "Cl": 2.4}, 25.0, mode=mode)
    ev = res.events
    assert res.stop_reason == "eutonic" and res.complete
    car = ev[(ev["solid"] == "carnallite") & (ev["event"] == "appears")].iloc[0]
    assert car["point"] == "transition point"
    assert car["K"] == pytest.approx(p["KCl_molality"], rel=1e-6)
    assert car["Mg"] == pytest.approx(p["MgCl2_molality"], rel=1e-6)
    gone = ev[(ev["solid"] == "sylvite") & (ev["event"] == "disappears")].iloc[0]
    assert gone["point"] == "transition point"
    assert gone["K"] == pytest.approx(p["KCl_molality"], rel=1e-6)  # leaves at the same liquid
    if mode == "fractional":
        assert gone["water_removed_fraction"] == pytest.approx(car["water_removed_fraction"], abs=1e-12)
    else:  # sylvite dissolves while water is removed, until it is used up
        assert gone["water_removed_fraction"] > car["water_removed_fraction"] + 1e-6
    end = ev.iloc[-1]
    assert end["solid"] == "bischofite" and end["point"] == "eutonic"
    assert end["K"] == pytest.approx(e["KCl_molality"], rel=1e-6)
    assert end["Mg"] == pytest.approx(e["MgCl2_molality"], rel=1e-6)
    assert res.steps["solids"].iloc[-1] == "bischofite+carnallite"


def test_carnallite_ternary_potassium_excess_dries_at_the_transition_point(kmg_points):
    """K/Mg = 2 in equilibrium mode: carnallite takes K and Mg 1:1, so the sylvite cannot be used
    up; the liquid stays at the transition point until its water is gone (phase rule: the total
    composition lies in the sylvite + carnallite triangle)."""
    p, _ = kmg_points
    res = _quiet(pk.evaporate, {"K": 1.0, "Mg": 0.5, "Cl": 2.0}, 25.0, mode="equilibrium")
    assert res.stop_reason == "drying point" and res.complete
    last = res.steps.iloc[-1]
    assert set(last["solids"].split("+")) == {"sylvite", "carnallite"}
    assert last["K"] == pytest.approx(p["KCl_molality"], rel=1e-6)
    # nearly all the potassium is in the solids
    assert res.precipitated["sylvite"].iloc[-1] + res.precipitated["carnallite"].iloc[-1] == pytest.approx(1.0,
                                                                                                          rel=1e-4)


# ------------------------------------------------------------------ random brines (seeded subset)
CATIONS = {"Na": 1, "K": 1, "Mg": 2, "Ca": 2, "Li": 1}
ANIONS = {"SO4": 2, "NO3": 1}


def random_brines(n: int, seed: int) -> list:
    """The same definition as bench/path_ends.py (which runs 500 of them)."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(n):
        comp = {}
        for ion in CATIONS:
            if ion == "Na" or rng.random() < 0.7:
                hi = 0.05 if ion == "Ca" else 1.0
                comp[ion] = float(10 ** rng.uniform(-3, np.log10(hi)))
        pos = sum(CATIONS[i] * v for i, v in comp.items())
        for ion in ANIONS:
            if rng.random() < 0.7:
                comp[ion] = float(10 ** rng.uniform(-3, 0))
        neg = sum(ANIONS[i] * comp.get(i, 0.0) for i in ANIONS)
        if neg > 0.8 * pos:
            for i in ANIONS:
                if i in comp:
                    comp[i] *= 0.8 * pos / neg
            neg = 0.8 * pos
        comp["Cl"] = pos - neg
        ionic = 0.5 * sum(v * (CATIONS.get(i) or ANIONS.get(i) or 1) ** 2 for i, v in comp.items())
        if ionic > 8.0:
            comp = {i: v * 8.0 / ionic for i, v in comp.items()}
        out.append((comp, float(rng.uniform(0.0, 100.0))))
    return out


@pytest.mark.parametrize("k", range(6))
@pytest.mark.parametrize("mode", ["fractional", "equilibrium"])
def test_random_brines_return_a_path_with_a_reason(model, mode, k):
    comp, temp_c = random_brines(6, seed=2016)[k]
    res = _quiet(pk.evaporate, pk.Brine(comp), temp_c=temp_c, mode=mode)
    assert res.stop_reason in REASONS
    assert res.complete == (res.stop_reason not in ("failure", "validity limit"))
    assert len(res.steps) >= 1
    _balance(model, res, comp)
    mb = res.mass_balance  # feed = solids + water evaporated + bittern, kg per tonne of feed
    assert abs(mb.loc[mb["kind"] == "closure", "kg_per_t_feed"].iloc[0]) < 1e-9 * 1000
    assert np.all(res.steps["ionic_strength"] <= model.db.ionic_strength_max * (1 + 1e-9))
    _event_rows_consistent(model, res, temp_c)


def _event_rows_consistent(model, res, temp_c):
    """Every event row of the step table lists its solids, and no solid is supersaturated there."""
    species = [s for s in model.species if s in res.steps.columns]
    for _, e in res.events.iterrows():
        rows = res.steps[np.isclose(res.steps["water_removed_fraction"], e["water_removed_fraction"], rtol=0,
                                    atol=1e-13) & np.isclose(res.steps["temp_c"], e["temp_c"], rtol=0, atol=1e-9)]
        assert len(rows), e["solid"]
        listed = set("+".join(rows["solids"]).split("+")) - {""}
        if e["event"] == "appears":
            assert e["solid"] in listed
        si = _quiet(model.saturation, _brine_of(e, species), float(e["temp_c"]), amounts=False)["saturation_index"]
        over = {s for s, v in si.items() if v > 1e-6}
        assert over <= listed, (e["solid"], over - listed)


def test_seawater_event_rows_list_their_solids(model):
    for mode in ("fractional", "equilibrium"):
        res = _quiet(pk.evaporate, SEAWATER, 25.0, mode=mode)
        _event_rows_consistent(model, res, 25.0)


# ------------------------------------------------------------------ partial results
def test_a_solver_failure_keeps_the_path_computed_so_far(model, monkeypatch):
    import phasekit.paths.engine as engine

    real = engine.solve_robust
    calls = {"n": 0}

    def failing(*a, **kw):
        calls["n"] += 1
        if calls["n"] > 25:
            raise ConvergenceError("made to fail by the test", {})
        return real(*a, **kw)

    monkeypatch.setattr(engine, "solve_robust", failing)
    monkeypatch.setattr(engine, "solve", lambda *a, **kw: failing())
    res = _quiet(pk.evaporate, SEAWATER, 25.0)
    assert not res.complete and res.stop_reason == "failure"
    assert "made to fail by the test" in res.end_point
    assert len(res.steps) >= 20  # the rows computed before the failure are kept
    assert any("partial path" in w for w in res.warnings)
    _balance(model, res, SEAWATER)


# ------------------------------------------------------------------ validity limit
def test_path_stops_at_the_ionic_strength_limit_unless_asked():
    brine = {"Mg": 2.0, "Ca": 1.0, "Cl": 6.0}
    res = _quiet(pk.evaporate, brine, 25.0)
    i_max = pk.default_model().db.ionic_strength_max
    assert res.stop_reason == "validity limit" and not res.complete
    assert res.steps["ionic_strength"].iloc[-1] == pytest.approx(i_max, rel=1e-9)
    assert np.all(res.steps["ionic_strength"] <= i_max * (1 + 1e-9))
    assert any("validity limit" in w for w in res.warnings)
    more = _quiet(pk.evaporate, brine, 25.0, allow_beyond_validity=True)
    assert more.allow_beyond_validity and more.steps["ionic_strength"].max() > i_max
    assert any("above the model's validity limit" in w for w in more.warnings)
    # the same rows up to the limit
    n = len(res.steps) - 1
    np.testing.assert_allclose(more.steps["Mg"].iloc[:n], res.steps["Mg"].iloc[:n], rtol=1e-9)


def test_heating_stops_where_a_parameter_range_ends():
    """The Ca-Cl parameters hold from 0 to 25 °C in the embedded database: heating a CaCl2-bearing
    brine from 10 °C stops at the end of that range (read from the model, not hard-coded)."""
    model = pk.default_model()
    i, j = model.cations.index("Ca"), model.anions.index("Cl")
    hi = float(model._binary_range[i, j, 1])
    if hi >= 60:
        pytest.skip("the Ca-Cl parameters reach 60 °C in this database")
    res = _quiet(pk.heat, {"Ca": 1.0, "Na": 1.0, "Cl": 3.0}, 10.0, 60.0)
    assert res.stop_reason == "validity limit"
    assert res.steps["temp_c"].iloc[-1] == pytest.approx(hi, abs=1e-9)
    more = _quiet(pk.heat, {"Ca": 1.0, "Na": 1.0, "Cl": 3.0}, 10.0, 60.0, allow_beyond_validity=True)
    assert more.stop_reason == "end of programme" and more.steps["temp_c"].iloc[-1] == pytest.approx(60.0)
    assert any("outside the validity range" in w for w in more.warnings)


def test_equilibrate_refuses_the_answer_beyond_the_limit(model):
    # 10 mol MgCl2 per kg of water: bischofite (MgCl2·6H2O) would need 1.08 kg of it
    with pytest.raises(RangeError, match="ionic strength"):
        _quiet(model.equilibrate, {"Mg": 10, "Cl": 20}, 25.0)
    with pytest.raises(RangeError, match="ionic strength"):
        _quiet(model.equilibrate, {"Mg": 10, "Cl": 20}, 25.0, initial_solids=["bischofite"])
    res = _quiet(model.equilibrate, {"Mg": 10, "Cl": 20}, 25.0, allow_beyond_validity=True)
    assert any("validity limit" in w for w in res.warnings)
    # within the water's reach, every start gives bischofite and the saturated MgCl2 solution
    sat = _quiet(pk.solubility, "MgCl2", 25.0).molality
    for init in ((), ("bischofite",)):
        r = _quiet(model.equilibrate, {"Mg": 8, "Cl": 16}, 25.0, initial_solids=init)
        assert set(r.solids) == {"bischofite"}
        assert r.liquid.molalities["Mg"] == pytest.approx(sat, rel=1e-8)


# ------------------------------------------------------------------ solids kept out
def test_seawater_without_anhydrite_gives_gypsum_through_halite():
    res = _quiet(pk.evaporate, SEAWATER, 25.0, exclude=["anhydrite"])
    assert res.exclude == ["anhydrite"]
    assert "anhydrite" not in res.precipitated.columns
    halite_at = res.events[(res.events["solid"] == "halite") & (res.events["event"] == "appears")]
    cf_h = float(halite_at["concentration_factor"].iloc[0])
    later = res.events[res.events["concentration_factor"] > cf_h * (1 + 1e-9)]["concentration_factor"]
    cf_next = float(later.iloc[0]) if len(later) else np.inf
    after = res.steps[(res.steps["concentration_factor"] >= cf_h) & (res.steps["concentration_factor"] < cf_next * (1 - 1e-9))]
    assert len(after) > 3 and after["solids"].str.contains("gypsum").all()  # gypsum up to halite and beyond
    before = res.steps[res.steps["concentration_factor"] < cf_h]
    assert before["solids"].iloc[-5:].str.contains("gypsum").all()
    assert res.precipitated["gypsum"][after.index[-1]] > res.precipitated["gypsum"][after.index[0]]
    plain = _quiet(pk.evaporate, SEAWATER, 25.0)
    assert "anhydrite" in plain.precipitated.columns


def test_demo_concentrator_harvests_gypsum_with_anhydrite_kept_out():
    session = json.loads((Path(__file__).resolve().parents[2] / "webapp" / "demo" /
                          "saltmarsh_flats_session.json").read_text())
    b = session["brine"]
    brine = pk.Brine.from_analysis({r["ion"]: float(r["value"]) for r in b["rows"]}, units=b["units"],
                                   density=float(b["density"])).balance(on=b["balance_on"], allow_decrease=True)
    ponds = []
    for p in session["ponds"]:
        value = p["value"] if p["end"] == "until_saturated" else float(p["value"])
        ponds.append(pk.Pond(p["name"], float(p["temp_c"]), **{p["end"]: value}))
    excl = session.get("ponds_exclude", "anhydrite")
    res = _quiet(pk.pond_train, brine, ponds, exclude=excl)
    assert res.exclude == ["anhydrite"] and res.complete
    conc = res.ponds.set_index("pond").loc["Sandpiper concentrators"]
    # gypsum is the main crop; at 30 °C glauberite (whose ln K now has a temperature function) joins it
    assert conc["main_solid"] == "gypsum" and conc["purity"] > 0.5
    assert "anhydrite" not in set(res.harvest["solid"])
    plain = _quiet(pk.pond_train, brine, ponds)
    assert plain.ponds.set_index("pond").loc["Sandpiper concentrators", "main_solid"] != "gypsum"


def test_exclude_everywhere(model):
    brine = {"Ca": 0.05, "SO4": 0.05, "Na": 4.0, "Cl": 4.0}
    sat = _quiet(model.saturation, brine, 25.0, exclude=["anhydrite"])
    assert "anhydrite" not in sat.index and "gypsum" in sat.index and sat.attrs["exclude"] == ["anhydrite"]
    eq = _quiet(model.equilibrate, {"Ca": 0.2, "SO4": 0.2, "Na": 5.5, "Cl": 5.5}, 25.0, exclude=["anhydrite", "halite"])
    assert "anhydrite" not in eq.solids and "halite" not in eq.solids and eq.exclude == ["halite", "anhydrite"]
    for fn, args in ((pk.cool, (brine, 60.0, 20.0)), (pk.heat, (brine, 20.0, 60.0)),
                     (pk.programme, (brine, [(30.0, 0.0), (15.0, 0.5)]))):
        res = _quiet(fn, *args, exclude=["anhydrite"], allow_beyond_validity=True)
        assert res.exclude == ["anhydrite"] and "anhydrite" not in res.precipitated.columns
    cyc = _quiet(pk.hot_cold_cycle, pk.Brine({"Na": 6.0, "K": 4.0, "Cl": 4.0, "NO3": 6.0}), hot_c=75.0, cold_c=20.0,
                 exclude=["sylvite"])
    assert cyc.exclude == ["sylvite"] and "sylvite" not in cyc.hot_solids and "sylvite" not in cyc.cold_solids
    with pytest.raises(pk.InputError, match="exclude"):
        _quiet(pk.evaporate, brine, 25.0, exclude=["kryptonite"])
