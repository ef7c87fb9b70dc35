"""Pond design figures: a train worked by hand, the flags of a pond whose end is never met, bad input.

The hand case is a Na-K-Cl brine (NaCl 2, KCl 0.3 mol/kg) in two ponds at 25 °C with concentration
factors 1.5 and 2.5: halite forms in the second pond only (sylvite stays undersaturated: the liquid
ends near 1.1 mol/kg K), and no solid takes water of crystallization, so each
pond's water evaporated is exactly (1 - 1/CF) of its inflow water and every design figure follows by
hand from the intake flow, the intake density (an input here), the net evaporation, the rain and the
seepage (formulas in phasekit/paths/ponds.py). Only the halite crop needs the model: the liquid's
molality at the end of the second pond, read from its path.
"""

import warnings

import periodictable
import pytest

import phasekit as pk
from phasekit.errors import InputError

M_NACL = periodictable.formula("NaCl").mass  # g/mol
M_KCL = periodictable.formula("KCl").mass
BRINE = {"Na": 2.0, "K": 0.3, "Cl": 2.3}


@pytest.fixture(scope="module")
def train():
    ponds = [pk.Pond("Gullbank A", 25, concentration_factor=1.5, net_evaporation_mm_per_day=6.0,
                     rain_mm_per_year=365.0, seepage_fraction=0.1, depth_m=0.4),
             pk.Pond("Gullbank B", 25, concentration_factor=2.5, net_evaporation_mm_per_day=4.0, depth_m=0.3)]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.pond_train(BRINE, ponds, intake_m3_per_h=100.0, intake_density_kg_per_l=1.075)


def test_design_matches_the_hand_calculation(train):
    d = train.design.set_index("pond")
    s0 = 1 + (2.0 * M_NACL + 0.3 * M_KCL) / 1000   # kg of intake brine per kg of its water
    w1 = 100.0 * 1.075 / s0                  # t/h of water into pond A
    evap_a = 24 * w1 * (1 - 1 / 1.5)         # m³/day
    area_a = 1000 * evap_a / (6.0 - 365.0 / 365)   # rain 365 mm/year = 1 mm/day off the 6 mm/day
    w_b = w1 / 1.5 * (1 - 0.1)               # 10 % of A's end brine seeps away
    evap_b = 24 * w_b * (1 - 1 / 2.5)
    area_b = 1000 * evap_b / 4.0
    s_a = 1 + 1.5 * (2.0 * M_NACL + 0.3 * M_KCL) / 1000   # A's end brine: CF 1.5
    a, b = d.loc["Gullbank A"], d.loc["Gullbank B"]
    assert a["water_evaporated_m3_per_day"] == pytest.approx(evap_a, rel=1e-6)
    assert a["area_m2"] == pytest.approx(area_a, rel=1e-6)
    assert a["brine_in_m3_per_h"] == pytest.approx(100.0, rel=1e-6)
    assert a["residence_days"] == pytest.approx(area_a * 0.4 / (24 * 100.0), rel=1e-6)
    assert a["seepage_t_per_day"] == pytest.approx(24 * 0.1 * w1 / 1.5 * s_a, rel=1e-6)
    assert b["water_evaporated_m3_per_day"] == pytest.approx(evap_b, rel=1e-6)
    assert b["area_m2"] == pytest.approx(area_b, rel=1e-6)
    rho_b = train.paths["Gullbank A"].steps["density_kg_per_l"].iloc[-1]
    assert b["brine_in_m3_per_h"] == pytest.approx(w_b * s_a / rho_b, rel=1e-6)
    assert b["residence_days"] == pytest.approx(area_b * 0.3 / (24 * w_b * s_a / rho_b), rel=1e-6)
    # halite: what the liquid (0.4 kg of water per kg of inflow water) no longer holds
    m_end = train.paths["Gullbank B"].steps["Na"].iloc[-1]
    assert 4.0 < m_end < 6.2 and train.paths["Gullbank B"].steps["K"].iloc[-1] == pytest.approx(0.3 * 1.5 * 2.5)
    halite_t_year = 24 * 365 * w_b * (3.0 - 0.4 * m_end) * M_NACL / 1000
    assert b["crop_t_per_year"] == pytest.approx(halite_t_year, rel=1e-6)
    assert a["crop_t_per_year"] == 0.0
    assert bool(a["end_condition_met"]) and bool(b["end_condition_met"])
    assert train.intake["m3_per_h"] == pytest.approx(100.0, rel=1e-12)
    assert train.intake["density_from"] == "given"


def test_mass_balance_of_the_train_closes(train):
    mb = train.mass_balance
    closure = float(mb.loc[mb["kind"] == "closure", "kg_per_t_feed"].iloc[0])
    assert abs(closure) < 1e-9 * 1000
    assert mb.loc[mb["kind"] == "in", "kg_per_t_feed"].sum() == pytest.approx(1000.0, rel=1e-12)
    # yearly tonnage of the intake: 100 m³/h at 1.075 t/m³
    feed = mb.loc[mb["kind"] == "in", "t_per_year"].iloc[0]
    assert feed == pytest.approx(100 * 1.075 * 24 * 365, rel=1e-12)
    seep = mb[mb["stream"].str.endswith("seepage")]
    assert len(seep) == 1 and seep["t_per_year"].iloc[0] == pytest.approx(
        train.design["seepage_t_per_day"].iloc[0] * 365, rel=1e-9)


def test_area_sets_the_evaporation_and_the_flow():
    """A pond given an area evaporates area x net rate; a pond given an area and an end condition
    (no intake flow) sets the flow."""
    brine = {"Na": 2.0, "Cl": 2.0}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = pk.pond_train(brine, [pk.Pond("A", 25, concentration_factor=1.5, net_evaporation_mm_per_day=5.0)],
                            intake_m3_per_h=50.0, intake_density_kg_per_l=1.075)
        area = float(ref.design["area_m2"].iloc[0])
        by_area = pk.pond_train(brine, [pk.Pond("A", 25, area_m2=area, net_evaporation_mm_per_day=5.0)],
                                intake_m3_per_h=50.0, intake_density_kg_per_l=1.075)
        flow = pk.pond_train(brine, [pk.Pond("A", 25, concentration_factor=1.5, area_m2=area,
                                             net_evaporation_mm_per_day=5.0)], intake_density_kg_per_l=1.075)
    assert by_area.ponds["concentration_factor"].iloc[0] == pytest.approx(1.5, rel=1e-9)
    assert by_area.design["water_evaporated_m3_per_day"].iloc[0] == pytest.approx(area * 5.0 / 1000, rel=1e-9)
    assert flow.intake["m3_per_h"] == pytest.approx(50.0, rel=1e-9)


def test_pond_stopped_at_its_eutonic_is_said():
    """NaCl alone saturates at an invariant point (one solid, two ions): the liquid cannot change, the
    pond's path ends at its eutonic before the asked concentration factor, and the design says so."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        tr = pk.pond_train({"Na": 4.0, "Cl": 4.0}, [pk.Pond("Saltpan", 25, concentration_factor=2.5)])
    row = tr.design.iloc[0]
    assert tr.paths["Saltpan"].stop_reason == "eutonic"
    assert not row["end_condition_met"] and "stopped at its eutonic" in row["note"]
    assert tr.ponds["concentration_factor"].iloc[0] < 2.5


def test_end_condition_never_met_is_said():
    """A pond asked to run until sylvite saturates, on a brine without potassium: it cannot, and
    the design row and the warnings say what happened instead."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        tr = pk.pond_train({"Na": 2.0, "Cl": 2.0}, [pk.Pond("Dry end", 25, until_saturated="sylvite")])
    row = tr.design.iloc[0]
    assert not row["end_condition_met"]
    assert "never met" in row["note"] and "halite" in row["note"]
    assert any("Dry end" in w and "never met" in w for w in tr.warnings)
    assert tr.design["area_m2"].isna().all()  # no flow, no evaporation rate: no area


@pytest.mark.parametrize("kwargs, field", [
    ({"seepage_fraction": 1.0}, "ponds[0].seepage_fraction"),
    ({"seepage_fraction": True}, "ponds[0].seepage_fraction"),
    ({"net_evaporation_mm_per_day": -1}, "ponds[0].net_evaporation_mm_per_day"),
    ({"net_evaporation_mm_per_day": 2, "rain_mm_per_year": 1000}, "ponds[0].rain_mm_per_year"),
    ({"area_m2": 1e5}, "ponds[0].net_evaporation_mm_per_day"),
    ({"depth_m": float("nan")}, "ponds[0].depth_m"),
])
def test_bad_pond_design_input(kwargs, field):
    with pytest.raises(InputError) as err:
        pk.pond_train({"Na": 2.0, "Cl": 2.0}, [pk.Pond("A", 25, concentration_factor=1.5, **kwargs)],
                      intake_m3_per_h=10)
    assert err.value.field == field


def test_bad_intake():
    pond = [pk.Pond("A", 25, concentration_factor=1.5)]
    with pytest.raises(InputError) as err:
        pk.pond_train({"Na": 2.0, "Cl": 2.0}, pond, intake_m3_per_h="lots")
    assert err.value.field == "intake_m3_per_h"
    with pytest.raises(InputError) as err:
        pk.pond_train({"Na": 2.0, "Cl": 2.0}, pond, intake_m3_per_h=1, intake_t_per_year=1)
    assert err.value.field == "intake_t_per_year"
