"""Export of diagram results to CSV and JSON, and reading them back.

Layout (our own):

- ``to_csv(directory)`` writes one file per table (``curves.csv``, ``invariant_points.csv``,
  ...) and ``meta.json`` with the scalar information (kind, salts, temperature, warnings).
- ``to_csv(file.csv)`` writes every table into one file, stacked with a ``table`` column,
  after a first line ``# phasekit-diagram <meta as JSON>``.
- ``to_json()`` returns (and writes, given a path) one JSON document
  ``{"format": "phasekit-diagram", "meta": {...}, "tables": {name: {"columns": [...],
  "data": [[...], ...]}}}``.

Floats are written with 17 significant digits (CSV) or as Python's shortest exact repr
(JSON), so reading back gives the same numbers. Tuple-valued cells (the ``solids`` of an
invariant point) are written as the names joined by ``+``.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pandas as pd

from phasekit.errors import InputError

FORMAT = "phasekit-diagram"
TUPLE_COLUMNS = ("solids", "solids_below", "solids_above")


def _cell(v):
    if isinstance(v, tuple | list):
        return "+".join(str(x) for x in v)
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not math.isfinite(v):
        return None
    return v


def _restore(df: pd.DataFrame) -> pd.DataFrame:
    for c in TUPLE_COLUMNS:
        if c in df.columns:
            df[c] = [tuple(str(v).split("+")) if isinstance(v, str) and v else () for v in df[c]]
    for c in df.columns:
        if df[c].dtype == object and c not in TUPLE_COLUMNS:
            vals = set(df[c].dropna().tolist())
            if vals and vals <= {True, False, "True", "False"}:
                df[c] = df[c].map(lambda v: v in (True, "True"))
    return df


def _csv_frame(df: pd.DataFrame) -> pd.DataFrame:
    out = df.copy()
    for c in TUPLE_COLUMNS:
        if c in out.columns:
            out[c] = out[c].map(_cell)
    return out


class DiagramData:
    """Base of the diagram results: named tables plus scalar metadata, exportable."""

    kind = "diagram"
    table_names: tuple = ()

    def meta(self) -> dict:  # pragma: no cover - overridden
        return {}

    def tables(self) -> dict:
        return {name: getattr(self, name) for name in self.table_names}

    # ------------------------------------------------------------------ CSV
    def to_csv(self, path) -> list:
        """Write the tables as CSV into a directory (one file each) or into one ``.csv`` file.

        Returns the list of files written.
        """
        path = Path(path)
        meta = {"format": FORMAT, "kind": self.kind, **self.meta()}
        if path.suffix.lower() == ".csv":
            path.parent.mkdir(parents=True, exist_ok=True)
            frames = []
            for name, df in self.tables().items():
                f = _csv_frame(df)
                f.insert(0, "table", name)
                frames.append(f)
            allf = pd.concat(frames, ignore_index=True, sort=False)
            meta["columns"] = {name: [str(c) for c in df.columns] for name, df in self.tables().items()}
            with open(path, "w", encoding="utf-8", newline="") as fh:
                fh.write(f"# {FORMAT} {json.dumps(meta, ensure_ascii=False)}\n")
                allf.to_csv(fh, index=False, float_format="%.17g")
            return [path]
        path.mkdir(parents=True, exist_ok=True)
        files = []
        for name, df in self.tables().items():
            f = path / f"{name}.csv"
            _csv_frame(df).to_csv(f, index=False, float_format="%.17g")
            files.append(f)
        (path / "meta.json").write_text(json.dumps(meta, ensure_ascii=False, indent=1), encoding="utf-8")
        files.append(path / "meta.json")
        return files

    # ----------------------------------------------------------------- JSON
    def to_json(self, path=None) -> str:
        """The whole diagram as one JSON document (written to ``path`` if given)."""
        doc = {"format": FORMAT, "kind": self.kind, "meta": self.meta(), "tables": {}}
        for name, df in self.tables().items():
            doc["tables"][name] = {
                "columns": [str(c) for c in df.columns],
                "data": [[_cell(v) for v in row] for row in df.itertuples(index=False, name=None)],
            }
        text = json.dumps(doc, ensure_ascii=False, allow_nan=False)
        if path is not None:
            Path(path).write_text(text, encoding="utf-8")
        return text


class LoadedDiagram(DiagramData):
    """A diagram read back from CSV or JSON: the same tables and metadata as written."""

    def __init__(self, kind: str, meta: dict, tables: dict):
        self.kind = kind
        self._meta = meta
        self.table_names = tuple(tables)
        for name, df in tables.items():
            setattr(self, name, df)
        self.warnings = list(meta.get("warnings", []))

    def meta(self) -> dict:
        return dict(self._meta)

    def __repr__(self):
        return f"LoadedDiagram(kind={self.kind!r}, tables={list(self.table_names)})"


def read_diagram(path_or_text) -> LoadedDiagram:
    """Read a diagram written by ``to_csv`` (directory or file) or ``to_json`` (file or text)."""
    text = None
    p = None
    if isinstance(path_or_text, str) and path_or_text.lstrip().startswith("{"):
        text = path_or_text
    else:
        p = Path(path_or_text)
        if not p.exists():
            raise InputError("path", str(path_or_text), "a diagram directory, a .csv or .json file, or JSON text")
    if p is not None and p.is_dir():
        meta = json.loads((p / "meta.json").read_text(encoding="utf-8"))
        tables = {}
        for f in sorted(p.glob("*.csv")):
            tables[f.stem] = _restore(pd.read_csv(f, keep_default_na=True))
        kind = meta.pop("kind", "diagram")
        meta.pop("format", None)
        return LoadedDiagram(kind, meta, tables)
    if p is not None and p.suffix.lower() == ".csv":
        with open(p, encoding="utf-8") as fh:
            first = fh.readline()
            if not first.startswith(f"# {FORMAT} "):
                raise InputError("path", str(p), f"a CSV file written by to_csv (first line '# {FORMAT} ...')")
            meta = json.loads(first[len(FORMAT) + 3:])
            allf = pd.read_csv(fh)
        tables = {}
        columns = meta.pop("columns", {})
        for name in dict.fromkeys(allf["table"].tolist()):
            sub = allf[allf["table"] == name].drop(columns="table").reset_index(drop=True)
            sub = sub[columns[name]] if name in columns else sub.dropna(axis=1, how="all")
            tables[name] = _restore(sub.infer_objects())
        kind = meta.pop("kind", "diagram")
        meta.pop("format", None)
        return LoadedDiagram(kind, meta, tables)
    if text is None:
        text = p.read_text(encoding="utf-8")
    doc = json.loads(text)
    if doc.get("format") != FORMAT:
        raise InputError("json", str(doc.get("format")), f"a document with format '{FORMAT}'")
    tables = {name: _restore(pd.DataFrame(t["data"], columns=t["columns"])) for name, t in doc["tables"].items()}
    return LoadedDiagram(doc.get("kind", "diagram"), doc.get("meta", {}), tables)
