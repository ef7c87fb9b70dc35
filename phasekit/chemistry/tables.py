"""The one reader of tables of analyses (CSV or XLSX), used by the library, the CLI, batch runs and the app.

Every cell is returned as text (``""`` for an empty cell), so that each caller parses values with
the same rules. The reader never gives up on a whole file for the fault of one row:

- **Separator**: the most frequent of ``;``, tab and ``,`` in the header line (ties go to the
  comma). **Decimal comma**: with a ``;`` or tab separator, cells such as ``12,5`` are read as
  ``12.5``; a file that mixes ``12,5`` and ``12.5`` is read as written (both are numbers).
- **Ragged rows**: a row with more cells than the header keeps its row, marked with the reason in
  :attr:`RawTable.problems` (unless its extra cells are empty, as after a trailing comma); a
  shorter row is padded with empty cells (read as the caller's ``missing`` rule says). A header
  cell left empty (a trailing comma) names no column: it is dropped when its cells are empty, and
  the rows that hold a value under it are marked.
- **Sheets** of an XLSX workbook: ``sheet`` (name, or number from 1) picks one; without it, the
  one sheet whose header names a species is read. A workbook with analyses on several sheets, or a
  sheet name it lacks, is refused with the list of its sheets.
- **Limits** are checked before the cells are parsed: file size, the unpacked size of an XLSX
  (a small file can unpack to gigabytes), and the number of rows and columns (counted while
  streaming, stopping at the first row past the limit).
"""

from __future__ import annotations

import csv
import io
import re
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from phasekit.errors import InputError

SEPARATORS = {";": "semicolon", "\t": "tab", ",": "comma"}
_DECIMAL_COMMA = re.compile(r"^\s*[+-]?\d*,\d+(?:[eE][+-]?\d+)?\s*$")
#: reserved column of a read table: the reason a row cannot be read ('' if it can)
PROBLEM_COLUMN = "__row_problem__"


@dataclass
class RawTable:
    """Cells of a table of analyses, as text.

    Attributes
    ----------
    frame : pandas.DataFrame
        Columns named as in the header (stripped); cells as text, ``""`` when empty.
    problems : dict
        ``{row position (from 0): reason}`` for rows that cannot be read as written.
    notes : list of str
        What the reader decided (separator, decimal comma, sheet, dropped columns).
    sheet : str or None
        The sheet read from a workbook.
    """

    frame: pd.DataFrame
    problems: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)
    sheet: str | None = None

    def with_problem_column(self) -> pd.DataFrame:
        """The frame with :data:`PROBLEM_COLUMN` holding each row's problem ('' if none)."""
        df = self.frame.copy()
        df[PROBLEM_COLUMN] = [self.problems.get(i, "") for i in range(len(df))]
        return df


def _looks_like_species(name: str) -> bool:
    from phasekit.chemistry.species import is_species

    try:
        return bool(name) and is_species(name)
    except Exception:  # noqa: BLE001 - a header cell of any content: not a species
        return False


def detect_separator(header_line: str) -> str:
    """The separator of a CSV file from its header line: the most frequent of ; tab , (ties: comma)."""
    counts = {s: header_line.count(s) for s in SEPARATORS}
    best = max(counts.values())
    if best == 0:
        return ","
    for s in (",", ";", "\t"):
        if counts[s] == best:
            return s
    return ","


def _build(where: str, rows: list[list[str]], max_rows, max_cols, notes: list) -> RawTable:
    rows = [r for r in rows if any(c.strip() for c in r)]
    if not rows:
        raise InputError("input", where, "a table with a header row and rows of analyses (the file is empty)")
    header = [h.strip() for h in rows[0]]
    body = rows[1:]
    if max_rows is not None and len(body) > max_rows:
        raise InputError("input", f"{where}: more than {max_rows} rows", f"at most {max_rows} rows of analyses "
                         "(split the table)")
    while header and not header[-1]:
        header.pop()
    width = len(header)
    if max_cols is not None and width > max_cols:
        raise InputError("input", f"{where}: {width} columns", f"at most {max_cols} columns")
    problems: dict = {}
    cells = []
    for pos, r in enumerate(body):
        r = [c.strip() for c in r]
        if len(r) > width:
            extra = [c for c in r[width:] if c]
            if extra:
                problems[pos] = (f"{len(r)} cells but the header names {width} columns (extra values "
                                 f"{', '.join(repr(c) for c in extra[:3])}); the row is not read")
            r = r[:width]
        elif len(r) < width:
            r = r + [""] * (width - len(r))
        cells.append(r)
    blank = [k for k, h in enumerate(header) if not h]
    if blank:
        for k in blank:
            for pos, r in enumerate(cells):
                if r[k] and pos not in problems:
                    problems[pos] = (f"a value {r[k]!r} in column {k + 1}, which has no name in the header; "
                                     "the row is not read")
        keep = [k for k in range(width) if header[k]]
        notes.append(f"column{'s' if len(blank) > 1 else ''} {', '.join(str(k + 1) for k in blank)} without a name "
                     "in the header: ignored")
        header = [header[k] for k in keep]
        cells = [[r[k] for k in keep] for r in cells]
    if not header:
        raise InputError("input", where, "a header row naming the columns")
    for name in header:
        if header.count(name) > 1:
            raise InputError("column", name, "each column name once in the header")
    if not cells:
        raise InputError("input", f"{where}: a header without rows", "at least one row of analyses")
    frame = pd.DataFrame(cells, columns=header, dtype=object)
    return RawTable(frame, problems, notes)


def read_csv_text(text: str, where: str, max_rows=None, max_cols=None) -> RawTable:
    """A table from CSV text (separator and decimal comma detected)."""
    if max_rows is not None and text.count("\n") > max_rows + 1 + 1000:
        # blank lines do not count, but a file with this many lines is far too long whatever they hold
        raise InputError("input", f"{where}: more than {max_rows} rows", f"at most {max_rows} rows of analyses "
                         "(split the table)")
    lines = text.splitlines()
    first = next((ln for ln in lines if ln.strip()), "")
    sep = detect_separator(first)
    notes = []
    if sep != ",":
        notes.append(f"{SEPARATORS[sep]}-separated table")
    try:
        rows = list(csv.reader(io.StringIO(text), delimiter=sep, skipinitialspace=True))
    except csv.Error as exc:
        raise InputError("input", where, f"a readable CSV table ({exc})") from None
    if sep != "," and any(_DECIMAL_COMMA.match(c) for r in rows[1:] for c in r):
        rows = [rows[0]] + [[c.replace(",", ".") if _DECIMAL_COMMA.match(c) else c for c in r] for r in rows[1:]]
        notes.append("decimal commas read as decimal points")
    return _build(where, rows, max_rows, max_cols, notes)


def _cell_text(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float) and v.is_integer() and abs(v) < 1e15:
        return repr(v)
    return str(v)


def read_xlsx_bytes(raw: bytes, where: str, sheet=None, max_rows=None, max_cols=None,
                    max_unpacked_bytes: int = 200_000_000) -> RawTable:
    """A table from the bytes of an XLSX workbook (one sheet; see the module docstring)."""
    import openpyxl

    try:
        with zipfile.ZipFile(io.BytesIO(raw)) as zf:
            unpacked = sum(i.file_size for i in zf.infolist())
    except (zipfile.BadZipFile, OSError, ValueError):
        raise InputError("input", where, "a readable XLSX workbook (the file is not a valid .xlsx)") from None
    if unpacked > max_unpacked_bytes:
        raise InputError("input", f"{where}: unpacks to {unpacked / 1e6:.0f} MB",
                         f"a workbook that unpacks to at most {max_unpacked_bytes / 1e6:.0f} MB (split it, or save "
                         "the sheet as CSV)")
    try:
        wb = openpyxl.load_workbook(io.BytesIO(raw), read_only=True, data_only=True)
    except Exception as exc:  # noqa: BLE001 - openpyxl raises many kinds on damaged files
        raise InputError("input", where, f"a readable XLSX workbook ({type(exc).__name__})") from None
    try:
        names = list(wb.sheetnames)
        listing = ", ".join(repr(n) for n in names)
        notes = []
        if sheet is not None and not (isinstance(sheet, str) and sheet.strip() == ""):
            if isinstance(sheet, int) and not isinstance(sheet, bool):
                if not 1 <= sheet <= len(names):
                    raise InputError("sheet", sheet, f"a sheet number from 1 to {len(names)} or a name: {listing}")
                chosen = names[sheet - 1]
            elif isinstance(sheet, str) and sheet.strip().isdigit() and sheet.strip() not in names:
                return read_xlsx_bytes(raw, where, int(sheet.strip()), max_rows, max_cols, max_unpacked_bytes)
            elif isinstance(sheet, str) and sheet.strip() in names:
                chosen = sheet.strip()
            else:
                raise InputError("sheet", sheet, f"one of the sheets of {where}: {listing}")
        else:
            with_data, with_species = [], []
            for n in names:
                head = _first_row(wb[n])
                if head is None:
                    continue
                with_data.append(n)
                if any(_looks_like_species(_cell_text(c).strip()) for c in head):
                    with_species.append(n)
            if len(with_species) > 1:
                raise InputError("sheet", None, f"the sheet to read (--sheet NAME): {where} has analyses on sheets "
                                 f"{', '.join(repr(n) for n in with_species)}")
            chosen = with_species[0] if with_species else (with_data[0] if with_data else names[0])
            others = [n for n in with_data if n != chosen]
            if others:
                notes.append(f"read sheet {chosen!r}; sheet{'s' if len(others) > 1 else ''} "
                             f"{', '.join(repr(n) for n in others)} not read (name another with --sheet)")
        rows = []
        limit = None if max_rows is None else max_rows + 1
        for r in wb[chosen].iter_rows(values_only=True):
            cells = [_cell_text(v) for v in r]
            while cells and not cells[-1].strip():
                cells.pop()
            if not cells:
                continue
            if max_cols is not None and len(cells) > max_cols:
                raise InputError("input", f"{where}: sheet {chosen!r} has more than {max_cols} columns",
                                 f"at most {max_cols} columns")
            rows.append(cells)
            if limit is not None and len(rows) > limit:
                raise InputError("input", f"{where}: more than {max_rows} rows", f"at most {max_rows} rows of "
                                 "analyses (split the table)")
    finally:
        wb.close()
    out = _build(f"{where} sheet {chosen!r}", rows, max_rows, max_cols, notes)
    out.sheet = chosen
    return out


def _first_row(ws):
    for k, r in enumerate(ws.iter_rows(values_only=True)):
        if any(v is not None and str(v).strip() for v in r):
            return r
        if k > 50:
            return None
    return None


def read_table_bytes(raw: bytes, filename: str, sheet=None, max_rows=None, max_cols=None,
                     max_unpacked_bytes: int = 200_000_000) -> RawTable:
    """A table from the bytes of a ``.csv``/``.txt`` or ``.xlsx``/``.xlsm`` file named ``filename``."""
    name = str(filename or "").strip()
    suffix = Path(name).suffix.lower()
    if suffix in (".csv", ".txt"):
        try:
            text = raw.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError("input", name, "a CSV file in UTF-8 text (save it as 'CSV UTF-8')") from None
        if "\x00" in text:
            raise InputError("input", name, "a CSV text file (this file holds binary data)")
        return read_csv_text(text, name, max_rows, max_cols)
    if suffix in (".xlsx", ".xlsm"):
        return read_xlsx_bytes(raw, name, sheet, max_rows, max_cols, max_unpacked_bytes)
    raise InputError("input", name, "a .csv or .xlsx file")


def read_table_file(path, max_mb: float, sheet=None, max_rows=None, max_cols=None, option: str = "--max-input-mb"):
    """A table from a file, refused before it is read when larger than ``max_mb`` MB."""
    p = Path(path)
    if p.suffix.lower() not in (".csv", ".txt", ".xlsx", ".xlsm"):
        raise InputError("input", str(path), "a .csv or .xlsx file")
    if not p.exists():
        raise InputError("input", str(path), "the path of an existing .csv or .xlsx file (no such file)")
    if not p.is_file():
        raise InputError("input", str(path), "the path of a file (this is a directory)")
    size = p.stat().st_size
    if size > max_mb * 1e6:
        raise InputError("input", f"{path} ({size / 1e6:.1f} MB)",
                         f"a file of at most {max_mb:g} MB (split it into smaller files, or raise the limit with "
                         f"{option})")
    if size == 0:
        raise InputError("input", str(path), "a table with a header row and rows of analyses (the file is empty)")
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise InputError("input", str(path), f"a readable file ({exc.strerror})") from None
    return read_table_bytes(raw, str(path), sheet, max_rows, max_cols,
                            max_unpacked_bytes=int(max(200e6, 4 * max_mb * 1e6)))
