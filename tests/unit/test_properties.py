"""Property-based tests (hypothesis) across the library: random brines, temperatures, paths."""

import warnings

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import phasekit as pk
from phasekit.chemistry.species import M_WATER
from phasekit.equilibrium.solver import SI_ENTER
from phasekit.errors import PhasekitError

CATIONS = {"Na": 1, "K": 1, "Mg": 2, "Ca": 2}
ANIONS = {"Cl": 1, "SO4": 2}


@st.composite
def brines(draw, max_total=12.0):
    """Charge-balanced Na–K–Mg–Ca–Cl–SO4 brines, from dilute to beyond saturation."""
    cat = {s: draw(st.floats(0, 1)) for s in CATIONS}
    scale = draw(st.floats(0.01, max_total))
    cat["Na"] += 0.05
    pos = sum(v * CATIONS[s] for s, v in cat.items())
    cat = {s: v * scale / pos for s, v in cat.items()}
    pos = scale
    so4_share = draw(st.floats(0, 0.6))
    comp = dict(cat)
    comp["SO4"] = pos * so4_share / 2
    comp["Cl"] = pos * (1 - so4_share)
    return {k: v for k, v in comp.items() if v > 0}


temps = st.floats(0.0, 100.0)
FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _liq(r):
    return dict(r.liquid.molalities) if hasattr(r.liquid, "molalities") else r.liquid


@FAST
@given(brines(), temps)
def test_equilibrium_properties(comp, t):
    model = pk.default_model()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            r = model.equilibrate(comp, t)
        except PhasekitError:
            return  # a clear error of our own is an acceptable outcome; anything else fails the test
    liq = _liq(r)
    for s, total in comp.items():
        solid = sum(n * model.solid_stoichiometry(k).get(s, 0) for k, n in r.solids.items())
        assert r.water_kg * liq.get(s, 0.0) + solid == pytest.approx(total, rel=1e-10)
    charge = sum(v * (CATIONS.get(s, 0) - ANIONS.get(s, 0)) for s, v in liq.items())
    assert abs(charge) < 1e-9 * sum(liq.values())
    sat = r.saturation["saturation_index"]
    for k in r.solids:
        assert abs(sat[k]) < 1e-8
    assert (sat.drop(list(r.solids)) <= SI_ENTER).all()
    assert len(r.solids) <= len(comp) - 1
    hyd = sum(n * model.solid_stoichiometry(k).get("H2O", 0) for k, n in r.solids.items()) * M_WATER
    assert r.water_kg + hyd == pytest.approx(1.0, rel=1e-10)


@FAST
@given(brines(max_total=6.0), temps, st.randoms(use_true_random=False))
def test_results_do_not_depend_on_species_order(comp, t, rnd):
    model = pk.default_model()
    keys = list(comp)
    rnd.shuffle(keys)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        a = model.activity(comp, t)
        b = model.activity({k: comp[k] for k in keys}, t)
    assert a.ln_gamma == b.ln_gamma and a.osmotic == b.osmotic


@FAST
@given(brines(max_total=3.0), temps)
def test_water_activity_falls_as_water_is_removed(comp, t):
    """At fixed temperature and without solids, a_w decreases monotonically with concentration."""
    model = pk.default_model()
    f = np.linspace(1.0, 2.0, 6)
    df = pd.DataFrame([{k: v * x for k, v in comp.items()} for x in f])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        aw = model.activity(df, t).water_activity
    assert np.all(np.diff(aw) < 0)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.dictionaries(st.sampled_from(["Na", "K", "Mg", "Cl", "SO4", "Xx", "Na+", "so4--", ""]),
                       st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=3),
                                 st.none()), min_size=0, max_size=5),
       st.one_of(st.floats(-50, 200), st.just(float("nan"))))
def test_no_unhandled_exception_on_arbitrary_input(values, t):
    """Every failure on arbitrary input is one of phasekit's own errors."""
    model = pk.default_model()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for call in (lambda: model.activity(values, t), lambda: model.saturation(values, t),
                     lambda: model.equilibrate(values, t)):
            try:
                call()
            except PhasekitError:
                pass


@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(brines(max_total=1.5), st.floats(10.0, 60.0))
def test_evaporation_path_conserves_mass(comp, t):
    model = pk.default_model()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            res = pk.evaporate(comp, t, concentration_factor=30)
        except PhasekitError:
            return
    last = res.steps.iloc[-1]
    prec = res.precipitated.iloc[-1] if len(res.precipitated.columns) else pd.Series(dtype=float)
    for s, total in comp.items():
        solid = sum(n * model.solid_stoichiometry(k).get(s, 0) for k, n in prec.items())
        assert last["liquid_water_kg"] * last[s] + solid == pytest.approx(total, rel=1e-9)
    # concentration factor and water removed move together
    assert np.all(np.diff(res.steps["water_removed_fraction"]) >= -1e-15)
