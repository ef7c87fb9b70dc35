"""Writing fitted values into the database's CSV files, keeping every other line as it is."""

from __future__ import annotations

import csv
import io
from pathlib import Path


def fmt(v: float) -> str:
    """A coefficient as written in the data files (9 significant digits, "0" for zero)."""
    if v == 0:
        return "0"
    return f"{v:.9g}"


def rewrite_csv(path: Path, key_cols: tuple, updates: dict) -> int:
    """Rewrite the rows of a CSV of the database whose key is in ``updates`` (other lines untouched).

    ``updates`` maps a tuple of the key columns' values to {column: new value}. Returns the number of
    rows changed.
    """
    lines = path.read_text().splitlines()
    header = None
    out, n = [], 0
    for ln in lines:
        if ln.startswith("#") or not ln.strip():
            out.append(ln)
            continue
        if header is None:
            header = next(csv.reader([ln]))
            out.append(ln)
            continue
        row = next(csv.reader([ln]))
        rec = dict(zip(header, row))
        key = tuple(rec[c] for c in key_cols)
        if key in updates:
            for c, v in updates[key].items():
                rec[c] = fmt(v) if isinstance(v, float) else str(v)
            buf = io.StringIO()
            csv.writer(buf, lineterminator="").writerow([rec[c] for c in header])
            new = buf.getvalue()
            n += new != ln
            out.append(new)
        else:
            out.append(ln)
    path.write_text("\n".join(out) + "\n")
    return n
