"""Database overlays: the user's own fitted values, applied on top of the embedded database.

An overlay is a TOML file of phasekit's own layout::

    [overlay]
    name = "Saltmarsh Flats lab fits 2026"
    source = "fitted in this project to the works' KCl solubility series"

    [[solid]]                       # replace coefficients of an existing solid's ln K(T)
    name = "sylvite"
    a0 = 2.071
    a3 = -2417.0
    t_min_c = 10.0                  # optional: new validity range
    t_max_c = 60.0
    source = "..."
    stderr = { a0 = 0.004 }         # optional: uncertainties, used by phasekit.uncertainty

    [[solid]]                       # or add a new solid (formula and stoichiometry required)
    name = "my double salt"
    formula = "K2Mg(SO4)2(H2O)4"
    stoichiometry = "K:2 Mg:1 SO4:2 H2O:4"
    a0 = -9.16
    source = "..."

    [[parameter]]                   # a Pitzer parameter (theta, psi, beta0, beta1, beta2, cphi)
    kind = "theta"
    species = ["Na", "K"]
    a0 = -0.0105
    source = "..."

Applying an overlay builds a new model; the embedded files are never changed. Two overlays
that set the same coefficient to different values are refused.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np
import pandas as pd

from phasekit.errors import InputError
from phasekit.thermo.tempfn import COEFFS

PARAM_KINDS = ("theta", "psi", "beta0", "beta1", "beta2", "cphi")


def read_overlay(path) -> dict:
    """Read and check an overlay file; returns its parsed content with ``name`` set."""
    p = Path(path)
    if not p.is_file():
        raise InputError("overlay", str(path), "an existing overlay file (TOML)")
    try:
        data = tomllib.loads(p.read_text())
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError("overlay", str(path), f"a valid TOML overlay file ({exc})") from None
    head = data.get("overlay", {})
    if not isinstance(head, dict) or not head.get("name"):
        raise InputError(f"overlay {p.name} [overlay].name", head.get("name") if isinstance(head, dict) else head,
                         "a name for the overlay")
    unknown = set(data) - {"overlay", "solid", "parameter"}
    if unknown:
        raise InputError(f"overlay {p.name}", sorted(unknown), "only [overlay], [[solid]] and [[parameter]] tables")
    for i, s in enumerate(data.get("solid", [])):
        if not s.get("name"):
            raise InputError(f"overlay {p.name} solid[{i}].name", s.get("name"), "a solid name")
        if not s.get("source"):
            raise InputError(f"overlay {p.name} solid[{i}].source", s.get("source"), "the source of the values")
    for i, q in enumerate(data.get("parameter", [])):
        if q.get("kind") not in PARAM_KINDS:
            raise InputError(f"overlay {p.name} parameter[{i}].kind", q.get("kind"), f"one of {PARAM_KINDS}")
        if not q.get("source"):
            raise InputError(f"overlay {p.name} parameter[{i}].source", q.get("source"), "the source of the values")
    data["name"] = head["name"]
    data["file"] = str(p)
    return data


def _coeffs(entry, where):
    out = {}
    for c in COEFFS:
        if c in entry:
            try:
                v = float(entry[c])
            except (TypeError, ValueError):
                raise InputError(f"{where}.{c}", entry[c], "a number") from None
            if not np.isfinite(v):
                raise InputError(f"{where}.{c}", entry[c], "a finite number")
            out[c] = v
    return out


def apply_overlays(model, overlays) -> object:
    """A new model with the overlays (paths or parsed dicts) applied in order.

    Raises
    ------
    InputError
        An overlay for a solid that does not exist (without formula and stoichiometry to add
        it), an unknown species, or two overlays in conflict.
    """
    from phasekit.model import Model

    parsed = [o if isinstance(o, dict) else read_overlay(o) for o in overlays]
    if not parsed:
        return model
    db = model.db
    solids = db.solids.copy()
    binary = db.binary.copy()
    mixing = db.mixing.copy()
    set_by: dict = {}

    def claim(key, value, name):
        if key in set_by and set_by[key][1] != value:
            raise InputError("overlays", f"{set_by[key][0]} and {name}",
                             f"overlays that do not set {'/'.join(map(str, key))} to different values")
        set_by[key] = (name, value)

    for ov in parsed:
        name = ov["name"]
        for i, s in enumerate(ov.get("solid", [])):
            where = f"overlay {name} solid[{i}]"
            coeffs = _coeffs(s, where)
            try:
                solid = model.solids.resolve(s["name"])
                sel = solids["solid"] == solid
            except InputError:
                if "stoichiometry" not in s or "formula" not in s:
                    raise InputError(f"{where}.name", s["name"],
                                     f"a solid of the database ({', '.join(model.solids.names)}) or a new solid "
                                     "with 'formula' and 'stoichiometry'") from None
                row = {"solid": s["name"], "formula": s["formula"], "stoichiometry": s["stoichiometry"],
                       "a0": 0.0, "a1": 0.0, "a2": 0.0, "a3": 0.0, "a4": 0.0,
                       "t_min_c": float(s.get("t_min_c", 0.0)), "t_max_c": float(s.get("t_max_c", 100.0)),
                       "source": s["source"]}
                solids = pd.concat([solids, pd.DataFrame([row])], ignore_index=True)
                sel = solids["solid"] == s["name"]
                solid = s["name"]
            for c, v in coeffs.items():
                claim(("solid", solid, c), v, name)
                solids.loc[sel, c] = v
            for c in ("t_min_c", "t_max_c"):
                if c in s:
                    solids.loc[sel, c] = float(s[c])
            solids.loc[sel, "source"] = f"overlay {name}: {s['source']}"
        for i, q in enumerate(ov.get("parameter", [])):
            where = f"overlay {name} parameter[{i}]"
            sp = [db.parse_species(x) for x in q.get("species", [])]
            kind = q["kind"]
            coeffs = _coeffs(q, where)
            if kind in ("theta", "psi"):
                need = 2 if kind == "theta" else 3
                if len(sp) != need:
                    raise InputError(f"{where}.species", q.get("species"), f"{need} species")
                s3 = sp[2] if kind == "psi" else ""
                sel = (mixing["kind"] == kind) & (mixing["species3"] == s3) & (
                    ((mixing["species1"] == sp[0]) & (mixing["species2"] == sp[1]))
                    | ((mixing["species1"] == sp[1]) & (mixing["species2"] == sp[0])))
                if not sel.any():
                    row = {"kind": kind, "species1": sp[0], "species2": sp[1], "species3": s3, "a0": 0.0, "a1": 0.0,
                           "a2": 0.0, "a3": 0.0, "a4": 0.0, "t_min_c": 0.0, "t_max_c": 100.0, "source": ""}
                    mixing = pd.concat([mixing, pd.DataFrame([row])], ignore_index=True)
                    sel = mixing.index == mixing.index[-1]
                for c, v in coeffs.items():
                    claim((kind, *sorted(sp[:2]), s3, c), v, name)
                    mixing.loc[sel, c] = v
                mixing.loc[sel, "source"] = f"overlay {name}: {q['source']}"
            else:
                if len(sp) != 2:
                    raise InputError(f"{where}.species", q.get("species"), "[cation, anion]")
                sel = (binary["cation"] == sp[0]) & (binary["anion"] == sp[1]) & (binary["parameter"] == kind)
                if not sel.any():
                    raise InputError(f"{where}", f"{kind} {sp}", "a binary parameter present in the database")
                for c, v in coeffs.items():
                    claim((kind, *sp, c), v, name)
                    binary.loc[sel, c] = v
                binary.loc[sel, "source"] = f"overlay {name}: {q['source']}"
    new = Model(db.with_tables(solids=solids, binary=binary, mixing=mixing))
    new.overlays = list(getattr(model, "overlays", [])) + [o["name"] for o in parsed]
    new.overlay_stderr = {k: v for o in parsed for k, v in _stderr(o).items()}
    return new


def _stderr(ov):
    out = {}
    for s in ov.get("solid", []):
        for c, v in (s.get("stderr") or {}).items():
            out[("solid", s["name"], c)] = float(v)
    for q in ov.get("parameter", []):
        for c, v in (q.get("stderr") or {}).items():
            out[(q["kind"], *q.get("species", []), c)] = float(v)
    return out


def _toml_value(v):
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_toml_value(x)}" for k, x in v.items()) + " }"
    return repr(float(v))


def write_overlay(path, name: str, source: str, solids=(), parameters=()) -> Path:
    """Write an overlay file. ``solids`` and ``parameters``: lists of dicts as in the layout above."""
    if not name:
        raise InputError("name", name, "a name for the overlay")
    lines = ["[overlay]", f"name = {_toml_value(name)}", f"source = {_toml_value(source)}", ""]
    for table, rows in (("solid", solids), ("parameter", parameters)):
        for row in rows:
            lines.append(f"[[{table}]]")
            for k, v in row.items():
                lines.append(f"{k} = {_toml_value(v)}")
            lines.append("")
    p = Path(path)
    p.write_text("\n".join(lines))
    read_overlay(p)  # what we write must read back
    return p


def overlay_from_fit(fit, path, name: str, source: str, solid: str | None = None,
                     t_range: tuple | None = None) -> Path:
    """Save a :class:`phasekit.fitting.FitResult` as an overlay file.

    For a ln K fit give ``solid``; for a Pitzer-parameter fit the parameter names of the fit
    (``"theta/Na/K"``, ``"beta0/K/NO3/a1"``) are used.
    """
    stderr = {k: v for k, v in fit.stderr.items() if v == v}
    if solid is not None:
        row = {"name": solid, **{k: v for k, v in fit.parameters.items()}, "source": source}
        for c in COEFFS:
            row.setdefault(c, 0.0)
        if t_range:
            row["t_min_c"], row["t_max_c"] = float(t_range[0]), float(t_range[1])
        if stderr:
            row["stderr"] = stderr
        return write_overlay(path, name, source, solids=[row])
    params = []
    for key, value in fit.parameters.items():
        parts = key.split("/")
        coef = parts[-1] if parts[-1] in COEFFS else "a0"
        sp = parts[1:-1] if parts[-1] in COEFFS else parts[1:]
        row = {"kind": parts[0], "species": sp, coef: value, "source": source}
        if key in stderr:
            row["stderr"] = {coef: stderr[key]}
        params.append(row)
    return write_overlay(path, name, source, parameters=params)
