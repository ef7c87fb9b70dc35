"""Diagrams against the solubility literature.

Sources (every value below names one; "from memory" where it was recalled, not copied):

- LS65: Linke & Seidell 1965, "Solubilities of Inorganic and Metal-Organic Compounds",
  4th ed., vol. 2 (ACS), the ternary and reciprocal tables of the Na, K, Mg chlorides and
  sulfates (which compile D'Ans, van 't Hoff and others).
- DA33: D'Ans 1933, "Die Lösungsgleichgewichte der Systeme der Salze ozeanischer
  Salzablagerungen" (Kali-Forschungsanstalt), the 25 °C diagram of the oceanic salts at
  halite saturation.
- S79: Silcock 1979, "Solubilities of Inorganic and Organic Compounds", vol. 3 (Pergamon).

None of these data were used to fit any parameter of the database, with one exception: the solids'
ln K(T) rows marked "fitted in this project" were fitted to single-salt solubilities in water only
(data/reference/measured_binaries.csv, role=fit), the double salts' ln K are HMW84's 25 °C
values, and the Pitzer mixing parameters are HMW84's. The exception: the NaCl–KCl eutonic at
100 °C (LS65, from memory; data/reference/ternary_eutonic.csv, role=fit) fitted the curvature a2 of
C^phi of Na-Cl and K-Cl (one common coefficient, see data/reference/calibration.toml), so
its test below is a fitted value, not a check; the 25, 50 and 75 °C eutonics are the checks of that fit.
Every other check here is independent.

Tolerances:

- Eutonic compositions, ±0.6 mass-%-points per salt. HMW84's mixing parameters reproduce
  their ternary solubility data to about 2 % of the molality (HMW84 text); 2 % of 20 mass-%
  is 0.4 points; the values recalled from LS65 carry about ±0.2 points of recollection.
- Temperatures of phase changes, ±1.5 K for a binary transition, which depends on two
  separately fitted ln K(T) (thenardite's only from 40–100 °C data, with no heat-capacity
  term, extrapolated below 40 °C); ±2.0 K for the quadruple point, which inherits the
  binary's error; and ±1.0 K for the *depression* of the transition by NaCl (binary minus
  quadruple point), which does not depend on a common offset of the ln K values: it is
  10 Δln a_w divided by the slope of ln K(mirabilite) − ln K(thenardite); an error of 0.003 in
  a_w gives 0.25 K, the fitted slopes' standard errors about 0.2 K, the recalled values 0.2 K.
"""

import warnings

import numpy as np
import pytest

import phasekit as pk

pytestmark = pytest.mark.validation


def _iso(salts, t, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.isotherm(list(salts), t, **kw)


# ------------------------------------------------------------------ topology at 25 °C
@pytest.mark.parametrize("salts, sequence, source", [
    (("NaCl", "KCl"), ["halite", "sylvite"], "LS65 (from memory): simple eutonic system"),
    (("KCl", "MgCl2"), ["sylvite", "carnallite", "bischofite"], "LS65; DA33 (from memory)"),
    (("K2SO4", "MgSO4"), ["arcanite", "schoenite", "epsomite"], "LS65 (from memory): schoenite = picromerite"),
    (("NaCl", "MgCl2"), ["halite", "bischofite"], "LS65 (from memory): no double salt at 25 °C"),
    (("KCl", "K2SO4"), ["sylvite", "arcanite"], "LS65 (from memory): simple eutonic system"),
    (("NaCl", "Na2SO4"), ["halite", "thenardite", "mirabilite"],
     "LS65; S79 (from memory): above about 18 °C thenardite crystallizes next to halite"),
])
def test_stable_fields_at_25c(salts, sequence, source):
    iso = _iso(salts, 25.0)
    assert iso.stable_sequence == sequence, source


def test_bloedite_field_in_na2so4_mgso4_at_25c():
    # LS65 (from memory): at 25 °C bloedite (astrakanite) lies between the sodium sulfate
    # field(s) (mirabilite; a small thenardite field is reported next to bloedite by some
    # authors) and epsomite
    seq = _iso(("Na2SO4", "MgSO4"), 25.0).stable_sequence
    assert seq[0] == "mirabilite" and seq[-1] == "epsomite"
    i = seq.index("bloedite")
    assert seq[i - 1] in ("mirabilite", "thenardite") and seq[i + 1] == "epsomite"


def test_carnallite_dissolves_incongruently_at_25c():
    # DA33; LS65 (from memory): carnallite decomposes in water with sylvite crystallizing, i.e.
    # its invariant point with sylvite is a transition point, with bischofite a eutonic
    inv = _iso(("KCl", "MgCl2"), 25.0).invariant_points
    kinds = dict(zip(inv["solids"], inv["kind"]))
    assert kinds[("carnallite", "sylvite")] == "transition point"
    assert kinds[("bischofite", "carnallite")] == "eutonic"


def test_mirabilite_next_to_halite_below_the_quadruple_point():
    # LS65; S79 (from memory): at 0–15 °C mirabilite crystallizes with halite
    for t in (0.0, 10.0, 15.0):
        assert _iso(("NaCl", "Na2SO4"), t).stable_sequence == ["halite", "mirabilite"], t


# ---------------------------------------------------------------- compositions
@pytest.mark.parametrize("t, nacl, kcl, source", [
    (25.0, 20.4, 11.1, "LS65 (from memory)"),
    # LS65 (from memory, low confidence: recalled as part of the series between the 25 and 100 °C
    # values, and close to their linear interpolation, so these mainly check a smooth path; checks
    # of the C^phi curvature fitted to the 100 °C point)
    (50.0, 18.8, 15.1, "LS65 (from memory, low confidence)"),
    (75.0, 17.6, 18.7, "LS65 (from memory, low confidence)"),
    # fitted, not a check: this point fitted the curvature of C^phi(T) of Na-Cl and K-Cl (one common
    # coefficient on its two saturation conditions; data/reference/calibration.toml [ternary.NaCl-KCl]).
    # It is kept to show that the one-coefficient form can reach it (residuals of ln IAP - ln K of
    # +0.02 and -0.02 remain). Before that fit (C^phi with the SP77 linear slopes only) the halite
    # saturation curve turned back to the NaCl axis before sylvite saturated: no eutonic.
    (100.0, 16.8, 21.8, "LS65 (from memory); fitted, not a check"),
])
def test_nacl_kcl_eutonic(t, nacl, kcl, source):
    inv = _iso(("NaCl", "KCl"), t).invariant_points
    assert list(inv["solids"]) == [("halite", "sylvite")], source
    r = inv.iloc[0]
    assert r["kind"] == "eutonic"
    assert r["NaCl_mass_percent"] == pytest.approx(nacl, abs=0.6), source
    assert r["KCl_mass_percent"] == pytest.approx(kcl, abs=0.6), source


@pytest.mark.xfail(strict=True, reason=(
    "sylvite's ln IAP turns over at 11.7 mol/kg of each salt in the 1:1 mixture (I = 23.4 mol/kg, above the "
    "database's validity limit of 20 mol/kg): with the binaries calibrated on the read CRC98 solubilities the "
    "C^phi flattening fitted to the 100 °C eutonic has its turning temperature T* at 80 °C (data/pitzer_binary.csv), "
    "so C^phi rises again by 100 °C. Halite and the single salts rise over the whole range."))
def test_halite_and_sylvite_saturation_indices_rise_with_molality_at_100c():
    # common practice (no source): a saturation index rises with the salt's molality; with the
    # linear C^phi(T) the 100 °C halite SI turned over in NaCl–KCl mixtures (a second root near
    # 22 mol/kg). Single salts and the 1:1 mixture, 0.1–12 mol/kg of each salt.
    model = pk.default_model()
    ms = np.linspace(0.1, 12.0, 120)
    for ions in ({"Na": 1}, {"K": 1}, {"Na": 1, "K": 1}):
        m = np.zeros((len(ms), len(model.species)))
        for sp in ions:
            m[:, model.index[sp]] = ms
        m[:, model.index["Cl"]] = ms * len(ions)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ln_g, _, ln_aw, _, _ = model.compute(m, 100.0)
        iap = model.solids.ln_iap(m, ln_g, ln_aw)
        for solid in ("halite", "sylvite"):
            if solid == "halite" and "Na" not in ions or solid == "sylvite" and "K" not in ions:
                continue
            assert np.all(np.diff(iap[:, model.solids.index[solid]]) > 0), (ions, solid)


# ------------------------------------------------------------------ polytherm
@pytest.fixture(scope="module")
def sodium_polytherm():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.ternary_polytherm(["NaCl", "Na2SO4"], 0.0, 40.0, 5.0)


def test_halite_mirabilite_thenardite_quadruple_point(sodium_polytherm):
    tr = sodium_polytherm.transitions
    q = tr[tr["kind"] == "quadruple point"]
    assert len(q) == 1
    assert set(q.iloc[0]["solids"]) == {"halite", "mirabilite", "thenardite"}
    # LS65; S79 (from memory): 17.9 °C. Finding: the model gives about 16.2 °C, 1.7 K low — most
    # of it the 0.6–1.0 K offset of the binary transition (next test) carried over.
    assert q.iloc[0]["temp_c"] == pytest.approx(17.9, abs=2.0)


def test_mirabilite_thenardite_binary_transition(sodium_polytherm):
    tr = sodium_polytherm.transitions
    b = tr[tr["kind"] == "binary transition point"]
    assert len(b) == 1 and set(b.iloc[0]["solids"]) == {"mirabilite", "thenardite"}
    # LS65 (from memory): 32.38 °C. Finding: the model gives 31.4–31.8 °C (database versions of
    # this writing) — thenardite's ln K is fitted to 40–100 °C data only, without a heat-capacity
    # term, and extrapolated below 40 °C; reported to the database owner.
    assert b.iloc[0]["temp_c"] == pytest.approx(32.38, abs=1.5)


@pytest.mark.xfail(strict=False, reason=(
    "finding: the model lowers the transition by 15.1–15.5 K (database versions of this writing) "
    "against 14.5 K; with the current database the excess (1.03 K) is just beyond the ±1.0 K "
    "tolerance. The depression follows from 10 ln a_w at halite saturation divided by the slope of "
    "ln K(mirabilite) - ln K(thenardite); that slope (the dehydration enthalpy) comes from two "
    "separately fitted a3 terms (data/solids.csv). Reported to the database owner."))
def test_nacl_lowers_the_mirabilite_thenardite_transition(sodium_polytherm):
    tr = sodium_polytherm.transitions.set_index("kind")["temp_c"]
    # LS65 (from memory): 32.38 °C in water, 17.9 °C at halite saturation: 14.5 K lower
    assert tr["binary transition point"] - tr["quadruple point"] == pytest.approx(32.38 - 17.9, abs=1.0)


# -------------------------------------------------------------- projections
@pytest.fixture(scope="module")
def reciprocal_25():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.reciprocal_isotherm(25.0)


def test_reciprocal_pair_fields_at_25c(reciprocal_25):
    # LS65; DA33 (from memory): Na+, K+ // Cl-, SO4 2- - H2O at 25 °C has the fields of halite,
    # sylvite, arcanite, glaserite, mirabilite and (small, next to halite) thenardite
    assert reciprocal_25.field_solids == sorted(
        ["halite", "sylvite", "arcanite", "glaserite", "mirabilite", "thenardite"])


def test_reciprocal_pair_invariant_points_at_25c(reciprocal_25):
    # LS65; DA33 (from memory): four points with three solids
    got = {tuple(sorted(s)) for s in reciprocal_25.invariant_points["solids"]}
    assert got == {("glaserite", "halite", "sylvite"), ("arcanite", "glaserite", "sylvite"),
                   ("glaserite", "halite", "thenardite"), ("glaserite", "mirabilite", "thenardite")}
    # glaserite spans the square: its points with sylvite lie at low sulfate (< 15 mol SO4 per
    # 100 mol anion pairs), its point with mirabilite at high sulfate (> 50); DA33 (from memory)
    inv = reciprocal_25.invariant_points.set_index(reciprocal_25.invariant_points["solids"].map(tuple))
    assert inv.loc[[("glaserite", "halite", "sylvite")], "jaenecke_SO4"].iloc[0] < 15
    assert inv.loc[[("glaserite", "mirabilite", "thenardite")], "jaenecke_SO4"].iloc[0] > 50


@pytest.fixture(scope="module")
def seawater_25():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pk.seawater_isotherm(25.0)


def test_oceanic_salts_fields_at_25c(seawater_25):
    # DA33; HMW84 (Harvie, Moller & Weare 1984, Geochim. Cosmochim. Acta 48, 723) 25 °C diagram
    # at halite saturation (from memory). Not asserted: epsomite, hexahydrite and kieserite, whose
    # fields depend on the hydrates' ln K extrapolated from 0–40, 50–65 and 80–100 °C fits; with one
    # database version of this writing the epsomite field vanished (finding: the extrapolated
    # hexahydrite ln K puts the epsomite/hexahydrite equilibrium at a_w = 0.83 at 25 °C, so the
    # halite-saturated brines, a_w < 0.75, all fall in the hexahydrite field).
    must = {"sylvite", "carnallite", "bischofite", "kainite", "schoenite", "leonite", "bloedite", "glaserite",
            "thenardite"}
    assert must <= set(seawater_25.field_solids)
    assert "halite" not in seawater_25.field_solids  # halite is everywhere: no field of its own


def test_oceanic_salts_k2_mg_side_at_25c(seawater_25):
    # DA33 (from memory): on the sulfate-free side carnallite lies between sylvite and bischofite
    sp = seawater_25.side_points
    side = {tuple(s) for s in sp.loc[sp["side"] == "K2–Mg", "solids"]}
    assert ("halite", "carnallite", "sylvite") in side
    assert ("halite", "bischofite", "carnallite") in side
    # DA33 (from memory): sylvite, carnallite and kainite meet at an invariant point
    assert ("halite", "carnallite", "kainite", "sylvite") in set(seawater_25.invariant_points["solids"])
