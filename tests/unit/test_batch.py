"""Batch runs: first onset on evaporation, rows kept and marked, identical results on every executor."""

import os
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import phasekit as pk
from phasekit.batch import first_onset, read_source, run_batch
from phasekit.errors import InputError

SOLIDS = pk.default_model().solids.names

# invented analyses of the demo scenario's brines (mg/kg): a seawater-like intake, a pond brine
# concentrated past gypsum, and a bittern-like brine
GOOD = [
    ("Intake-A", "10780", "399", "1290", "412", "19350", "2710"),
    ("Heron-2", "43100", "1600", "5150", "980", "77400", "10800"),
    ("Heron-4", "61000", "14800", "36000", "120", "166000", "36500"),
]
COLUMNS = ["sample", "Na", "K", "Mg", "Ca", "Cl", "SO4"]


def _frame(rows):
    return pd.DataFrame(rows, columns=COLUMNS)


def _csv(tmp_path, rows, name="analyses.csv"):
    path = tmp_path / name
    _frame(rows).to_csv(path, index=False)
    return path


def _vector(model, brine):
    v = np.zeros(len(model.species))
    for s, x in brine.molalities.items():
        v[model.index[s]] = x
    return v


# ------------------------------------------------------------------------------ first onset
@pytest.mark.parametrize("brine", [
    pk.Brine({"Na": 1.0, "Cl": 1.0}),
    pk.Brine({"K": 1.5, "Cl": 1.5}),
    pk.Brine({"Na": 2.0, "SO4": 1.0}),
    pk.Brine({"Mg": 1.0, "Cl": 2.0}),
])
def test_first_onset_matches_the_evaporation_path(model, brine):
    onset = first_onset(model, _vector(model, brine)[None, :], 25.0)
    path = pk.evaporate(brine, temp_c=25.0).first_solid
    assert SOLIDS[onset.solid[0]] == path["solid"]
    assert onset.concentration_factor[0] == pytest.approx(path["concentration_factor"], rel=1e-8)
    assert not onset.at_start[0]


def test_first_onset_of_a_seawater_like_brine_matches_the_path(model):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        brine = pk.Brine.from_analysis(dict(zip(COLUMNS[1:], map(float, GOOD[0][1:]))), units="mg/kg").balance(on="Cl")
    onset = first_onset(model, _vector(model, brine)[None, :], 25.0)
    path = pk.evaporate(brine, temp_c=25.0, concentration_factor=5.0).first_solid
    assert SOLIDS[onset.solid[0]] == path["solid"] == "gypsum"
    assert onset.concentration_factor[0] == pytest.approx(path["concentration_factor"], rel=1e-8)


def test_first_onset_does_not_depend_on_the_other_rows(model):
    rows = np.array([_vector(model, pk.Brine({"Na": x, "Cl": x})) for x in (0.5, 1.0, 2.0, 4.0)])
    together = first_onset(model, rows, 25.0)
    for i in range(len(rows)):
        alone = first_onset(model, rows[i:i + 1], 25.0)
        assert alone.concentration_factor[0] == together.concentration_factor[i]  # bit for bit
    # halite saturates at one molality: CF x m is the same for every row
    assert np.allclose(together.concentration_factor * np.array([0.5, 1, 2, 4]),
                       together.concentration_factor[0] * 0.5, rtol=1e-10)


def test_a_supersaturated_brine_is_flagged(model):
    onset = first_onset(model, _vector(model, pk.Brine({"Na": 7.0, "Cl": 7.0}))[None, :], 25.0)
    assert onset.at_start[0] and onset.solid[0] == -1


# ------------------------------------------------------------------------------ rows
def test_values_of_a_good_row_are_the_library_values(model, tmp_path):
    res = run_batch(_csv(tmp_path, GOOD), "mg/kg", 25.0)
    assert list(res.table.columns[:3]) == ["sample", "status", "error"]
    assert [c for c in res.table.columns if c.startswith("si_")] == [f"si_{s}" for s in SOLIDS]
    assert res.n_failed == 0 and list(res.table["sample"]) == [r[0] for r in GOOD]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        raw = pk.Brine.from_analysis(dict(zip(COLUMNS[1:], map(float, GOOD[0][1:]))), units="mg/kg")
        balanced = raw.balance(on="Cl")  # cations in excess: auto increases the major anion
        sat = model.saturation(balanced, 25.0, amounts=False)
    row = res.table.iloc[0]
    assert row["charge_balance_percent"] == pytest.approx(raw.charge_balance(), abs=1e-12)
    assert row["balanced_on"].startswith("balanced on Cl")
    for solid in sat.index:
        assert row[f"si_{solid}"] == pytest.approx(sat.loc[solid, "saturation_index"], abs=1e-12)
        assert row[f"state_{solid}"] == sat.loc[solid, "state"]
    path = pk.evaporate(balanced, temp_c=25.0, concentration_factor=6.0).first_solid
    assert row["first_solid"] == path["solid"]
    assert row["first_solid_concentration_factor"] == pytest.approx(path["concentration_factor"], rel=1e-8)
    assert row["first_solid_water_removed_fraction"] == pytest.approx(1 - 1 / path["concentration_factor"])


def test_bad_rows_are_kept_marked_and_counted(tmp_path):
    rows = [GOOD[0],
            ("Bad-text", "abc", "399", "1290", "412", "19350", "2710"),
            ("Bad-negative", "10780", "-4", "1290", "412", "19350", "2710"),
            ("Bad-empty", "10780", "399", "", "412", "19350", "2710"),
            ("Bad-balance", "30000", "399", "1290", "412", "100", "2710"),
            ("Zero", "0", "0", "0", "0", "0", "0"),
            GOOD[1]]
    res = run_batch(_csv(tmp_path, rows), "mg/kg", 25.0)
    t = res.table
    assert list(t["sample"]) == [r[0] for r in rows]  # all kept, in order
    assert list(t["status"]) == ["ok", "error", "error", "error", "error", "error", "ok"]
    assert res.n_failed == 5
    err = dict(zip(t["sample"], t["error"]))
    assert "row 'Bad-text': column['Na']" in err["Bad-text"] and "'abc'" in err["Bad-text"]
    assert "column['K']" in err["Bad-negative"] and "'-4'" in err["Bad-negative"]
    assert "column['Mg']" in err["Bad-empty"] and "missing" in err["Bad-empty"]
    assert "charge balance" in err["Bad-balance"]
    assert "Zero" in err["Zero"]
    failed = t[t["status"] == "error"]
    assert failed["first_solid"].eq("").all() and failed["first_solid_concentration_factor"].isna().all()
    assert t.loc[0, "error"] == "" and t.loc[6, "first_solid"] != ""


def test_missing_as_zero_and_balance_none(tmp_path):
    rows = [("A", "10780", "399", "", "412", "19350", "2710")]
    res = run_batch(_csv(tmp_path, rows), "mg/kg", 25.0, missing="zero")
    assert res.table.loc[0, "status"] == "ok" and np.isnan(res.table.loc[0, "si_epsomite"])
    res = run_batch(_csv(tmp_path, rows), "mg/kg", 25.0, missing="zero", balance_on="none")
    assert res.table.loc[0, "status"] == "error" and "electrically neutral" in res.table.loc[0, "error"]


def test_supersaturated_row_reports_the_solids_that_form_at_once(tmp_path):
    rows = [("Salt-cake", "7.0", "0", "0", "0", "7.0", "0")]
    res = run_batch(_csv(tmp_path, rows), "mol/kg", 25.0)
    row = res.table.iloc[0]
    assert row["first_solid"] == "halite" and row["first_solid_concentration_factor"] == 1.0
    assert row["state_halite"] == "supersaturated" and "supersaturated as given" in row["notes"]


def test_duplicate_ids_are_kept_and_rows_named_by_number(tmp_path):
    rows = [GOOD[0], ("Intake-A", "abc", "399", "1290", "412", "19350", "2710")]
    res = run_batch(_csv(tmp_path, rows), "mg/kg", 25.0)
    assert list(res.table["sample"]) == ["Intake-A", "Intake-A"]
    assert res.table.loc[1, "error"].startswith("row 2: column['Na']")
    assert any("rows 1 and 2" in w for w in res.warnings)


def test_xlsx_input_gives_the_csv_result(tmp_path):
    csv = _csv(tmp_path, GOOD)
    xlsx = tmp_path / "analyses.xlsx"
    _frame([(r[0], *map(float, r[1:])) for r in GOOD]).to_excel(xlsx, index=False)
    a = run_batch(csv, "mg/kg", 25.0).table
    b = run_batch(xlsx, "mg/kg", 25.0).table
    pd.testing.assert_frame_equal(a, b)


# ------------------------------------------------------------------------------ executors
def _mixed_rows(n=40):
    rng = np.random.default_rng(3)
    rows = []
    for i in range(n):
        f = rng.uniform(0.5, 4.0)
        vals = [float(v) * f * rng.uniform(0.95, 1.05) for v in GOOD[0][1:]]
        rows.append((f"W-{i:03d}", *[f"{v:.1f}" for v in vals]))
    rows[5] = ("W-005", "n/a", *rows[5][2:])
    return rows


def test_chunking_and_local_processes_do_not_change_the_result(tmp_path):
    path = _csv(tmp_path, _mixed_rows())
    one = run_batch(path, "mg/kg", 25.0, chunk_rows=1000).table
    small = run_batch(path, "mg/kg", 25.0, chunk_rows=7).table
    pool = run_batch(path, "mg/kg", 25.0, chunk_rows=9, workers=2)
    pd.testing.assert_frame_equal(one, small, check_exact=True)
    pd.testing.assert_frame_equal(one, pool.table, check_exact=True)
    assert pool.executor == "2 local processes" and pool.n_failed == 1


def test_dask_local_cluster_gives_the_local_result(tmp_path):
    distributed = pytest.importorskip("dask.distributed")
    path = _csv(tmp_path, _mixed_rows())
    local = run_batch(path, "mg/kg", 25.0, chunk_rows=8)
    # two worker threads in this process, talking over TCP on the loopback (as a real cluster does)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False, protocol="tcp://",
                                  host="127.0.0.1", dashboard_address=None) as cl, \
            distributed.Client(cl) as client:
        by_client = run_batch(path, "mg/kg", 25.0, chunk_rows=8, scheduler=client)
        by_address = run_batch(path, "mg/kg", 25.0, chunk_rows=8, scheduler=cl.scheduler_address)
    pd.testing.assert_frame_equal(local.table, by_client.table, check_exact=True)
    pd.testing.assert_frame_equal(local.table, by_address.table, check_exact=True)
    assert local.table.to_csv() == by_address.table.to_csv()
    assert by_address.executor.startswith("Dask at tcp://127.0.0.1:")


def test_overlay_content_travels_to_dask_workers(tmp_path, test_overlays):
    distributed = pytest.importorskip("dask.distributed")
    path = _csv(tmp_path, GOOD)
    # an overlay in a directory that is removed before the run: the workers get its content, not its path
    ov_dir = tmp_path / "overlays"
    ov_dir.mkdir()
    ov = ov_dir / "plus.toml"
    ov.write_text(Path(test_overlays["plus"]).read_text())  # sylvite's ln K at 25 °C + 0.2 (tests/conftest.py)
    from phasekit.batch import prepare

    spec, _, _ = prepare(path, "mg/kg", 25.0, overlays=[ov])
    ov.unlink()
    base = run_batch(path, "mg/kg", 25.0, chunk_rows=1)
    local = run_batch(path, "mg/kg", 25.0, chunk_rows=1, overlays=list(spec.overlays))
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False, protocol="tcp://",
                                  host="127.0.0.1", dashboard_address=None) as cl:
        remote = run_batch(path, "mg/kg", 25.0, chunk_rows=1, overlays=list(spec.overlays),
                           scheduler=cl.scheduler_address)
    pd.testing.assert_frame_equal(local.table, remote.table, check_exact=True)
    assert local.database == remote.database == "embedded database + overlay test sylvite +0.2"
    assert base.database == "embedded database"
    shift = (local.table["si_sylvite"] - base.table["si_sylvite"]).to_numpy(float)
    assert np.allclose(shift, -0.2 / np.log(10), atol=1e-9)
    assert not any("another phasekit version" in w for w in remote.warnings)


# ------------------------------------------------------------------------------ bad input
def test_bad_tables_and_arguments_are_refused_with_the_field_named(tmp_path):
    good = _csv(tmp_path, GOOD)
    with pytest.raises(InputError, match="units: got 'ppm'"):
        run_batch(good, "ppm", 25.0)
    with pytest.raises(InputError, match="temp_c: got 200"):
        run_batch(good, "mg/kg", 200.0)
    with pytest.raises(InputError, match="no such file"):
        run_batch(tmp_path / "missing.csv", "mg/kg", 25.0)
    (tmp_path / "empty.csv").write_text("")
    with pytest.raises(InputError, match="file is empty"):
        run_batch(tmp_path / "empty.csv", "mg/kg", 25.0)
    (tmp_path / "header.csv").write_text("sample,Na,Cl\n")
    with pytest.raises(InputError, match="header without rows"):
        run_batch(tmp_path / "header.csv", "mg/kg", 25.0)
    (tmp_path / "odd.csv").write_text("sample,Na,Cl,Colour\nA,1,2,blue\n")
    with pytest.raises(InputError, match="column: got 'Colour'"):
        run_batch(tmp_path / "odd.csv", "mg/kg", 25.0)
    res = run_batch(tmp_path / "odd.csv", "mg/kg", 25.0, ignore_columns=["Colour"])
    assert res.n_rows == 1
    (tmp_path / "dup.csv").write_text("sample,Na,Na,Cl\nA,1,1,2\n")
    with pytest.raises(InputError, match="column: got 'Na'"):
        run_batch(tmp_path / "dup.csv", "mg/kg", 25.0)
    with pytest.raises(InputError, match="balance_on: got 'Xy'"):
        run_batch(good, "mg/kg", 25.0, balance_on="Xy")
    with pytest.raises(InputError, match="workers: got 0"):
        run_batch(good, "mg/kg", 25.0, workers=0)


def test_a_file_of_100_mb_is_refused_by_size_before_reading(tmp_path):
    big = tmp_path / "big.csv"
    with open(big, "wb") as fh:  # sparse: no 100 MB written to disk
        fh.write(b"sample,Na,Cl\n")
        fh.truncate(100 * 10**6)
    assert os.path.getsize(big) == 100 * 10**6
    with pytest.raises(InputError, match=r"100\.0 MB.*at most 64 MB"):
        read_source(big)


@pytest.mark.parametrize("molal", [
    {"Na": 7.0, "Cl": 7.0},  # halite alone
    {"Na": 6.0, "K": 2.6, "Cl": 8.6},  # halite and sylvite: the single-solid check must fail, the solver decides
    {"Na": 1.0, "Ca": 0.06, "Cl": 1.0, "SO4": 0.06},  # gypsum alone
])
def test_supersaturated_rows_report_the_solver_assemblage(model, molal):
    rows = [("X", *[str(molal.get(s, 0.0)) for s in COLUMNS[1:]])]
    res = run_batch(_frame(rows), "mol/kg", 25.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = model.equilibrate(pk.Brine(molal), 25.0)
    formed = [s for s in SOLIDS if ref.solids.get(s, 0) > 0]
    assert res.table.loc[0, "first_solid"] == "+".join(formed) != ""
    assert res.table.loc[0, "first_solid_concentration_factor"] == 1.0


def test_workers_with_another_database_are_reported(tmp_path, monkeypatch):
    from phasekit.batch import rows, runner

    real = rows.process_chunk

    def other(spec, chunk, model=None):
        out = real(spec, chunk, model)
        out.attrs["database"] = "0123456789abcdef"
        return out

    monkeypatch.setattr(runner, "process_chunk", other)
    res = run_batch(_csv(tmp_path, GOOD), "mg/kg", 25.0)
    assert any("another phasekit version or database (0123456789abcdef)" in w for w in res.warnings)
    monkeypatch.undo()
    assert not any("another phasekit" in w for w in run_batch(_csv(tmp_path, GOOD), "mg/kg", 25.0).warnings)


def test_saturation_indices_agree_with_the_library_for_every_solid(model):
    from phasekit.batch.onset import LN10, ln_saturation
    from phasekit.equilibrium.saturation import saturation_indices

    rows = np.array([_vector(model, pk.Brine(b)) for b in (
        {"Na": 1.0, "Cl": 1.0}, {"K": 0.5, "Mg": 1.0, "Cl": 2.5}, {"Na": 2.0, "Ca": 0.05, "Cl": 2.0, "SO4": 0.05},
        {"Li": 1.0, "NO3": 1.0})])
    for t in (0.0, 25.0, 75.0):
        mine, lib = ln_saturation(model, rows, t) / LN10, saturation_indices(model, rows, t)
        assert np.array_equal(np.isfinite(mine), np.isfinite(lib))
        assert np.allclose(mine[np.isfinite(lib)], lib[np.isfinite(lib)], rtol=0, atol=1e-12)
