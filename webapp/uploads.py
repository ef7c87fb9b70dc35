"""Reading what the user uploads or pastes: tables of analyses, pasted rows, session files.

Everything is parsed as data only — pandas for CSV/XLSX, ``json`` for sessions; no eval, no
pickle. Limits: :data:`MAX_UPLOAD_BYTES` per file (checked in the browser before sending, and
again here), :data:`MAX_ROWS` analyses and :data:`MAX_COLUMNS` columns per table.
"""

from __future__ import annotations

import base64
import binascii
import json

import pandas as pd

from phasekit.chemistry.species import SPECIES, parse_species
from phasekit.chemistry.tables import read_table_bytes
from phasekit.errors import InputError
from phasekit.validate import MAX_NESTING, nesting_depth
from webapp.messages import UserInputProblem

#: largest file accepted (2 MB); the same number is used by the check in assets/clientside.js
MAX_UPLOAD_BYTES = 2 * 1024 * 1024
MAX_ROWS = 500
MAX_COLUMNS = 40
#: largest unpacked size of an uploaded workbook (an XLSX of 2 MB can unpack to gigabytes)
MAX_UNPACKED_BYTES = 20 * 1024 * 1024
ID_NAMES = ("sample", "sample id", "sample_id", "id", "name", "analysis")


def decode(contents: str, filename: str) -> bytes:
    """Bytes of a dcc.Upload ``contents`` data URL, refusing oversized or undecodable files."""
    if not isinstance(contents, str) or "," not in contents:
        raise UserInputProblem(f"upload {filename!r}: the browser sent no readable file")
    payload = contents.split(",", 1)[1]
    if len(payload) * 3 // 4 > MAX_UPLOAD_BYTES + 3:
        raise UserInputProblem(f"upload {filename!r}: larger than the limit of {MAX_UPLOAD_BYTES // (1024 * 1024)} MB")
    try:
        raw = base64.b64decode(payload, validate=True)
    except (binascii.Error, ValueError):
        raise UserInputProblem(f"upload {filename!r}: the file could not be decoded") from None
    if len(raw) > MAX_UPLOAD_BYTES:
        raise UserInputProblem(f"upload {filename!r}: {len(raw) / 1e6:.1f} MB, larger than the limit of "
                               f"{MAX_UPLOAD_BYTES // (1024 * 1024)} MB")
    return raw


def _is_number(text: str) -> bool:
    try:
        float(str(text).strip())
    except ValueError:
        return False
    return True


def read_analyses(raw: bytes, filename: str) -> dict:
    """A table of analyses from CSV or XLSX bytes, as plain text cells.

    Returns
    -------
    dict
        ``{"filename", "columns", "rows", "species", "id_column", "density_column", "ignored"}``:
        ``rows`` are lists of text cells; ``species`` maps each species column to its species.

    Raises
    ------
    UserInputProblem
        Unreadable file, no rows, too many rows or columns, no species column, duplicated
        columns, or a column of numbers whose name is not a species of the database.
    """
    name = (filename or "").strip()
    if not raw:
        raise UserInputProblem(f"upload {name!r}: the file is empty; expected a header row and rows of analyses")
    try:
        table = read_table_bytes(raw, name, max_rows=MAX_ROWS, max_cols=MAX_COLUMNS,
                                 max_unpacked_bytes=MAX_UNPACKED_BYTES)
    except InputError as err:
        raise UserInputProblem(f"upload {name!r}: {_reader_problem(err, name)}") from None
    df = table.frame
    out = classify(df, name)
    out["problems"] = {str(k): v for k, v in table.problems.items()}
    out["notes"] = list(table.notes)
    return out


def _reader_problem(err: InputError, name: str) -> str:
    """The table reader's message in the words of an upload."""
    kind = "XLSX" if name.lower().endswith((".xlsx", ".xlsm")) else "CSV"
    expected = str(err.expected)
    if err.field != "input":
        return str(err)
    if any(w in expected for w in ("readable", "UTF-8", "binary")):
        return f"not a readable {kind} table (expected {expected})"
    detail = str(err.value)
    detail = detail[len(name):].lstrip(": ") if detail.startswith(name) else detail
    return (f"{detail}: " if detail else "") + f"expected {expected}"


def classify(df: pd.DataFrame, filename: str) -> dict:
    """Sort the columns of a table of analyses into species, sample id, density and ignored."""
    species, ignored = {}, []
    id_col = density_col = None
    for c in df.columns:
        low = c.lower()
        try:
            species[c] = parse_species(c)
            continue
        except InputError:
            pass
        if density_col is None and "density" in low:
            density_col = c
        elif id_col is None and low in ID_NAMES:
            id_col = c
        else:
            cells = [v for v in df[c].astype(str) if v.strip()]
            if cells and sum(_is_number(v) for v in cells) >= 0.5 * len(cells) and not low.startswith("unnamed"):
                raise UserInputProblem(
                    f"upload {filename!r}: column {c!r} holds numbers but is not a species of the database "
                    f"(known: {', '.join(SPECIES)}; charged forms such as 'Mg2+' accepted). Rename or remove it.")
            ignored.append(c)
    if id_col is None and ignored:
        id_col = ignored.pop(0)
    if not species:
        raise UserInputProblem(f"upload {filename!r}: no species column found among {list(df.columns)} "
                               f"(known: {', '.join(SPECIES)})")
    dup = [s for s in set(species.values()) if list(species.values()).count(s) > 1]
    if dup:
        raise UserInputProblem(f"upload {filename!r}: species {dup[0]} is given in two columns")
    return {"filename": filename, "columns": list(df.columns), "rows": df.astype(str).values.tolist(),
            "species": species, "id_column": id_col, "density_column": density_col, "ignored": ignored}


def sample_labels(table: dict) -> list[str]:
    """A label for each row: its sample id, or "row N"."""
    cols = table["columns"]
    idc = table.get("id_column")
    out = []
    for i, row in enumerate(table["rows"]):
        label = str(row[cols.index(idc)]).strip() if idc else ""
        out.append(label or f"row {i + 1}")
    return out


def sample(table: dict, index: int) -> dict:
    """One row of a table: ``{"name", "rows": [{"ion", "value"}], "density"}`` (text as in the file;
    empty species cells are left out)."""
    cols = table["columns"]
    row = table["rows"][index]
    ions = [{"ion": c, "value": str(row[cols.index(c)]).strip()} for c in table["species"]
            if str(row[cols.index(c)]).strip()]
    dc = table.get("density_column")
    return {"name": sample_labels(table)[index], "rows": ions,
            "density": str(row[cols.index(dc)]).strip() if dc else ""}


def parse_pasted(text: str, current_ions: list[str]) -> list[dict]:
    """Rows ``[{"ion", "value"}]`` from pasted text.

    Accepted: a header line of ions and a line of values; one line of values in the order of the
    ions already in the table; or one ``ion<sep>value`` pair per line (a column pasted from a
    spreadsheet). Separators: tab, semicolon or comma.

    Raises
    ------
    UserInputProblem
        Text in none of these forms, an unknown ion, or a count of values that does not match.
    """
    lines = [ln for ln in (text or "").replace("\r", "").split("\n") if ln.strip()]
    if not lines:
        raise UserInputProblem("pasted text: nothing to read; paste a row of values (tab or comma separated)")
    if len(lines) > 50:
        raise UserInputProblem(f"pasted text: {len(lines)} lines; paste one analysis (at most 50 lines)")
    sep = "\t" if "\t" in text else (";" if ";" in text else ",")
    cells = [[c.strip() for c in ln.split(sep)] for ln in lines]

    def check(ion):
        try:
            parse_species(ion)
        except InputError as err:
            raise UserInputProblem(f"pasted text: ion {ion!r} is unknown; expected {err.expected}") from None
        return ion

    pairs = all(len(r) == 2 for r in cells) and all(not _is_number(r[0]) for r in cells) \
        and any(_is_number(r[1]) for r in cells)
    if pairs:
        return [{"ion": check(r[0]), "value": r[1]} for r in cells]
    if len(cells) == 2:
        head, vals = cells
        if len(head) != len(vals):
            raise UserInputProblem(f"pasted text: {len(head)} ions in the first line but {len(vals)} values in the second")
        return [{"ion": check(h), "value": v} for h, v in zip(head, vals) if h]
    if len(cells) == 1:
        vals = cells[0]
        ions = [i for i in current_ions if i]
        if len(vals) != len(ions):
            raise UserInputProblem(
                f"pasted text: {len(vals)} values but the table has {len(ions)} ions ({', '.join(ions)}); "
                "paste a header line of ions above the values")
        return [{"ion": i, "value": v} for i, v in zip(ions, vals)]
    raise UserInputProblem("pasted text: expected a header line of ions and a line of values, one line of "
                           "values, or one 'ion, value' pair per line")


def read_session(contents: str, filename: str) -> dict:
    """The inputs of a saved session file (JSON only)."""
    raw = decode(contents, filename)
    try:
        data = json.loads(raw.decode("utf-8-sig"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise UserInputProblem(f"session file {filename!r}: not valid JSON ({exc.__class__.__name__})") from None
    except RecursionError:
        data = None
    if data is None or nesting_depth(data) > MAX_NESTING:
        raise UserInputProblem(f"session file {filename!r}: nested more than {MAX_NESTING} levels deep; not a "
                               "phasekit session (saved with 'Save session')")
    if not isinstance(data, dict) or data.get("format") != "phasekit-session":
        raise UserInputProblem(f"session file {filename!r}: not a phasekit session (saved with 'Save session')")
    return data
