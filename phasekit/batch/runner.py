"""Running a batch: partitioning into chunks of rows, local processes or a Dask cluster.

The table is cut into chunks of ``chunk_rows`` consecutive rows (the cut depends on the table and
``chunk_rows`` alone). Each chunk is processed by :func:`phasekit.batch.rows.process_chunk`, in
this process (``workers=1``), in a pool of local processes, or as one task each on a Dask
distributed cluster, and the results are put back in the order of the chunks. Since a row's
result depends on that row alone, the output is the same, row for row and bit for bit, whatever
the executor, the number of workers or the chunk size.
"""

from __future__ import annotations

import math
import multiprocessing as mp
import time
import uuid
import warnings
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.batch.rows import BALANCE_POLICIES, BatchSpec, process_chunk, spec_model
from phasekit.batch.source import MAX_INPUT_MB, plan_columns, read_source, row_labels
from phasekit.chemistry.brine import Brine
from phasekit.chemistry.species import parse_species
from phasekit.errors import InputError, RangeError
from phasekit.thermo.water import T_MAX_C, T_MIN_C
from phasekit.validate import paths_or_documents, scheduler_client, whole_number

#: rows per chunk (one task): large enough that a task's overhead (~10 ms) is small next to its
#: work (~0.1 ms per row), small enough to spread 10,000 rows over a few workers
DEFAULT_CHUNK_ROWS = 500


@dataclass
class BatchResult:
    """Output of a batch run.

    Attributes
    ----------
    table : pandas.DataFrame
        One row per input row, in order (see :func:`phasekit.batch.rows.output_columns`).
    n_rows, n_failed : int
        Rows, and rows whose ``status`` is "error".
    warnings : list of str
        Validity warnings of the model and notes on the table as a whole.
    elapsed_s : float
        Wall time of the run.
    executor : str
        Where it ran ("this process", "N local processes", "Dask at ADDRESS").
    database : str
        The database the rows were computed with ("embedded database" or its overlays).
    """

    table: pd.DataFrame
    n_rows: int
    n_failed: int
    warnings: list = field(default_factory=list)
    elapsed_s: float = 0.0
    executor: str = ""
    database: str = "embedded database"


def _temp(temp_c) -> float:
    if isinstance(temp_c, bool):
        raise InputError("temp_c", temp_c, "a temperature in °C")
    try:
        t = float(temp_c)
    except (TypeError, ValueError):
        raise InputError("temp_c", temp_c, "a temperature in °C") from None
    if not math.isfinite(t) or not T_MIN_C <= t <= T_MAX_C:
        raise RangeError("temp_c", temp_c, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")
    return t


def check_balance_on(value) -> str:
    """A balancing policy ('auto', 'none') or the canonical name of an ion."""
    if isinstance(value, str) and value.strip().lower() in BALANCE_POLICIES:
        return value.strip().lower()
    try:
        return parse_species(value)
    except InputError:
        raise InputError("balance_on", value, "'auto', 'none', or an ion such as 'Cl' or 'Na'") from None


def prepare(source, units: str, temp_c: float, id_column=None, ignore_columns=(), density_column=None,
            balance_on: str = "auto", missing: str = "error", max_input_mb: float = MAX_INPUT_MB, sheet=None,
            overlays=()):
    """Check the arguments and the table; return (spec, frame with row labels, warnings).

    Raises
    ------
    InputError
        Bad units, temperature, policy, file, columns or overlays (before any row is computed).
    """
    from phasekit.overlay import read_overlay

    parsed = tuple(o if isinstance(o, dict) else read_overlay(o)
                   for o in paths_or_documents("overlays", overlays, "overlay files"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        Brine.from_analysis({"Na": 0.0}, units=units)  # the library's check (and message) of the units
    t = _temp(temp_c)
    policy = check_balance_on(balance_on)
    if missing not in ("error", "zero"):
        raise InputError("missing", missing, "'error' or 'zero'")
    read_notes: list = []
    frame = read_source(source, max_input_mb, sheet, notes=read_notes)
    species, id_col = plan_columns(frame, id_column, ignore_columns, density_column)
    labels, notes = row_labels(frame, id_col)
    notes = read_notes + notes
    frame = frame.copy()
    frame.index = pd.Index(labels, name="label")
    spec = BatchSpec(units=units.strip(), temp_c=t, species_columns=species, id_column=id_col,
                     density_column=density_column, balance_on=policy, missing=missing, overlays=parsed)
    spec_model(spec)  # an overlay that does not apply is refused here, not in every worker
    return spec, frame, notes


def chunks_of(frame: pd.DataFrame, chunk_rows: int) -> list[pd.DataFrame]:
    """Consecutive chunks of ``chunk_rows`` rows (the last may be shorter)."""
    return [frame.iloc[a:a + chunk_rows] for a in range(0, len(frame), chunk_rows)]


def _warm(spec: BatchSpec) -> None:
    """Load the model and its tables at the spec's temperature once, before worker processes are forked."""
    from phasekit.batch.onset import ln_saturation

    model = spec_model(spec)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        m = np.zeros((1, len(model.species)))
        m[0, model.index["Na"]] = m[0, model.index["Cl"]] = 1.0
        ln_saturation(model, m, spec.temp_c)


def _init_worker() -> None:
    warnings.simplefilter("ignore")


def _run_here(spec, chunks, progress):
    out = []
    for c in chunks:
        out.append(process_chunk(spec, c))
        progress(len(c))
    return out


def _run_pool(spec, chunks, workers, progress):
    _warm(spec)
    methods = mp.get_all_start_methods()
    ctx = mp.get_context("fork" if "fork" in methods else "spawn")
    out: list = [None] * len(chunks)
    with ProcessPoolExecutor(max_workers=workers, mp_context=ctx, initializer=_init_worker) as pool:
        futures = {pool.submit(process_chunk, spec, c): i for i, c in enumerate(chunks)}
        for fut in as_completed(futures):
            i = futures[fut]
            out[i] = fut.result()
            progress(len(chunks[i]))
    return out


def _run_dask(spec, chunks, scheduler, progress):
    from dask.distributed import as_completed as dask_completed

    client, owned = scheduler_client("scheduler", scheduler)
    try:
        token = uuid.uuid4().hex[:12]
        keys = [f"phasekit-batch-{token}-{i:06d}" for i in range(len(chunks))]
        futures = client.map(process_chunk, [spec] * len(chunks), chunks, key=keys)
        index = {f.key: i for i, f in enumerate(futures)}
        for fut in dask_completed(futures, loop=getattr(client, "loop", None)):  # this client need not be the default
            progress(len(chunks[index[fut.key]]))
        return client.gather(futures)
    finally:
        if owned:
            client.close()


def run_batch(source, units: str, temp_c: float, *, id_column=None, ignore_columns=(), density_column=None,
              balance_on: str = "auto", missing: str = "error", workers: int = 1, scheduler=None,
              chunk_rows: int = DEFAULT_CHUNK_ROWS, max_input_mb: float = MAX_INPUT_MB, sheet=None,
              progress=None, overlays=()) -> BatchResult:
    """Saturation states and first solid on evaporation of every analysis of a table.

    Parameters
    ----------
    source : str, path or pandas.DataFrame
        CSV or XLSX file, one analysis per row.
    units : str
        Units of the species columns (``mg/kg``, ``g/kg``, ``mass%``, ``mg/L``, ``g/L``, ``mol/kg``).
    temp_c : float
        °C.
    id_column, ignore_columns, density_column :
        See :func:`phasekit.batch.source.plan_columns`.
    balance_on : str
        ``"auto"``, ``"none"`` or an ion (see :class:`phasekit.batch.rows.BatchSpec`).
    missing : {"error", "zero"}
        What an empty species cell means.
    workers : int
        Local processes (1: this process).
    scheduler : str or dask.distributed.Client, optional
        Run on this Dask cluster instead (``workers`` is then ignored).
    chunk_rows : int
        Rows per task.
    max_input_mb : float
        Refuse larger files.
    sheet : str or int, optional
        Sheet of an XLSX workbook (name, or number from 1); by default its one sheet of analyses.
    progress : callable, optional
        ``progress(n)`` after every chunk of ``n`` rows.
    overlays : sequence of paths
        Database overlays applied on top of the embedded database (:mod:`phasekit.overlay`). Their
        content travels with every chunk, so workers of a cluster need not see the files.

    Returns
    -------
    BatchResult
        Every input row, in order, including the rows that failed (``status`` "error").

    Raises
    ------
    InputError
        For the run as a whole (arguments, file, columns, overlays, scheduler address), before rows are
        computed.
    """
    t0 = time.perf_counter()
    workers = whole_number("workers", workers)
    chunk_rows = whole_number("chunk_rows", chunk_rows)
    spec, frame, notes = prepare(source, units, temp_c, id_column, ignore_columns, density_column, balance_on,
                                 missing, max_input_mb, sheet, overlays)
    chunks = chunks_of(frame, chunk_rows)
    tick = progress or (lambda n: None)
    if scheduler is not None:
        parts = _run_dask(spec, chunks, scheduler, tick)
        where = f"Dask at {scheduler if isinstance(scheduler, str) else 'the given client'}"
    elif workers > 1 and len(chunks) > 1:
        parts = _run_pool(spec, chunks, min(workers, len(chunks)), tick)
        where = f"{min(workers, len(chunks))} local processes"
    else:
        parts = _run_here(spec, chunks, tick)
        where = "this process"
    table = pd.concat(parts, ignore_index=True)
    warns = list(notes)
    from phasekit.batch.rows import database_fingerprint

    model = spec_model(spec)
    here = database_fingerprint(model)
    theirs = sorted({p.attrs.get("database") for p in parts} - {here}, key=str)
    if theirs:
        warns.append(f"some workers computed with another phasekit version or database ({', '.join(map(str, theirs))}) "
                     f"than this process ({here}): results may differ from a local run; install the same phasekit "
                     "everywhere")
    for p in parts:
        warns.extend(w for w in p.attrs.get("warnings", []) if w not in warns)
    table.attrs = {}
    n_failed = int((table["status"] == "error").sum())
    return BatchResult(table, len(table), n_failed, warns, time.perf_counter() - t0, where, model.label)
