"""Subcommand ``batch``: saturation states and first solid of every analysis of a table."""

from __future__ import annotations

import sys

from phasekit.cli import common as c

#: columns of the readable table of a batch (every column is in csv, json and xlsx)
SHOWN = ["status", "charge_balance_percent", "first_solid", "first_solid_concentration_factor", "error"]


def _progress_bar(total: int, enabled: bool):
    """A tqdm bar on stderr when it is a terminal (and enabled), else None."""
    if not enabled or not sys.stderr.isatty():
        return None
    from tqdm import tqdm

    tqdm.monitor_interval = 0  # no monitor thread (worker processes are forked)
    return tqdm(total=total, unit="row", file=sys.stderr, leave=False, dynamic_ncols=True)


def _batch(args) -> int:
    from phasekit.batch import read_source, run_batch

    units = c.require_units(args)
    ignore = [s for s in args.ignore_columns.split(",") if s.strip()]
    read_notes: list = []
    # a bad file stops here, before any worker starts
    raw = read_source(args.file, args.max_input_mb, sheet=args.sheet, notes=read_notes)
    model = c.model_of(args)  # and so does a bad overlay
    bar = _progress_bar(len(raw), not args.no_progress)
    try:
        res = run_batch(raw, units, args.temp, id_column=args.id_column, ignore_columns=ignore,
                        density_column=args.density_column, balance_on=args.balance_on, missing=args.missing,
                        workers=args.workers, scheduler=args.scheduler, chunk_rows=args.chunk_rows,
                        progress=(bar.update if bar is not None else None), overlays=args.overlay or ())
    finally:
        if bar is not None:
            bar.close()
    res.warnings[:0] = [n for n in read_notes if n not in res.warnings]
    table = res.table
    head = table.columns[0]
    rep = c.Report(scalars={"rows": res.n_rows, "failed": res.n_failed, "units": args.units, "temp_c": args.temp,
                            "database": model.label},
                   tables={"results": table}, main="results", warnings=list(res.warnings),
                   table_columns={"results": [head, *SHOWN]})
    c.emit(rep, args)
    args.notes.extend(res.warnings)
    ok = res.n_rows - res.n_failed
    where = f"; written to {args.output}" if args.output else ""
    failed = (f"{res.n_failed} failed (kept in the output with status 'error' and the reason in 'error')"
              if res.n_failed else "none failed")
    print(f"phasekit batch: {res.n_rows} rows, {ok} ok, {failed}; {res.elapsed_s:.1f} s on {res.executor} with the "
          f"{res.database}{where}", file=sys.stderr)
    return c.EXIT_ROWS_FAILED if res.n_failed else c.EXIT_OK


def register(sub) -> None:
    p = c.add_parser(sub, "batch", "saturation states and first solid of many analyses",
                     "For every analysis of a CSV or XLSX table (one per row): its charge balance, the saturation "
                     "index and state of every solid, and the first solid to crystallize on isothermal evaporation "
                     "with its concentration factor. Rows that cannot be computed are kept, with status 'error' "
                     "and the reason, and counted on stderr. Runs in this process, in --workers local processes, "
                     "or on a Dask cluster (--scheduler), with the same result row for row.",
                     ["phasekit batch wells.csv --units mg/kg --temp 25 --output states.csv",
                      "phasekit batch wells.xlsx --units g/L --temp 30 --workers 2 --format xlsx -o states.xlsx",
                      "phasekit batch wells.csv --units mg/kg --temp 25 --scheduler tcp://127.0.0.1:8786 -o out.csv",
                      "phasekit batch wells.csv --units mg/kg --temp 25 --overlay works_kcl.toml -o states.csv"])
    p.add_argument("file", help="CSV or XLSX table of analyses, one per row")
    p.add_argument("--units", metavar="UNITS", help=c.UNITS_HELP)
    c.add_temp(p)
    g = p.add_argument_group("table")
    g.add_argument("--sheet", metavar="NAME|N", help="sheet of an XLSX workbook (name, or number from 1); by default "
                   "the one sheet whose header names species")
    g.add_argument("--id-column", metavar="NAME", help="column of sample ids (default: the first column, if it is "
                   "not a species); copied to the output")
    g.add_argument("--ignore-columns", default="", metavar="A,B", help="columns to ignore (dates, notes)")
    g.add_argument("--density-column", metavar="NAME", help="column of densities in kg/L for per-litre units")
    g.add_argument("--missing", choices=("error", "zero"), default="error",
                   help="an empty species cell is an error (default) or zero")
    g.add_argument("--balance-on", default="auto", metavar="ION|auto|none",
                   help="charge balancing of each analysis (default auto: increase the major ion of the side that "
                   "is short); recorded in the balanced_on column")
    g.add_argument("--max-input-mb", type=float, default=64.0, metavar="MB",
                   help="refuse larger input files (default 64 MB, about a million analyses)")
    g = p.add_argument_group("execution")
    g.add_argument("--workers", type=int, default=1, metavar="N", help="local processes (default 1)")
    g.add_argument("--scheduler", metavar="ADDRESS", help="run on the Dask cluster of this scheduler "
                   "(e.g. tcp://127.0.0.1:8786) instead")
    g.add_argument("--chunk-rows", type=int, default=500, metavar="N", help="rows per task (default 500)")
    g.add_argument("--no-progress", action="store_true", help="no progress bar (none is shown when stderr is "
                   "not a terminal)")
    c.add_overlay_option(p)
    c.add_output_options(p)
    p.set_defaults(func=_batch, returns_code=True)
