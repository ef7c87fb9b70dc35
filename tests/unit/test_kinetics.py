"""Behaviour, invariants and error messages of phasekit.kinetics (dissolution rates).

TEST DOUBLE: most tests take the driving force from ``SolubilityProductSaturation`` —
phasekit's Pitzer activity model and the database's stoichiometry with **test-only solubility
products**, set so that the pure salts saturate at the molalities below — so that the kinetics
are tested apart from the solids database, which is still being calibrated. The molalities are
near the handbook solubilities at 25 °C (CRC Handbook, from memory) only so that the magnitudes
are realistic; nothing here checks a solubility. The tests marked "default model" use the
database itself.
"""

import math
import warnings

import numpy as np
import pytest
from scipy.integrate import quad

import phasekit as pk
from phasekit import kinetics as kin
from phasekit.chemistry.species import M_WATER
from phasekit.errors import InputError, RangeError, ValidityWarning
from phasekit.kinetics.properties import BrineVolume

# test-only solubility products (see the module docstring)
TEST_SOLUBILITY = {"halite": 6.15, "sylvite": 4.81, "epsomite": 2.8}
SAT = kin.SolubilityProductSaturation.from_solubility(TEST_SOLUBILITY, temp_c=25.0)

FINE = kin.sieve([100, 200, 400], [0.6, 0.4])


def run(solids=None, sizes=FINE, brine=None, **kw):
    kw.setdefault("water_kg", 1.0)
    kw.setdefault("power_w_kg", 0.5)
    kw.setdefault("saturation", SAT)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return kin.dissolve(solids or {"sylvite": 0.02}, sizes, brine, **kw)


# ------------------------------------------------------------------- size distributions
def test_sieve_classes_take_the_geometric_mean_and_half_the_pan():
    d = kin.sieve([0, 100, 200, 400], [0.1, 0.5, 0.4])
    assert d.diameters_m * 1e6 == pytest.approx([50.0, math.sqrt(2e4), math.sqrt(8e4)], rel=1e-12)
    assert d.mass_fractions.sum() == pytest.approx(1.0, abs=1e-15)


def test_lognormal_discretization_keeps_median_and_sauter_mean():
    d = kin.lognormal(300, 1.6, n_classes=40)
    below = d.mass_fractions[d.diameters_m < 300e-6].sum()
    assert below == pytest.approx(0.5, abs=1e-12)  # symmetric classes about d50
    # Hatch–Choate relation for a mass distribution: d32 = MMD exp(-ln²σg / 2) (from memory)
    assert d.mean_diameter_m == pytest.approx(300e-6 * math.exp(-0.5 * math.log(1.6) ** 2), rel=0.01)


def test_rosin_rammler_mean_log_size():
    # Rosin–Rammler is a Weibull distribution by mass: E[ln d] = ln d' - γ/n (γ = 0.5772, Euler)
    d = kin.rosin_rammler(500, 2.5, n_classes=60)
    mean_ln = float(np.sum(d.mass_fractions * np.log(d.diameters_m)))
    assert mean_ln == pytest.approx(math.log(500e-6) - 0.5772156649 / 2.5, abs=0.01)


# --------------------------------------------------------------------------- bad input
def _dissolve(**kw):
    args = {"solids": {"sylvite": 0.01}, "sizes": FINE, "brine": None, "water_kg": 1.0, "saturation": SAT}
    args.update(kw)
    return lambda: kin.dissolve(args.pop("solids"), args.pop("sizes"), args.pop("brine"), **args)


BAD = [
    ("negative single size", lambda: kin.single(-5), "diameter_um", "-5"),
    ("negative sieve opening", lambda: kin.sieve([100, -200, 400], [0.5, 0.5]), "edges_um[1]", "-200"),
    ("fractions sum 0.9", lambda: kin.sieve([100, 200, 400], [0.5, 0.4]), "mass_fractions", "sum 0.9"),
    ("percentages", lambda: kin.sieve([100, 200, 400], [50, 50]), "mass_fractions", "sum 100"),
    ("negative d50", lambda: kin.lognormal(-1, 2), "d50_um", "-1"),
    ("gsd below 1", lambda: kin.lognormal(100, 0.9), "gsd", "0.9"),
    ("negative RR size", lambda: kin.rosin_rammler(-3, 2), "size_um", "-3"),
    ("zero volume", _dissolve(water_kg=None, brine_volume_m3=0.0), "brine_volume_m3", "0.0"),
    ("zero water", _dissolve(water_kg=0), "water_kg", "0"),
    ("negative power", _dissolve(power_w_kg=-1.0), "power_w_kg", "-1.0"),
    ("negative slip", _dissolve(slip_velocity_m_s=-0.1), "slip_velocity_m_s", "-0.1"),
    ("negative mass", _dissolve(solids={"sylvite": -1}), "solids['sylvite']", "-1"),
    ("unknown solid", _dissolve(solids={"unobtainium": 1}), "solids", "unobtainium"),
    ("volume and water", _dissolve(brine_volume_m3=1.0), "brine_volume_m3/water_kg", "1.0"),
    ("neither volume nor water", _dissolve(water_kg=None), "brine_volume_m3/water_kg", "None"),
    ("charge imbalance", _dissolve(brine={"Na": 1.0}), "brine", "charge imbalance"),
    ("negative molality", _dissolve(brine={"Na": -1.0, "Cl": -1.0}), "brine['Na']", "-1.0"),
    ("zero duration", _dissolve(duration_s=0), "duration_s", "0"),
    ("power and slip", _dissolve(power_w_kg=1.0, slip_velocity_m_s=0.1), "power_w_kg/slip_velocity_m_s", "0.1"),
    ("correlation mismatch", _dissolve(power_w_kg=1.0, correlation="ranz-marshall"), "correlation",
     "ranz-marshall"),
    ("unknown correlation", _dissolve(correlation="magic"), "correlation", "magic"),
    ("density out of range", _dissolve(brine_density_kg_m3=50), "brine_density_kg_m3", "50"),
    ("bool as a number", _dissolve(water_kg=True), "water_kg", "True"),
    ("sizes not a distribution", _dissolve(sizes=[100, 200]), "sizes", "[100, 200]"),
    ("saturation not callable", _dissolve(saturation=3), "saturation", "3"),
    ("leach fractions above one", lambda: kin.leach(1.0, {"sylvite": 0.7, "halite": 0.5}, FINE, water_kg=1,
                                                    residence_s=60, saturation=SAT), "composition", "sum 1.2"),
    ("negative residence", lambda: kin.leach(1.0, {"sylvite": 0.3}, FINE, water_kg=1, residence_s=-5,
                                             saturation=SAT), "residence_s", "-5"),
]


@pytest.mark.parametrize("case,call,field,value", BAD, ids=[b[0] for b in BAD])
def test_bad_input_raises_input_error_naming_field_and_value(case, call, field, value):
    with pytest.raises(InputError) as exc:
        call()
    assert exc.value.field == field
    assert value in str(exc.value)
    assert "expected" in str(exc.value)


def test_temperature_outside_range_is_a_range_error():
    with pytest.raises(RangeError) as exc:
        _dissolve(temp_c=150.0)()
    assert exc.value.field == "temp_c" and "150" in str(exc.value)


def test_saturation_beyond_the_density_data_is_a_range_error():
    # test-only solubility far above any data of the density model: Δ cannot be computed
    sat = kin.SolubilityProductSaturation.from_solubility({"sylvite": 4.81})
    sat.log10_k["sylvite"] += 3.0
    with pytest.raises(RangeError):
        kin.film_driving_force(sat, {}, "sylvite", BrineVolume(25.0))


def test_time_to_refuses_fractions_outside_zero_to_one():
    r = run()
    for bad in (0.0, 1.5, -0.2, "half"):
        with pytest.raises(InputError) as exc:
            r.time_to(bad)
        assert exc.value.field == "fraction"


# ---------------------------------------------------------------------- choices of data
def test_salt_formula_stands_for_the_stable_solid():
    assert kin.find_solid("Na2SO4", 10.0).name == "mirabilite"
    assert kin.find_solid("Na2SO4", 40.0).name == "thenardite"
    assert kin.find_solid("MgSO4", 25.0).name == "epsomite"
    assert kin.find_solid("Sylvite", 25.0).name == "sylvite"


def test_density_table_formulas_agree_with_the_solids_database():
    from phasekit.chemistry.species import formula_mass
    from phasekit.data_files import read_csv

    for row in read_csv("kinetics_solids.csv").itertuples():
        s = kin.find_solid(row.solid, 25.0)
        assert s.molar_mass * 1000 == pytest.approx(formula_mass(row.formula), rel=1e-6), row.solid
        assert 1000 < s.density < 3000


def test_brine_volume_inverts_molarities():
    vol = BrineVolume(25.0)
    brine = {"Na": 3.0, "K": 1.0, "Cl": 4.0}
    back = vol.molalities(vol.molarities(brine))
    assert back == pytest.approx(brine, rel=1e-12)
    from phasekit.chemistry.density import solution_density

    per_kg = 1 + sum(m * kin.properties.SPECIES[s].molar_mass / 1000 for s, m in brine.items())
    assert vol.water_per_volume(brine) == pytest.approx(1000 * solution_density(brine, 25.0) / per_kg, rel=1e-14)


def test_correlation_follows_what_is_given():
    assert kin.agitation(power_w_kg=0.3).correlation == "asai"
    assert kin.agitation(power_w_kg=0.3, correlation="armenante-kirwan").correlation == "armenante-kirwan"
    assert kin.agitation(slip_velocity_m_s=0.01).correlation == "ranz-marshall"
    assert kin.agitation().correlation == "diffusion"


def test_default_saturation_index_is_the_equilibrium_models(model):
    brine = {"Na": 2.0, "K": 1.0, "Cl": 3.0}
    table = model.saturation(brine, 25.0, amounts=False)
    for solid in ("halite", "sylvite"):
        assert kin.equilibrium_saturation_index(brine, solid, 25.0) == pytest.approx(
            table.loc[solid, "saturation_index"], abs=1e-12)


def test_default_model_dissolves_to_its_own_solubility():
    """default model: excess sylvite in water ends at the database's KCl solubility."""
    r = kin.dissolve({"sylvite": 0.6}, FINE, water_kg=1.0, power_w_kg=0.5, viscosity_pa_s=1e-3)
    assert r.brine["K"] == pytest.approx(pk.solubility("KCl", temp_c=25.0).molality, rel=1e-6)


# --------------------------------------------------------------------- mass balances
def test_excess_solid_brings_the_brine_to_saturation_and_stops():
    water = 0.1
    r = run({"halite": 0.1}, water_kg=water)  # 0.1 kg halite, ~0.036 kg soluble
    assert abs(r.history["halite_saturation_index"].iloc[-1]) < 1e-7
    assert r.brine["Na"] == pytest.approx(TEST_SOLUBILITY["halite"], rel=1e-7)
    n = TEST_SOLUBILITY["halite"] * water
    assert r.summary.loc["halite", "dissolved_kg"] == pytest.approx(n * kin.find_solid("halite", 25).molar_mass,
                                                                    rel=1e-6)
    assert r.time_to(0.99) is None  # never reached: the brine saturates first
    assert math.isnan(r.summary.loc["halite", "time_to_complete_s"])


def test_undersaturated_brine_dissolves_everything_and_balances_the_ions():
    mass = 0.05
    r = run({"sylvite": mass}, brine={"Na": 1.0, "Cl": 1.0}, water_kg=2.0)
    n = mass / kin.find_solid("sylvite", 25).molar_mass
    assert r.brine["K"] == pytest.approx(n / 2.0, rel=1e-12)
    assert r.brine["Cl"] == pytest.approx(1.0 + n / 2.0, rel=1e-12)
    assert r.brine["Na"] == pytest.approx(1.0, rel=1e-12)
    f = r.history["sylvite_dissolved_fraction"].to_numpy()
    assert f[0] == 0.0 and f[-1] == pytest.approx(1.0, abs=1e-12)
    assert np.all(np.diff(f) >= -1e-12)
    t_all = r.time_to(1.0)
    assert t_all == pytest.approx(r.summary.loc["sylvite", "time_to_complete_s"])
    assert 0 < r.time_to(0.5) < r.time_to(0.9) < t_all
    assert (r.particle_diameters(t_all * 1.0001)["diameter_um"] == 0).all()
    assert list(r.particle_diameters(0.0)["diameter_um"]) == pytest.approx([np.sqrt(2e4), np.sqrt(8e4)])


def test_hydrate_water_joins_the_brine():
    mass, water0 = 0.2, 1.0
    r = run({"epsomite": mass}, water_kg=water0)
    s = kin.find_solid("epsomite", 25.0)
    n = mass / s.molar_mass
    water = water0 + 7 * n * M_WATER  # molar mass of water from the same atomic weights
    assert r.water_kg == pytest.approx(water, rel=1e-12)
    assert r.brine["Mg"] == pytest.approx(n / water, rel=1e-12)


def test_history_columns_and_time_to_agree():
    r = run()
    cols = set(r.history.columns)
    assert {"time_s", "sylvite_dissolved_fraction", "total_dissolved_fraction", "K_molality", "Cl_molality",
            "water_kg", "sylvite_saturation_index"} <= cols
    t50 = r.time_to(0.5)
    again = run(output_times_s=[t50])
    row = again.history.loc[again.history["time_s"] == t50]
    assert float(row["sylvite_dissolved_fraction"].iloc[0]) == pytest.approx(0.5, abs=1e-9)


def test_finite_volume_matches_quadrature_of_the_d2_law():
    """One size, Sh = 2, in a small batch: t(d) = ∫ rho_m x dx / (4 D Δc(x)) from d to d0 (the
    shrinking-sphere equation integrated by quadrature instead of the ODE solver)."""
    d0, water, mass = 300e-6, 0.05, 0.012
    r = run({"sylvite": mass}, sizes=kin.single(300), water_kg=water, power_w_kg=None, rtol=1e-10)
    s = kin.find_solid("sylvite", 25.0)
    vol = BrineVolume(25.0)
    D = s.diffusivity(25.0)

    def dc(x):
        n = mass / s.molar_mass * (1 - (x / d0) ** 3)
        return kin.film_driving_force(SAT, {"K": n / water, "Cl": n / water}, s, vol)

    for f in (0.3, 0.7, 0.95):
        x = d0 * (1 - f) ** (1 / 3)
        t = quad(lambda y: s.molar_density * y / (4 * D * dc(y)), x, d0, epsabs=0, epsrel=1e-10)[0]
        assert r.time_to(f) == pytest.approx(t, rel=1e-6)


# ----------------------------------------------------------------------------- effects
def test_common_ion_slows_dissolution():
    water = run({"sylvite": 0.05}, water_kg=0.5)
    brine = run({"sylvite": 0.05}, brine={"Na": 4.0, "Cl": 4.0}, water_kg=0.5)
    assert brine.time_to(0.5) > 1.2 * water.time_to(0.5)


def test_more_viscous_brine_dissolves_slower():
    mu = kin.water_viscosity(25.0)
    a = run(viscosity_pa_s=mu)
    b = run(viscosity_pa_s=2 * mu)
    assert b.time_to(0.9) > a.time_to(0.9)


def test_measured_density_sets_the_water_of_a_volume():
    brine = {"Na": 2.0, "Cl": 2.0}
    est = BrineVolume(25.0).density(brine)
    a = run(brine=brine, water_kg=None, brine_volume_m3=1e-3)
    b = run(brine=brine, water_kg=None, brine_volume_m3=1e-3, brine_density_kg_m3=est)
    c = run(brine=brine, water_kg=None, brine_volume_m3=1e-3, brine_density_kg_m3=est * 1.01)
    assert a.water_kg == pytest.approx(b.water_kg, rel=1e-12)
    assert c.water_kg == pytest.approx(1.01 * a.water_kg, rel=1e-9)


# ---------------------------------------------------------------------------- warnings
def test_extrapolated_correlation_and_water_viscosity_are_flagged():
    with pytest.warns(ValidityWarning):
        r = kin.dissolve({"sylvite": 0.05}, kin.single(2000), {"Na": 3.0, "Cl": 3.0}, water_kg=1.0,
                         power_w_kg=1.0, correlation="armenante-kirwan", saturation=SAT)
    text = " ".join(r.warnings)
    assert "armenante-kirwan" in text and "Reynolds" in text
    assert "viscosity of pure water" in text


def test_leach_warns_that_growth_is_not_modelled():
    with pytest.warns(ValidityWarning):
        r = kin.leach(2.0, {"sylvite": 0.3, "halite": 0.6}, FINE, {"Na": 6.0, "Cl": 6.0}, water_kg=1.0,
                      residence_s=300, power_w_kg=0.5, saturation=SAT)
    assert any("supersaturated with halite" in w for w in r.warnings)
    assert r.history["time_s"].iloc[-1] == 300


def test_saturated_brine_dissolves_nothing():
    with pytest.warns(ValidityWarning, match="already saturated"):
        r = kin.dissolve({"halite": 0.01}, FINE, {"Na": 6.15, "Cl": 6.15}, water_kg=1.0, saturation=SAT,
                         viscosity_pa_s=1.9e-3)
    assert r.summary.loc["halite", "dissolved_kg"] == 0.0
    assert r.time_to(0.1) is None
