"""Property tests: random overlays and random batch files never give an internal error; every valid
batch row is computed, every invalid one is kept and marked with its row named."""

import math
import warnings

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import phasekit as pk
from phasekit.batch import run_batch
from phasekit.errors import InputError
from phasekit.overlay import COEFF_BOUNDS, SOLID_KEYS

SRC = "invented for phasekit's tests (not a measurement)"

any_value = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**6, 10**6), st.booleans(),
    st.text(max_size=6), st.none(), st.lists(st.integers(), max_size=2), st.dictionaries(st.text(max_size=3),
                                                                                         st.floats(), max_size=2))
keys = st.sampled_from([*SOLID_KEYS, "A0", "a_3", "tmin", "stoich", "kind", "species"])


@st.composite
def solid_entries(draw):
    entry = {"name": draw(st.sampled_from(["sylvite", "halite", "new salt", ""])), "source": SRC}
    for k in draw(st.lists(keys, max_size=4, unique=True)):
        entry[k] = draw(st.one_of(any_value, st.floats(-5, 5)))
    return entry


@st.composite
def parameter_entries(draw):
    entry = {"kind": draw(st.sampled_from(["theta", "psi", "beta0", "cphi", "gamma"])),
             "species": draw(st.one_of(st.lists(st.sampled_from(["Na", "K", "Cl", "Mg", "Zz"]), max_size=3),
                                       st.text(max_size=4))),
             "source": SRC}
    for k in draw(st.lists(st.sampled_from(["a0", "a1", "a3", "A0", "t_min_c", "t_max_c", "stderr"]), max_size=3,
                           unique=True)):
        entry[k] = draw(st.one_of(any_value, st.floats(-0.05, 0.05)))
    return entry


@st.composite
def overlays(draw):
    doc = {"overlay": {"name": draw(st.sampled_from(["random", ""])), "source": SRC}}
    if draw(st.booleans()):
        doc["solid"] = draw(st.lists(solid_entries(), max_size=2))
    if draw(st.booleans()):
        doc["parameter"] = draw(st.lists(parameter_entries(), max_size=2))
    if draw(st.integers(0, 9)) == 0:
        doc["solid"] = draw(solid_entries())  # [solid] written for [[solid]]
    return doc


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(overlays())
def test_random_overlays_apply_or_are_refused_with_an_input_error(doc):
    try:
        model = pk.default_model().with_overlays(doc)
    except InputError as err:
        assert err.field and str(err)
        return
    # applied: every coefficient is finite and within the bounds, and the model computes
    for table in (model.db.solids, model.db.binary, model.db.mixing):
        for c, bound in COEFF_BOUNDS.items():
            assert table[c].abs().max() <= max(bound, 1e6)
            assert table[c].map(math.isfinite).all()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sat = model.saturation(pk.Brine({"Na": 1.0, "Cl": 1.0}), 25)
    assert len(sat) > 0


good_cell = st.floats(100, 60000).map(lambda x: f"{x:.6g}")


@st.composite
def good_pair(draw):
    """Na and Cl (mg/kg) of a plausible analysis: Cl within ±20 % of the equivalent of Na."""
    na = draw(st.floats(100, 60000))
    cl = na * 35.453 / 22.990 * draw(st.floats(0.8, 1.2))
    return [f"{na:.6g}", f"{cl:.6g}"]
bad_cell = st.sampled_from(["abc", "-5", "", "nan", "1e999", "12..5", "true"])


@st.composite
def batch_rows(draw):
    rows = []
    for i in range(draw(st.integers(1, 8))):
        kind = draw(st.sampled_from(["good", "good", "bad", "ragged"]))
        if kind == "good":
            cells = draw(good_pair())
        elif kind == "bad":
            cells = [draw(bad_cell), draw(good_cell)]
        else:
            cells = [*draw(good_pair()), draw(good_cell)]
        rows.append((f"S{i}", kind, cells))
    return rows


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                 HealthCheck.function_scoped_fixture])
@given(rows=batch_rows(), sep=st.sampled_from([",", ";", "\t"]))
def test_random_batch_files_compute_every_valid_row(tmp_path, rows, sep):
    lines = [sep.join(["sample", "Na", "Cl"])] + [sep.join([sid, *cells]) for sid, _, cells in rows]
    path = tmp_path / "w.csv"
    path.write_text("\n".join(lines) + "\n")
    res = run_batch(path, "mg/kg", 25)
    assert res.n_rows == len(rows)
    for (sid, kind, _), (_, out) in zip(rows, res.table.iterrows()):
        assert out["sample"] == sid
        if kind == "good":
            assert out["status"] == "ok", out["error"]
            assert isinstance(out["first_solid"], str) and out["first_solid"]
        else:
            assert out["status"] == "error"
            assert f"row {sid!r}" in out["error"]


@pytest.mark.parametrize("sep", [",", ";"])
def test_a_batch_file_of_only_bad_rows_is_kept_row_by_row(tmp_path, sep):
    path = tmp_path / "w.csv"
    path.write_text(sep.join(["sample", "Na", "Cl"]) + "\n" + sep.join(["A", "abc", "1"]) + "\n"
                    + sep.join(["B", "1", "2", "3"]) + "\n")
    res = run_batch(path, "mg/kg", 25)
    assert res.n_rows == 2 and res.n_failed == 2
