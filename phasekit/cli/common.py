"""Shared pieces of the ``phasekit`` subcommands: exit codes, brine options, output.

Every subcommand builds a :class:`Report` (key values, tables, warnings, optionally a figure) and
:func:`emit` writes it as a readable table (default), CSV, JSON or XLSX, to stdout or ``--output``.
"""

from __future__ import annotations

import argparse
import io
import json
import math
import re
import sys
import textwrap
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from phasekit.errors import InputError

if TYPE_CHECKING:
    import pandas as pd

# ------------------------------------------------------------------------------------ exit codes
EXIT_OK = 0
#: a batch run finished, but some rows failed (they are in the output, marked)
EXIT_ROWS_FAILED = 1
#: bad command line or input (argparse uses 2 as well)
EXIT_INPUT = 2
#: a solver did not converge
EXIT_CONVERGENCE = 3
#: the capability is not available in this installation
EXIT_UNAVAILABLE = 4
#: an unexpected internal error (a bug: please report it with the command line)
EXIT_INTERNAL = 5
#: a path (or pond train) stopped before its end: a solver failure or the database's validity
#: limit; the rows computed up to there are written
EXIT_PARTIAL = 6

EXIT_CODES_TEXT = (
    "exit codes: 0 success; 1 batch finished but some rows failed (kept in the output, marked); "
    "2 usage or input error; 3 a solver did not converge; 4 capability not available in this "
    "installation; 5 internal error (a bug); 6 a path or pond train stopped before its end (solver failure or "
    "validity limit: the rows computed are written, the reason is on stderr and in stop_reason)"
)

UNITS_HELP = "units of the analysis: mg/kg, g/kg, mass%% (per kg of solution), mg/L, g/L (per litre), mol/kg (per kg water)"
FORMATS = ("table", "csv", "json", "xlsx")
PLOT_SUFFIXES = (".png", ".svg", ".pdf")


class Unavailable(Exception):
    """A capability that this installation does not provide (exit code 4)."""


# ------------------------------------------------------------------------------------ parser help
class HelpFormatter(argparse.RawDescriptionHelpFormatter):
    """Keeps the line breaks of epilogs (examples), wraps the rest."""

    def __init__(self, prog, indent_increment=2, max_help_position=34, width=None):
        super().__init__(prog, indent_increment, max_help_position, width)


def add_parser(sub, name: str, help_text: str, description: str, examples: list[str]):
    """A subcommand parser with its examples in the epilog."""
    epilog = "examples:\n" + "\n".join(f"  {e}" for e in examples) + "\n\n" + exit_codes_text()
    return sub.add_parser(name, help=help_text, description=textwrap.fill(description, 100), epilog=epilog,
                          formatter_class=HelpFormatter)


def exit_codes_text() -> str:
    """The exit codes, wrapped for --help."""
    return textwrap.fill(EXIT_CODES_TEXT, 100, subsequent_indent="  ")


def add_output_options(p, plot: bool = False, tables: tuple = ()) -> None:
    g = p.add_argument_group("output")
    g.add_argument("--format", choices=FORMATS, help="table (readable, default), csv, json or xlsx; "
                   "inferred from --output's suffix when omitted")
    g.add_argument("--output", "-o", metavar="FILE", help="write to FILE instead of standard output")
    if tables:
        g.add_argument("--table", choices=tables, help=f"the table to write as csv or show (default {tables[0]})")
    if plot:
        g.add_argument("--plot", metavar="FILE", help="also draw a figure to FILE (.png, .svg or .pdf)")


def add_brine_options(p, many: bool = False) -> None:
    """--brine/--salts/--input/--row/--units and the analysis options."""
    g = p.add_argument_group("brine" + (" (give two: A then B)" if many else ""))
    act = "append" if many else "store"
    g.add_argument("--brine", action=act, metavar="ION=VALUE,...",
                   help="an analysis, e.g. Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710")
    g.add_argument("--salts", action=act, metavar="SALT=VALUE,...",
                   help="a brine made of dissolved salts, e.g. NaCl=20,KCl=8 (with --units mass%%)")
    g.add_argument("--input", "-i", metavar="FILE", help="a CSV or XLSX table of analyses, one per row")
    g.add_argument("--row", action=act, metavar="ID",
                   help="the sample id (first column, or --id-column) or row number (from 1) in --input")
    g.add_argument("--id-column", metavar="NAME", help="column of sample ids in --input (default: the first "
                   "column, if it is not a species)")
    g.add_argument("--sheet", metavar="NAME|N", help="sheet of an XLSX --input (name, or number from 1); by default "
                   "the one sheet whose header names species")
    g.add_argument("--ignore-columns", metavar="A,B", default="", help="columns of --input to ignore (comma-separated)")
    g.add_argument("--units", metavar="UNITS", help=UNITS_HELP)
    g.add_argument("--density", type=float, metavar="KG_PER_L", help="density for per-litre units (default: the "
                   "density model)")
    g.add_argument("--balance-on", default="auto", metavar="ION|auto|none",
                   help="balance the charge on this ion; auto (default) increases the major ion of the side that "
                   "is short; none refuses an unbalanced analysis. The adjustment is reported as a warning")


def add_overlay_option(p) -> None:
    """--overlay FILE (repeatable): the user's own fitted values on top of the embedded database."""
    g = p.add_argument_group("database")
    g.add_argument("--overlay", action="append", metavar="FILE",
                   help="a database overlay (TOML of your own fitted values, see phasekit.overlay) applied on top "
                   "of the embedded database; repeat for several (overlays in conflict are refused)")


def add_path_options(p, exclude: bool = True, beyond: bool = True) -> None:
    """--exclude SOLID[,SOLID] and --beyond-validity (paths, ponds, cycles, equilibria)."""
    g = p.add_argument_group("solids and validity")
    if exclude:
        g.add_argument("--exclude", default="", metavar="SOLID[,SOLID]",
                       help="solids kept out (e.g. anhydrite,polyhalite: solids that do not form on the time scale "
                       "of the process)")
    if beyond:
        g.add_argument("--beyond-validity", action="store_true",
                       help="go on past the database's validity limit (ionic strength, parameter temperature "
                       "ranges), with warnings; by default the computation stops there and says so")


def model_of(args):
    """The model of a command line: the embedded database with its ``--overlay`` files applied (once).

    Raises
    ------
    InputError
        A missing or invalid overlay file, an overlay naming a solid or species that does not exist,
        or overlays in conflict.
    """
    model = getattr(args, "model_", None)
    if model is None:
        from phasekit.model import load_model

        files = list(getattr(args, "overlay", None) or [])
        try:
            model = load_model(overlays=files)
        except InputError as err:
            field_name = "--overlay" if err.field in ("overlay", "overlays") else err.field
            raise type(err)(field_name, err.value, err.expected) from None
        args.model_ = model
    return model


def add_temp(p, default: float | None = 25.0, name: str = "--temp", help_text: str = "temperature, °C") -> None:
    if default is None:
        p.add_argument(name, type=float, required=True, metavar="°C", help=help_text)
    else:
        p.add_argument(name, type=float, default=default, metavar="°C", help=f"{help_text} (default {default:g})")


# ------------------------------------------------------------------------------------ brines
def parse_pairs(text: str, option: str, example: str) -> dict:
    """{key: value text} from "K=V,K=V" (values are checked by the library)."""
    out: dict = {}
    if not isinstance(text, str) or not text.strip():
        raise InputError(option, text, f"KEY=VALUE pairs separated by commas, e.g. {example}")
    items: list = []
    for item in text.split(","):
        # a group of three digits after a value continues it: "Na=31,000,Cl=47,800" (thousands)
        if items and "=" not in item and re.fullmatch(r"\d{3}(\.\d*)?", item.strip()) and \
                re.search(r"=\s*[+-]?\d[\d,]*$", items[-1]):
            items[-1] += "," + item.strip()
            continue
        items.append(item)
    for item in items:
        key, eq, value = item.partition("=")
        if not eq or not key.strip() or not value.strip():
            raise InputError(option, item.strip(), f"KEY=VALUE pairs separated by commas, e.g. {example}")
        if key.strip() in out:
            raise InputError(option, key.strip(), "each key once")
        out[key.strip()] = value.strip()
    return out


def require_units(args) -> str:
    if not args.units:
        raise InputError("--units", None, "the units of the analysis, named explicitly: mg/kg, g/kg, mass%, mg/L, "
                                          "g/L or mol/kg")
    return args.units


def flow_number(text: str) -> float:
    """argparse type: a finite number > 0, thousands grouped as 31,000 allowed."""
    import argparse

    from phasekit.validate import decimal_text

    try:
        x = decimal_text(str(text))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number (thousands may be grouped as 31,000)") from None
    if not (x > 0 and x < float("inf")):
        raise argparse.ArgumentTypeError(f"{text!r}: expected a number > 0")
    return x


def _balanced(brine, policy: str, notes: list):
    """The library's charge-balance rule (``Brine.balance``, README "Charge balance"): 'auto' increases the
    major ion of the side that is short; a named ion must be of that side; 'none' refuses an unbalanced brine."""
    from phasekit.batch.runner import check_balance_on

    policy = check_balance_on(policy)
    ion = None if policy == "none" or brine.charge_balance() == 0.0 else (
        brine.balance_ion() if policy == "auto" else policy)
    if ion is None:
        cat, an = brine.cation_equivalents, brine.anion_equivalents
        if abs(cat - an) > 1e-6 * (cat + an) + 1e-12:
            raise InputError("charge balance", f"{brine.charge_balance():+.3g} %",
                             "an electrically neutral analysis with --balance-on none (or --balance-on auto, or the "
                             "ion to balance on, e.g. --balance-on Cl)")
        return brine
    try:
        out = brine.balance(on=ion)
    except InputError as err:
        raise InputError("--balance-on", policy, err.expected.replace(", or pass allow_decrease=True", "")) from None
    notes.append(out.warnings[-1])
    return out


def _from_file(args, row, notes):
    from phasekit.batch.source import plan_columns, read_source
    from phasekit.chemistry.brine import Brine
    from phasekit.chemistry.tables import PROBLEM_COLUMN

    df = read_source(args.input, sheet=getattr(args, "sheet", None), notes=notes)
    ignore = [c for c in (args.ignore_columns or "").split(",") if c.strip()]
    species, id_col = plan_columns(df, args.id_column, ignore)
    if row is None:
        if len(df) != 1:
            ids = [str(v) for v in df[id_col]] if id_col else [str(i) for i in range(1, len(df) + 1)]
            shown = ", ".join(ids[:8]) + (", ..." if len(ids) > 8 else "")
            raise InputError("--row", None, f"the sample to use from {args.input} ({len(df)} rows: {shown})")
        pos = 0
    else:
        pos = None
        if id_col is not None:
            hits = [i for i, v in enumerate(df[id_col]) if str(v).strip() == str(row).strip()]
            if len(hits) > 1:
                raise InputError("--row", row, f"a sample id that is unique in {args.input} (rows "
                                               f"{', '.join(str(h + 1) for h in hits)}); give the row number")
            pos = hits[0] if hits else None
        if pos is None and str(row).strip().isdigit() and 1 <= int(row) <= len(df):
            pos = int(row) - 1
        if pos is None:
            what = f"a value of column {id_col!r} or " if id_col else ""
            raise InputError("--row", row, f"{what}a row number from 1 to {len(df)} of {args.input}")
    values = {c: df[c].iloc[pos] for c in species}
    label = df[id_col].iloc[pos] if id_col else pos + 1
    problem = df[PROBLEM_COLUMN].iloc[pos] if PROBLEM_COLUMN in df.columns else ""
    if problem:
        raise InputError(f"--row {label!r}", row if row is not None else pos + 1, f"a row that can be read ({problem})")
    try:
        return Brine.from_analysis(values, units=require_units(args), density=args.density, temp_c=_temp_of(args),
                                   missing="error")
    except InputError as err:
        raise InputError(f"row {label!r}: {err.field.replace('values[', 'column[', 1)}", err.value,
                         err.expected) from None


def _temp_of(args) -> float:
    for name in ("temp", "start"):
        v = getattr(args, name, None)
        if v is not None:
            return v
    return 25.0


def _as_list(v) -> list:
    return [] if v is None else (v if isinstance(v, list) else [v])


def read_brines(args, count: int = 1) -> list:
    """The brine(s) of the command line, balanced as asked; notes go to ``args.notes``."""
    from phasekit.chemistry.brine import Brine

    notes = args.notes
    given = []
    for text in _as_list(args.brine):
        given.append(("brine", text))
    for text in _as_list(args.salts):
        given.append(("salts", text))
    rows = _as_list(args.row)
    if args.input:
        for r in rows or [None] * (count if count > 1 else 1):
            given.append(("input", r))
    elif rows:
        raise InputError("--row", rows[0], "a row of a table given with --input FILE")
    if not given:
        raise InputError("brine", None, "an analysis: --brine ION=VALUE,... (or --salts, or --input FILE --row ID)")
    if len(given) != count:
        raise InputError("brine", f"{len(given)} given", f"{count} brine{'s' if count > 1 else ''} "
                         "(--brine, --salts or --row, once per brine)")
    out = []
    for kind, spec in given:
        if kind in ("brine", "salts"):
            option = f"--{kind}"
            values = parse_pairs(spec, option, "Na=10780,Cl=19350" if kind == "brine" else "NaCl=20,KCl=8")
            make = Brine.from_analysis if kind == "brine" else Brine.from_salts
            units = require_units(args)
            try:
                b = make(values, units=units, density=args.density, temp_c=_temp_of(args))
            except InputError as err:
                field = err.field.replace("values[", f"{option}[", 1).replace("salts[", f"{option}[", 1)
                raise type(err)(field, err.value, err.expected) from None
        else:
            b = _from_file(args, spec, notes)
        notes.extend(b.warnings)
        out.append(_balanced(b, args.balance_on, notes))
    return out


def brine_table(brine) -> pd.DataFrame:
    """Molality and mass % of each species of a brine."""
    import pandas as pd

    m = brine.molalities
    pct = brine.mass_percent
    return pd.DataFrame({"molality": list(m.values()), "mass_percent": [pct[s] for s in m]},
                        index=pd.Index(list(m), name="species"))


# ------------------------------------------------------------------------------------ reports
@dataclass
class Report:
    """What a subcommand produced."""

    scalars: dict = field(default_factory=dict)
    tables: dict = field(default_factory=dict)
    main: str | None = None
    warnings: list = field(default_factory=list)
    draw: Callable | None = None  # draw(path) writes the figure
    show: list | None = None  # tables shown in the readable format (default: all)
    table_columns: dict = field(default_factory=dict)  # columns shown in the readable format
    exit_code: int = 0  # EXIT_PARTIAL for a path that stopped before its end (the report is still written)
    stop_note: str = ""  # why, printed on stderr


def _plain(v):
    import numpy as np
    import pandas as pd

    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not math.isfinite(v):
        return None if math.isnan(v) else ("inf" if v > 0 else "-inf")
    if isinstance(v, tuple | list):
        return [_plain(x) for x in v]
    if isinstance(v, dict):
        return {str(k): _plain(x) for k, x in v.items()}
    if v is pd.NA or v is pd.NaT:
        return None
    return v


def _records(df: pd.DataFrame) -> list:
    import pandas as pd

    frame = df.reset_index() if df.index.name is not None or not isinstance(df.index, pd.RangeIndex) else df
    return [{str(k): _plain(v) for k, v in row.items()} for row in frame.to_dict("records")]


def _fmt(v) -> str:
    import numpy as np

    if isinstance(v, float | np.floating):
        return f"{v:.6g}"
    return str(v)


def _text(report: Report, only: str | None) -> str:
    import pandas as pd

    out = io.StringIO()
    for k, v in report.scalars.items():
        if isinstance(v, list | tuple):
            v = ", ".join(map(str, v)) if v else "-"
        out.write(f"{k:<28s} {_fmt(v)}\n")
    names = [only] if only else (report.show if report.show is not None else list(report.tables))
    for name in names:
        df = report.tables[name]
        cols = report.table_columns.get(name)
        if cols and not only:
            df = df[[c for c in cols if c in df.columns]]
        out.write(f"\n{name}:\n")
        if df.empty:
            out.write("  (none)\n")
            continue
        with pd.option_context("display.width", 200, "display.max_columns", None, "display.max_rows", 200):
            out.write(df.to_string(float_format=lambda x: f"{x:.6g}", na_rep="-") + "\n")
    return out.getvalue()


def _format_of(args) -> str:
    if args.format:
        return args.format
    if args.output:
        suffix = Path(args.output).suffix.lower().lstrip(".")
        if suffix in ("csv", "json", "xlsx"):
            return suffix
    return "table"


def emit(report: Report, args) -> None:
    """Write ``report`` as ``--format`` to ``--output`` (or stdout); draw ``--plot``."""
    import pandas as pd

    fmt = _format_of(args)
    only = getattr(args, "table", None)
    if getattr(args, "plot", None):
        check_plot_path(args.plot)
    if fmt == "xlsx" and not args.output:
        raise InputError("--output", None, "a file name ending in .xlsx for --format xlsx (it is binary)")
    if fmt == "table":
        payload = _text(report, only)
    elif fmt == "csv":
        name = only or report.main or next(iter(report.tables), None)
        if name is None:
            df = pd.DataFrame([{k: _plain(v) for k, v in report.scalars.items()}])
        else:
            df = report.tables[name]
            for key in ("database", "exclude"):  # csv has no other place for them
                if key in report.scalars and key not in df.columns:
                    v = report.scalars[key]
                    df = df.assign(**{key: "+".join(v) if isinstance(v, list | tuple) else v})
        keep_index = df.index.name is not None or not isinstance(df.index, pd.RangeIndex)
        payload = df.to_csv(index=keep_index, float_format=None)
    elif fmt == "json":
        doc = {k: _plain(v) for k, v in report.scalars.items()}
        for name, df in report.tables.items():
            doc[name] = _records(df)
        doc["warnings"] = list(dict.fromkeys(report.warnings))
        payload = json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    else:
        payload = None
    if fmt == "xlsx":
        _write_xlsx(report, args.output)
    elif args.output:
        try:
            Path(args.output).write_text(payload, encoding="utf-8")
        except OSError as exc:
            raise InputError("--output", args.output, f"a file that can be written ({exc.strerror})") from None
    else:
        sys.stdout.write(payload)
        sys.stdout.flush()
    if getattr(args, "plot", None):
        if report.draw is None:
            raise Unavailable("--plot: this subcommand draws no figure")
        report.draw(args.plot)


def _write_xlsx(report: Report, path: str) -> None:
    import pandas as pd

    if Path(path).suffix.lower() != ".xlsx":
        raise InputError("--output", path, "a file name ending in .xlsx for --format xlsx")
    try:
        with pd.ExcelWriter(path, engine="openpyxl") as xw:
            summary = {k: (", ".join(map(str, v)) if isinstance(v, list | tuple) else v)
                       for k, v in report.scalars.items()}
            rows = list(summary.items()) + [("warning", w) for w in dict.fromkeys(report.warnings)]
            pd.DataFrame(rows, columns=["key", "value"]).to_excel(xw, sheet_name="summary", index=False)
            for name, df in report.tables.items():
                keep_index = df.index.name is not None or not isinstance(df.index, pd.RangeIndex)
                df.to_excel(xw, sheet_name=name[:31], index=keep_index)
    except OSError as exc:
        raise InputError("--output", path, f"a file that can be written ({exc.strerror})") from None


def input_paths(args) -> list[str]:
    """The files a command line reads (its table, --input, --overlay files)."""
    found = [getattr(args, name, None) for name in ("file", "input", "data")]
    found += list(getattr(args, "overlay", None) or [])
    return [str(f) for f in found if isinstance(f, str) and f]


def _same_file(a: str, b: str) -> bool:
    pa, pb = Path(a), Path(b)
    try:
        if pa.exists() and pb.exists():
            return pa.samefile(pb)
    except OSError:
        pass
    return pa.resolve() == pb.resolve()


def check_not_an_input(option: str, path: str, args) -> None:
    """Refuse to write ``path`` when it is one of the files the command reads."""
    for given in input_paths(args):
        if _same_file(path, given):
            raise InputError(option, path, f"a file other than the input {given} (phasekit never writes over a "
                                           "file it reads; choose another output name)")


def check_output_path(args) -> None:
    """Refuse an output that cannot be written, or that is an input, before any work is done."""
    out = getattr(args, "output", None)
    if getattr(args, "format", None) == "xlsx" and not out:
        raise InputError("--output", None, "a file name ending in .xlsx for --format xlsx (it is binary)")
    if out:
        check_not_an_input("--output", out, args)
        parent = Path(out).resolve().parent
        if not parent.is_dir():
            raise InputError("--output", out, f"a file in an existing directory ({parent} does not exist)")
        if Path(out).is_dir():
            raise InputError("--output", out, "a file name (this is a directory)")


def check_plot_path(path: str, args=None) -> None:
    if args is not None:
        check_not_an_input("--plot", path, args)
    if Path(path).suffix.lower() not in PLOT_SUFFIXES:
        raise InputError("--plot", path, "a file name ending in .png, .svg or .pdf")
    parent = Path(path).resolve().parent
    if not parent.is_dir():
        raise InputError("--plot", path, f"a file in an existing directory ({parent} does not exist)")
