"""Mass balances (feed = crops + bittern + water evaporated) and crop grades of paths, pond trains
and conversion cycles.

The closure (in - out) must be below 1e-9 of the feed on every result: the engine conserves every
ion and the water to the solver's residual. Grades are checked against the stoichiometry of pure
minerals, computed here from periodictable's molar masses (sylvite KCl: 100 % KCl, 63.2 % K2O).
"""

import warnings

import periodictable
import pytest

import phasekit as pk
from phasekit.paths.balance import GRADE_DEFINITIONS

SEAWATER = {"Mg": 0.0547421, "Ca": 0.0106568, "K": 0.0105797, "Cl": 0.5657647, "SO4": 0.0292643}
SEAWATER["Na"] = SEAWATER["Cl"] + 2 * SEAWATER["SO4"] - SEAWATER["K"] - 2 * SEAWATER["Mg"] - 2 * SEAWATER["Ca"]
M = {f: periodictable.formula(f).mass for f in ("KCl", "K2O", "K", "KNO3", "H2O")}


def _quiet(f, *a, **k):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return f(*a, **k)


def _closure(mb):
    return float(mb.loc[mb["kind"] == "closure", "kg_per_t_feed"].iloc[0])


def _closes(mb):
    assert mb.loc[mb["kind"] == "in", "kg_per_t_feed"].sum() == pytest.approx(1000.0, rel=1e-12)
    assert abs(_closure(mb)) < 1e-9 * 1000
    assert (mb.loc[mb["kind"] == "out", "kg_per_t_feed"] >= 0).all()


@pytest.fixture(scope="module")
def results():
    return {
        "fractional": _quiet(pk.evaporate, SEAWATER, 25, mode="fractional"),
        "equilibrium": _quiet(pk.evaporate, SEAWATER, 25, mode="equilibrium"),
        "cooling": _quiet(pk.cool, {"Na": 3.0, "K": 4.0, "Cl": 7.0}, 90, 15),
        "programme": _quiet(pk.programme, SEAWATER, [(30, 0.0), (15, 0.5), (30, 0.95)]),
    }


@pytest.mark.parametrize("name", ["fractional", "equilibrium", "cooling", "programme"])
def test_paths_close(results, name):
    res = results[name]
    _closes(res.mass_balance)
    # the solids of the balance are the path's own final amounts, in kg per tonne of feed brine
    summary = res.summary()
    solids = res.mass_balance[res.mass_balance["stream"].str.startswith("solid: ")]
    assert len(solids) == len(summary) > 0
    for _, row in solids.iterrows():
        assert row["kg_per_t_feed"] == pytest.approx(summary.loc[row["stream"][7:], "g_per_kg_brine"], rel=1e-12)
    evap = res.mass_balance.set_index("stream").loc["water evaporated", "kg_per_t_feed"]
    assert evap == pytest.approx(1000 * res.steps["water_removed_fraction"].iloc[-1] / res.initial_solution_mass_kg,
                                 rel=1e-12)


def test_cooling_evaporates_no_water_and_crops_sylvite(results):
    res = results["cooling"]
    mb = res.mass_balance.set_index("stream")
    assert mb.loc["water evaporated", "kg_per_t_feed"] == 0.0
    assert mb.loc["solid: sylvite", "kg_per_t_feed"] > 0
    g = res.grades.set_index("crop")
    assert g.loc["sylvite", "KCl_percent"] == pytest.approx(100.0, rel=1e-12)
    assert g.loc["sylvite", "K2O_percent"] == pytest.approx(100 * M["K2O"] / (2 * M["KCl"]), rel=1e-12)
    assert g.loc["sylvite", "purity"] == 1.0


def test_grades_of_a_mixed_crop(results):
    """Carnallite KCl·MgCl2·6H2O and the whole harvest of seawater: K2O % = n_K M(K2O)/2 / mass."""
    g = results["equilibrium"].grades.set_index("crop")
    carn = periodictable.formula("KMgCl3(H2O)6").mass
    assert g.loc["carnallite", "K2O_percent"] == pytest.approx(100 * M["K2O"] / 2 / carn, rel=1e-9)
    allrow = g.loc["all solids"]
    assert allrow["main_solid"] == "halite" and 0.5 < allrow["purity"] < 1
    assert allrow["K2O_percent"] == pytest.approx(allrow["KCl_percent"] * M["K2O"] / (2 * M["KCl"]), rel=1e-12)
    assert results["equilibrium"].grades.attrs["definitions"] == GRADE_DEFINITIONS


def test_pond_train_closes():
    ponds = [pk.Pond("Heronmere 1", 30, until_saturated="halite", net_evaporation_mm_per_day=6, seepage_fraction=0.05),
             pk.Pond("Heronmere 2", 30, water_removed=0.8, net_evaporation_mm_per_day=5, rain_mm_per_year=300,
                     seepage_fraction=0.02),
             pk.Pond("Heronmere 3", 25, until_saturated=["carnallite", "sylvite", "kainite"], mode="fractional")]
    tr = _quiet(pk.pond_train, SEAWATER, ponds, intake_m3_per_h=500, exclude=["anhydrite"])
    _closes(tr.mass_balance)
    assert abs(tr.mass_balance["t_per_year"].iloc[-1]) < 1e-9 * tr.mass_balance["t_per_year"].iloc[0]
    crops = tr.mass_balance[tr.mass_balance["stream"].str.contains(": ") &
                            ~tr.mass_balance["stream"].str.endswith(("water evaporated", "seepage"))]
    assert crops["t_per_year"].sum() == pytest.approx(tr.design["crop_t_per_year"].sum(), rel=1e-9)
    assert list(tr.grades["crop"]) == [p.name for p in ponds][: len(tr.grades)]


def test_cycle_closes_and_grades_niter():
    feed = pk.Brine({"Na": 6.0, "K": 4.0, "Cl": 4.0, "NO3": 6.0})
    for dilution in ("auto", 0.3):
        cyc = _quiet(pk.hot_cold_cycle, feed, hot_c=75, cold_c=20, dilution=dilution)
        _closes(cyc.mass_balance)
        cold = cyc.grades.set_index("crop").loc["cold crop"]
        if cold["purity"] == 1.0:
            assert cold["K2O_percent"] == pytest.approx(100 * M["K2O"] / 2 / M["KNO3"], rel=1e-12)
    assert "water added" in set(cyc.mass_balance["stream"])
