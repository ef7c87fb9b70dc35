"""Diagrams: self-consistency of traced curves and invariant points, export, figures, bad input.

Saturation indices are recomputed here from the reported compositions through the public
activity model (``model.compute`` and ``model.solids``), independently of the tracing code.
"""

import struct
import warnings

import numpy as np
import pandas as pd
import pytest

import phasekit as pk
from phasekit.chemistry.salts import parse_salt
from phasekit.errors import InputError, RangeError

SYSTEMS_25 = [("NaCl", "KCl"), ("KCl", "MgCl2"), ("NaCl", "Na2SO4"), ("K2SO4", "MgSO4"), ("Na2SO4", "MgSO4"),
              ("KCl", "K2SO4"), ("MgCl2", "MgSO4"), ("NaCl", "MgCl2")]


@pytest.fixture(scope="module")
def isotherms():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return {s: pk.isotherm(list(s), 25.0, metastable=True) for s in SYSTEMS_25}


def _ion_rows(model, salts, df):
    m = np.zeros((len(df), len(model.species)))
    for salt in salts:
        for ion, n in parse_salt(salt).items():
            m[:, model.index[ion]] += n * df[f"{salt}_molality"].to_numpy()
    return m


def _si(model, m, temp_c):
    ln_g, _, ln_aw, _, _ = model.compute(m, temp_c)
    with np.errstate(divide="ignore", invalid="ignore"):
        li = model.solids.ln_iap(m, ln_g, ln_aw)
    return (li - model.solids.ln_k(temp_c)[None, :]) / np.log(10.0)


@pytest.mark.parametrize("salts", SYSTEMS_25)
def test_every_curve_point_is_saturated_with_its_solid(model, isotherms, salts):
    iso = isotherms[salts]
    si = _si(model, _ion_rows(model, salts, iso.curves), 25.0)
    k = [model.solids.index[s] for s in iso.curves["solid"]]
    own = si[np.arange(len(k)), k]
    assert np.max(np.abs(own)) < 1e-9
    assert len(iso.curves) > 10


@pytest.mark.parametrize("salts", SYSTEMS_25)
def test_stable_curves_are_undersaturated_in_every_other_solid(model, isotherms, salts):
    iso = isotherms[salts]
    st = iso.curves[~iso.curves["metastable"]]
    si = _si(model, _ion_rows(model, salts, st), 25.0)
    own = [model.solids.index[s] for s in st["solid"]]
    si[np.arange(len(own)), own] = -np.inf
    assert np.nanmax(si) < 1e-9


@pytest.mark.parametrize("salts", SYSTEMS_25)
def test_invariant_points_two_solids_exactly_saturated(model, isotherms, salts):
    iso = isotherms[salts]
    assert len(iso.invariant_points) >= 1
    si = _si(model, _ion_rows(model, salts, iso.invariant_points), 25.0)
    for i, solids in enumerate(iso.invariant_points["solids"]):
        # phase rule: C = 3 (two salts, water), fixed T and P -> P = 3 phases: liquid + two solids
        assert isinstance(solids, tuple) and len(solids) == 2
        k = [model.solids.index[s] for s in solids]
        assert np.max(np.abs(si[i, k])) < 1e-10
        others = np.delete(si[i], k)
        assert np.nanmax(others) < 1e-9
        # the two solids' compositions are independent (no reaction among solids alone)
        mat = np.array([np.append(model.solids.nu[j], model.solids.nw[j]) for j in k])
        assert np.linalg.matrix_rank(mat) == 2


@pytest.mark.parametrize("salts", SYSTEMS_25)
def test_curves_end_exactly_on_their_invariant_points(isotherms, salts):
    iso = isotherms[salts]
    A, B = salts
    st = iso.curves[~iso.curves["metastable"]]
    ends = []
    for _, c in st.groupby("curve"):
        for r in (c.iloc[0], c.iloc[-1]):
            ends.append((r["solid"], r[f"{A}_molality"], r[f"{B}_molality"]))
    for _, p in iso.invariant_points.iterrows():
        for solid in p["solids"]:
            d = [abs(a - p[f"{A}_molality"]) + abs(b - p[f"{B}_molality"]) for s, a, b in ends if s == solid]
            assert d and min(d) < 1e-12


@pytest.mark.parametrize("salts", [("NaCl", "KCl"), ("KCl", "MgCl2"), ("NaCl", "MgCl2")])
def test_curves_end_on_the_binary_solubilities(isotherms, salts):
    iso = isotherms[salts]
    st = iso.curves[~iso.curves["metastable"]].sort_values(["curve", "point"])
    for salt, row in ((salts[0], st.iloc[0]), (salts[1], st.iloc[-1])):
        ref = pk.solubility(salt, 25.0)
        assert row["solid"] == ref.solid
        assert row[f"{salt}_molality"] == pytest.approx(ref.molality, rel=1e-8)
        other = salts[1] if salt == salts[0] else salts[0]
        assert row[f"{other}_molality"] == pytest.approx(0.0, abs=1e-12)


def test_mass_percent_and_g_per_100g_are_consistent(isotherms):
    iso = isotherms[("NaCl", "KCl")]
    c = iso.curves
    tot = c["NaCl_mass_percent"] + c["KCl_mass_percent"] + c["water_mass_percent"]
    assert np.allclose(tot, 100.0, atol=1e-10)
    g = c["NaCl_g_per_100g_water"] + c["KCl_g_per_100g_water"]
    assert np.allclose(c["water_mass_percent"], 100 * 100 / (100 + g), rtol=1e-12)
    from phasekit.chemistry.salts import salt_formula_mass

    assert np.allclose(c["KCl_g_per_100g_water"], c["KCl_molality"] * salt_formula_mass("KCl") / 10, rtol=1e-12)


def test_eutonic_and_transition_point_of_carnallite(isotherms):
    inv = isotherms[("KCl", "MgCl2")].invariant_points.set_index("solids")
    # carnallite dissolves incongruently: its point with sylvite lies outside the salt ratios of the two
    assert inv.loc[[("carnallite", "sylvite")], "kind"].iloc[0] == "transition point"
    assert inv.loc[[("bischofite", "carnallite")], "kind"].iloc[0] == "eutonic"


def test_metastable_extensions_are_marked_and_leave_stable_part_unchanged(model, isotherms):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        plain = pk.isotherm(["KCl", "MgCl2"], 25.0)
    full = isotherms[("KCl", "MgCl2")]
    assert not plain.curves["metastable"].any()
    meta = full.curves[full.curves["metastable"]]
    assert len(meta) > 0
    st = full.curves[~full.curves["metastable"]].reset_index(drop=True)
    pd.testing.assert_frame_equal(st, plain.curves.reset_index(drop=True))
    # every metastable extension starts at an invariant point
    inv = full.invariant_points
    for _, c in meta.groupby("curve"):
        r = c.iloc[0]
        d = np.abs(inv["KCl_molality"] - r["KCl_molality"]) + np.abs(inv["MgCl2_molality"] - r["MgCl2_molality"])
        assert d.min() < 1e-12
        # a metastable branch is supersaturated in some other solid beyond its start
        si = _si(model, _ion_rows(model, ("KCl", "MgCl2"), c.iloc[1:]), 25.0)
        own = model.solids.index[r["solid"]]
        si[:, own] = -np.inf
        assert np.nanmax(si) > 0


def test_fields_and_tie_lines_end_at_the_solid_points(isotherms):
    iso = isotherms[("KCl", "MgCl2")]
    sp = iso.solid_points.set_index("solid")
    for solid, f in iso.fields[iso.fields["kind"] == "crystallization field"].groupby("field"):
        last = f.iloc[-1]
        assert last["KCl_mass_percent"] == pytest.approx(sp.loc[solid, "KCl_mass_percent"])
        assert last["water_mass_percent"] == pytest.approx(sp.loc[solid, "water_mass_percent"])
    tl = iso.tie_lines
    assert set(tl["solid"]) == {"sylvite", "carnallite", "bischofite"}
    for _, t in tl.groupby("tie_line"):
        assert list(t["end"]) == ["liquid", "solid"]
    # carnallite KMgCl3·6H2O: 26.8 % KCl, 34.3 % MgCl2 by formula
    assert sp.loc["carnallite", "KCl_mass_percent"] == pytest.approx(26.83, abs=0.01)
    assert sp.loc["carnallite", "MgCl2_mass_percent"] == pytest.approx(34.27, abs=0.01)


def test_exclude_gives_the_metastable_diagram():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        iso = pk.isotherm(["NaCl", "Na2SO4"], 25.0, exclude=["thenardite"])
    assert "thenardite" not in set(iso.curves["solid"])
    assert iso.stable_sequence == ["halite", "mirabilite"]


# ------------------------------------------------------------------- export
@pytest.mark.parametrize("how", ["dir", "file", "json"])
def test_export_round_trip_gives_the_same_numbers(tmp_path, isotherms, how):
    iso = isotherms[("KCl", "MgCl2")]
    if how == "dir":
        iso.to_csv(tmp_path / "out")
        back = pk.read_diagram(tmp_path / "out")
    elif how == "file":
        iso.to_csv(tmp_path / "iso.csv")
        back = pk.read_diagram(tmp_path / "iso.csv")
    else:
        back = pk.read_diagram(iso.to_json())
    assert back.kind == "isotherm"
    assert back.meta()["salts"] == ["KCl", "MgCl2"] and back.meta()["temp_c"] == 25.0
    for name in iso.table_names:
        a = getattr(iso, name).reset_index(drop=True)
        b = getattr(back, name).reset_index(drop=True)
        assert list(a.columns) == list(b.columns), name
        for c in a.columns:
            if a[c].dtype.kind in "fi":
                assert np.array_equal(a[c].to_numpy(dtype=float), b[c].to_numpy(dtype=float)), (name, c)
            else:
                assert list(a[c]) == list(b[c]), (name, c)


def test_projection_and_polytherm_export_round_trip(tmp_path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        rec = pk.reciprocal_isotherm(25.0)
        pol = pk.ternary_polytherm(["NaCl", "Na2SO4"], 10, 25, 5)
    for res in (rec, pol):
        back = pk.read_diagram(res.to_json(tmp_path / f"{res.kind}.json"))
        for name in res.table_names:
            a, b = getattr(res, name), getattr(back, name)
            num = [c for c in a.columns if a[c].dtype.kind in "fi"]
            assert np.array_equal(a[num].to_numpy(dtype=float), b[num].to_numpy(dtype=float), equal_nan=True)
        res.to_csv(tmp_path / res.kind)
        back = pk.read_diagram(tmp_path / res.kind)
        if "invariant_points" in res.table_names and len(res.invariant_points):
            assert list(back.invariant_points["solids"]) == list(res.invariant_points["solids"])


# ----------------------------------------------------------------- polytherm
def test_polytherm_transition_is_a_point_saturated_with_three_solids(model):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        pol = pk.ternary_polytherm(["NaCl", "Na2SO4"], 5, 40, 5)
    b = pol.transitions[pol.transitions["kind"] == "binary transition point"]
    assert len(b) == 1 and set(b.iloc[0]["solids"]) == {"mirabilite", "thenardite"}
    assert b.iloc[0]["NaCl_molality"] == 0.0
    si_b = _si(model, _ion_rows(model, ("NaCl", "Na2SO4"), b), float(b.iloc[0]["temp_c"]))[0]
    for s in ("mirabilite", "thenardite"):
        assert abs(si_b[model.solids.index[s]]) < 1e-6
    q = pol.transitions[pol.transitions["kind"] == "quadruple point"]
    assert len(q) == 1
    r = q.iloc[0]
    assert set(r["solids"]) == {"halite", "mirabilite", "thenardite"}
    assert 5 < r["temp_c"] < b.iloc[0]["temp_c"]
    m = _ion_rows(model, ("NaCl", "Na2SO4"), q)
    si = _si(model, m, float(r["temp_c"]))[0]
    for s in r["solids"]:
        assert abs(si[model.solids.index[s]]) < 1e-6  # the temperature is root-found to 1e-7 °C
    # grid isotherms on both sides hold the two assemblages
    below = pol.invariant_points[pol.invariant_points["temp_c"] < r["temp_c"]]
    above = pol.invariant_points[pol.invariant_points["temp_c"] > r["temp_c"]]
    assert ("halite", "mirabilite") in set(below["solids"])
    assert ("halite", "thenardite") in set(above["solids"])


# --------------------------------------------------------------- projections
def test_projection_invariant_points_obey_the_phase_rule(model):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        rec = pk.reciprocal_isotherm(25.0)
        sea = pk.seawater_isotherm(25.0)
    for res, n_solids, ions in ((rec, 3, ["Na", "K", "Cl", "SO4"]), (sea, 4, ["Na", "K", "Mg", "Cl", "SO4"])):
        inv = res.invariant_points
        assert len(inv) >= 3
        m = np.zeros((len(inv), len(model.species)))
        for ion in ions:
            m[:, model.index[ion]] = inv[f"{ion}_molality"]
        si = _si(model, m, 25.0)
        for i, solids in enumerate(inv["solids"]):
            assert len(solids) == n_solids  # C = n_solids + 1 components; P = C phases
            k = [model.solids.index[s] for s in solids]
            assert np.max(np.abs(si[i, k])) < 1e-10
            assert np.nanmax(np.delete(si[i], k)) < 1e-9
        # every boundary point is saturated with its solids
        c = res.curves
        mc = np.zeros((len(c), len(model.species)))
        for ion in ions:
            mc[:, model.index[ion]] = c[f"{ion}_molality"]
        sic = _si(model, mc, 25.0)
        for i, solids in enumerate(c["solids"]):
            k = [model.solids.index[s] for s in solids]
            assert np.max(np.abs(sic[i, k])) < 1e-9
        assert res.fields.groupby("field").size().min() >= 3
        assert not [w for w in res.warnings if "does not close" in w]


# -------------------------------------------------------------------- paths
def test_path_argument_is_drawn_and_checked(tmp_path, isotherms):
    iso = isotherms[("KCl", "MgCl2")]
    path = pd.DataFrame({"K": [1.0, 0.8], "Mg": [1.0, 2.0], "Cl": [3.0, 4.8], "step": [0, 1]})
    fig = pk_plotting().ternary_figure(iso, path=path)
    assert any(t.name == "path" for t in fig.data)
    fig = pk_plotting().rectangular_figure(iso, path={"pond A": path}, units="molality")
    tr = [t for t in fig.data if t.name == "pond A"][0]
    assert np.allclose(tr.x, [1.0, 0.8]) and np.allclose(tr.y, [1.0, 2.0])
    with pytest.raises(InputError, match="path"):
        pk_plotting().ternary_figure(iso, path=pd.DataFrame({"step": [1, 2]}))
    with pytest.raises(InputError, match="path"):
        pk_plotting().ternary_figure(iso, path=[1, 2])
    # a cooling path on a polytherm needs its temperatures
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        pol = pk.ternary_polytherm(["NaCl", "KCl"], 20, 60, 20)
    cool = pd.DataFrame({"temp_c": [60.0, 40.0], "Na": [5.0, 5.2], "K": [3.0, 2.5]})
    cool["Cl"] = cool["Na"] + cool["K"]
    fig = pk_plotting().polytherm_figure(pol, path=cool)
    assert [t for t in fig.data if t.name == "path: KCl"][0].x.tolist() == [60.0, 40.0]
    f = pk_plotting().save_polytherm(pol, tmp_path / "p.png", path=cool)
    assert f.stat().st_size > 5_000
    with pytest.raises(InputError, match="temp_c"):
        pk_plotting().polytherm_figure(pol, path=path)


def pk_plotting():
    import phasekit.plotting as pl

    return pl


# ------------------------------------------------------------------ figures
def _png_size(path):
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    w, h = struct.unpack(">II", data[16:24])
    return w, h


def test_figures_render_to_files(tmp_path, isotherms):
    pl = pk_plotting()
    iso = isotherms[("KCl", "MgCl2")]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        rec = pk.reciprocal_isotherm(25.0)
        sea = pk.seawater_isotherm(25.0)
        pol = pk.ternary_polytherm(["NaCl", "KCl"], 0, 100, 25)
    path = pd.DataFrame({"K": [1.0, 0.8], "Mg": [1.0, 2.0], "Cl": [3.0, 4.8]})
    plotly_figs = {
        "ternary": pl.ternary_figure(iso, path=path),
        "rect_g": pl.rectangular_figure(iso, units="g_per_100g_water"),
        "rect_m": pl.rectangular_figure(iso, units="molality"),
        "reciprocal": pl.jaenecke_figure(rec),
        "seawater": pl.jaenecke_figure(sea),
        "polytherm": pl.polytherm_figure(pol),
    }
    for name, fig in plotly_figs.items():
        f = pl.save_figure(fig, tmp_path / f"{name}.png", width=700, height=600)
        w, h = _png_size(f)
        assert (w, h) == (700, 600) and f.stat().st_size > 10_000, name
    for ext in ("png", "svg", "pdf"):
        files = [pl.save_ternary(iso, tmp_path / f"t.{ext}", path=path),
                 pl.save_rectangular(iso, tmp_path / f"r.{ext}", units="molality"),
                 pl.save_jaenecke(sea, tmp_path / f"j.{ext}"),
                 pl.save_jaenecke(rec, tmp_path / f"k.{ext}"),
                 pl.save_polytherm(pol, tmp_path / f"p.{ext}")]
        for f in files:
            data = f.read_bytes()
            assert len(data) > 5_000, f
            if ext == "png":
                w, h = _png_size(f)
                assert w > 600 and h > 500
            elif ext == "svg":
                assert b"<svg" in data[:2000]
            else:
                assert data[:5] == b"%PDF-"


def test_figures_of_a_diagram_read_back(tmp_path, isotherms):
    pl = pk_plotting()
    back = pk.read_diagram(isotherms[("NaCl", "KCl")].to_json())
    fig = pl.ternary_figure(back)
    assert len(fig.data) > 3
    f = pl.save_rectangular(back, tmp_path / "r.png")
    assert f.stat().st_size > 5_000


# ---------------------------------------------------------------- bad input
@pytest.mark.parametrize("salts, field", [
    (["NaCl", "K2SO4"], "salts"),  # no common ion
    (["NaCl", "NaCl"], "salts"),
    (["NaCl"], "salts"),
    ("NaCl", "salts"),
    (["NaCl", "KBr"], "salts[1]"),  # not in the database
    (["Unobtainium", "KCl"], "salts[0]"),
    (["LiNO3", "KNO3"], "salts[0]"),  # a valid pair, but LiNO3 has no solid in the database
])
def test_bad_salts_raise_input_error_naming_the_field(salts, field):
    with pytest.raises(InputError) as err:
        pk.isotherm(salts, 25.0)
    assert err.value.field == field
    assert str(err.value).startswith(f"{field}: got ")


@pytest.mark.parametrize("temp", [-5.0, 120.0, 400.0])
def test_temperature_out_of_range_raises_range_error(temp):
    with pytest.raises(RangeError) as err:
        pk.isotherm(["NaCl", "KCl"], temp)
    assert err.value.field == "temp_c" and "°C" in err.value.expected
    with pytest.raises(RangeError):
        pk.reciprocal_isotherm(temp)
    with pytest.raises(RangeError):
        pk.seawater_isotherm(temp)


def test_other_bad_input():
    with pytest.raises(InputError, match="temp_c"):
        pk.isotherm(["NaCl", "KCl"], "warm")
    with pytest.raises(InputError, match="exclude"):
        pk.isotherm(["NaCl", "KCl"], 25, exclude=["kryptonite"])
    with pytest.raises(InputError, match="t_max_c"):
        pk.ternary_polytherm(["NaCl", "KCl"], 50, 20)
    with pytest.raises(RangeError, match="t_max_c"):
        pk.ternary_polytherm(["NaCl", "KCl"], 0, 130)
    with pytest.raises(InputError, match="step_c"):
        pk.ternary_polytherm(["NaCl", "KCl"], 0, 50, -1)
    with pytest.raises(InputError, match="exclude"):
        pk.seawater_isotherm(25, exclude=["halite"])
    with pytest.raises(InputError, match="path"):
        pk.read_diagram("/nonexistent/diagram.json")


def test_bad_figure_arguments(tmp_path, isotherms):
    pl = pk_plotting()
    iso = isotherms[("NaCl", "KCl")]
    with pytest.raises(InputError, match="units"):
        pl.rectangular_figure(iso, units="furlongs")
    with pytest.raises(InputError, match="file"):
        pl.save_ternary(iso, tmp_path / "x.bmp")
    with pytest.raises(InputError, match="file"):
        pl.save_figure(pl.ternary_figure(iso), tmp_path / "x.txt")


@pytest.mark.parametrize("salts, temp", [(("MgCl2", "MgSO4"), 0.0), (("K2SO4", "MgSO4"), 50.0),
                                         (("NaCl", "Na2SO4"), 10.0), (("KCl", "MgCl2"), 50.0)])
def test_self_consistency_at_other_temperatures(model, salts, temp):
    # also through folds of a hydrate's curve (at 0 °C the epsomite curve of MgCl2–MgSO4–H2O turns
    # back in x: its saturation index falls again along the rays as a_w^7 drops)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        iso = pk.isotherm(list(salts), temp)
    c = iso.curves
    si = _si(model, _ion_rows(model, salts, c), temp)
    own = [model.solids.index[s] for s in c["solid"]]
    assert np.max(np.abs(si[np.arange(len(own)), own])) < 1e-9
    si[np.arange(len(own)), own] = -np.inf
    assert np.nanmax(si) < 1e-9
    inv = iso.invariant_points
    si = _si(model, _ion_rows(model, salts, inv), temp)
    for i, solids in enumerate(inv["solids"]):
        assert np.max(np.abs(si[i, [model.solids.index[s] for s in solids]])) < 1e-10
