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

import math
import os
import tomllib
from collections.abc import Mapping
from pathlib import Path

import numpy as np
import pandas as pd

from phasekit.errors import InputError
from phasekit.thermo.tempfn import COEFFS, basis
from phasekit.validate import names, number, paths_or_documents

PARAM_KINDS = ("theta", "psi", "beta0", "beta1", "beta2", "cphi")
#: largest overlay file read (bytes): a fit of a few dozen values takes a few kB
MAX_OVERLAY_BYTES = 256 * 1024
#: most [[solid]] plus [[parameter]] entries in one overlay
MAX_ENTRIES = 500
HEAD_KEYS = ("name", "source", "description")
SOLID_KEYS = ("name", "formula", "stoichiometry", *COEFFS, "t_min_c", "t_max_c", "source", "stderr")
PARAM_KEYS = ("kind", "species", *COEFFS, "t_min_c", "t_max_c", "source", "stderr")
#: validity temperatures an overlay may state, °C (liquid brines at ordinary pressure, with margin)
T_BOUNDS_C = (-60.0, 250.0)
#: largest magnitude of each coefficient of the temperature function (the embedded database stays
#: well inside: its largest are a1 0.64, a3 9.5e5 and a4 3.2e3, of beta2 of 2:2 salts, and a2 5e-5 of a psi)
COEFF_BOUNDS = {"a0": 1e3, "a1": 10.0, "a2": 1.0, "a3": 1e7, "a4": 1e5}
#: physically sensible values of each kind over its validity range: bounds of our own choice with a
#: wide margin around the magnitudes in the embedded database (at 25 °C: |beta0| below 0.4, |beta1|
#: below 3.4, |beta2| up to 54 for 2:2 salts, |C-phi|, |theta| and |psi| below 0.1, |ln K| of the solids
#: below 40); a value outside is a slip of units or digits, not a fit
VALUE_BOUNDS = {"beta0": (-5.0, 5.0), "beta1": (-30.0, 30.0), "beta2": (-500.0, 500.0), "cphi": (-1.0, 1.0),
                "theta": (-2.0, 2.0), "psi": (-1.0, 1.0), "solid": (-150.0, 80.0)}


def _unknown_keys(entry: dict, allowed, where: str) -> None:
    for k in entry:
        if k not in allowed:
            hint = ""
            low = str(k).lower().replace("_", "")
            near = [a for a in allowed if a.replace("_", "") == low]
            if near:
                hint = f" (did you mean {near[0]!r}?)"
            raise InputError(f"{where}", k, f"one of the keys {', '.join(allowed)}{hint}")


def _text_value(entry: dict, key: str, where: str, required: bool, what: str) -> None:
    if key not in entry:
        if required:
            raise InputError(f"{where}.{key}", None, what)
        return
    v = entry[key]
    if not isinstance(v, str) or not v.strip():
        raise InputError(f"{where}.{key}", v, what)
    if len(v) > 2000:
        raise InputError(f"{where}.{key}", v[:40] + "...", "at most 2000 characters")


def _finite(entry: dict, key: str, where: str, lo=None, hi=None, what="a finite number") -> None:
    if key in entry:
        number(f"{where}.{key}", entry[key], what, lo=lo, hi=hi)


def _check_stoichiometry(text, where: str) -> None:
    from phasekit.chemistry.species import SPECIES, parse_species

    what = "ions with positive amounts that balance the charge, e.g. 'K:2 Mg:1 SO4:2 H2O:4'"
    if not isinstance(text, str) or not text.strip():
        raise InputError(f"{where}.stoichiometry", text, what)
    charge = 0.0
    ions = 0
    for token in text.split():
        ion, colon, amount = token.partition(":")
        if not colon:
            raise InputError(f"{where}.stoichiometry", text, f"{what} ({token!r} has no ':')")
        try:
            n = float(amount)
        except ValueError:
            raise InputError(f"{where}.stoichiometry", text, f"{what} ({amount!r} is not a number)") from None
        if not math.isfinite(n) or n <= 0:
            raise InputError(f"{where}.stoichiometry", text, f"{what} (the amount of {ion} is {amount})")
        if ion == "H2O":
            continue
        try:
            name = parse_species(ion)
        except InputError as err:
            raise InputError(f"{where}.stoichiometry", text, f"{what} ({ion!r}: {err.expected})") from None
        charge += SPECIES[name].charge * n
        ions += 1
    if ions == 0:
        raise InputError(f"{where}.stoichiometry", text, f"{what} (no ion)")
    if abs(charge) > 1e-9:
        raise InputError(f"{where}.stoichiometry", text, f"{what} (the charges add up to {charge:+g})")


def _check_entry(entry, where: str, allowed) -> None:
    if not isinstance(entry, dict):
        raise InputError(where, entry, "a table of keys and values")
    _unknown_keys(entry, allowed, where)
    for c in COEFFS:
        _finite(entry, c, where, -COEFF_BOUNDS[c], COEFF_BOUNDS[c],
                f"a finite number of magnitude at most {COEFF_BOUNDS[c]:g}")
    lo_t, hi_t = T_BOUNDS_C
    for c in ("t_min_c", "t_max_c"):
        _finite(entry, c, where, lo_t, hi_t, f"a temperature from {lo_t:g} to {hi_t:g} °C")
    if "t_min_c" in entry and "t_max_c" in entry and not entry["t_min_c"] < entry["t_max_c"]:
        raise InputError(f"{where}.t_min_c", entry["t_min_c"], f"a temperature below t_max_c ({entry['t_max_c']})")
    _text_value(entry, "source", where, True, "the source of the values (a reference, or 'fitted in this project "
                                             "to <data>')")
    if "stderr" in entry:
        se = entry["stderr"]
        if not isinstance(se, dict):
            raise InputError(f"{where}.stderr", se, "a table of standard deviations, e.g. { a0 = 0.004 }")
        _unknown_keys(se, COEFFS, f"{where}.stderr")
        for c in se:
            _finite(se, c, f"{where}.stderr", 0.0, COEFF_BOUNDS[c], "a standard deviation >= 0 (a finite number)")


def check_overlay(data, label: str = "overlay") -> dict:
    """Check the content of an overlay (parsed TOML, or a mapping of the same layout); returns it
    with ``name`` set.

    Refused: unknown tables or keys (``A0``, ``a_3``), ``[solid]`` written for ``[[solid]]``, values
    of the wrong type, non-finite or out-of-bounds numbers (:data:`COEFF_BOUNDS`, :data:`T_BOUNDS_C`),
    inverted validity ranges, and a new solid whose stoichiometry is not positive and neutral. The
    values each parameter takes over its validity range are checked against :data:`VALUE_BOUNDS` when
    the overlay is applied.
    """
    if not isinstance(data, dict):
        raise InputError(label, type(data).__name__, "an overlay: a table with [overlay] and [[solid]] or "
                         "[[parameter]] entries")
    unknown = set(data) - {"overlay", "solid", "parameter", "name", "file"}
    if unknown:
        raise InputError(label, sorted(map(str, unknown)), "only [overlay], [[solid]] and [[parameter]] tables")
    head = data.get("overlay", {})
    if not isinstance(head, dict):
        raise InputError(f"{label} [overlay]", head, "a table with name and source")
    _unknown_keys(head, HEAD_KEYS, f"{label} [overlay]")
    name = head.get("name", data.get("name"))
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{label} [overlay].name", name, "a name for the overlay")
    for key in ("source", "description"):
        if key in head and not isinstance(head[key], str):
            raise InputError(f"{label} [overlay].{key}", head[key], "text")
    count = 0
    for table, allowed in (("solid", SOLID_KEYS), ("parameter", PARAM_KEYS)):
        entries = data.get(table, [])
        if not isinstance(entries, list):
            raise InputError(f"{label} [{table}]", "a single table",
                             f"[[{table}]] (double brackets: an array of tables, one per {table})")
        count += len(entries)
        for i, e in enumerate(entries):
            where = f"{label} {table}[{i}]"
            _check_entry(e, where, allowed)
            if table == "solid":
                _text_value(e, "name", where, True, "a solid name")
                _text_value(e, "formula", where, False, "a formula, e.g. 'K2Mg(SO4)2(H2O)4'")
                if "stoichiometry" in e:
                    _check_stoichiometry(e["stoichiometry"], where)
            else:
                if e.get("kind") not in PARAM_KINDS:
                    raise InputError(f"{where}.kind", e.get("kind"), f"one of {', '.join(PARAM_KINDS)}")
                sp = e.get("species")
                if sp is None:
                    raise InputError(f"{where}.species", None, "a list of species, e.g. ['Na', 'Cl']")
                names(f"{where}.species", sp, "species, e.g. ['Na', 'Cl']")
    if count > MAX_ENTRIES:
        raise InputError(label, f"{count} entries", f"at most {MAX_ENTRIES} [[solid]] and [[parameter]] entries")
    out = dict(data)
    out["name"] = name.strip()
    return out


def read_overlay(path) -> dict:
    """Read and check an overlay file; returns its parsed content with ``name`` set.

    Files larger than :data:`MAX_OVERLAY_BYTES` are refused before they are parsed.
    """
    if isinstance(path, bool) or not isinstance(path, str | os.PathLike):
        raise InputError("overlay", path, "the path of an overlay file (TOML)")
    p = Path(path)
    if not p.is_file():
        raise InputError("overlay", str(path), "an existing overlay file (TOML)")
    size = p.stat().st_size
    if size > MAX_OVERLAY_BYTES:
        raise InputError("overlay", f"{p.name} ({size / 1024:.0f} kB)",
                         f"an overlay file of at most {MAX_OVERLAY_BYTES // 1024} kB")
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError("overlay", str(path), f"a valid TOML overlay file ({exc})") from None
    except RecursionError:
        raise InputError("overlay", str(path), "a valid TOML overlay file (nested too deeply)") from None
    data = check_overlay(data, f"overlay {p.name}")
    data["file"] = str(p)
    return data


def _coeffs(entry, where):
    """The coefficients an entry sets (already checked by :func:`check_overlay`)."""
    return {c: number(f"{where}.{c}", entry[c]) for c in COEFFS if c in entry}


def apply_overlays(model, overlays) -> object:
    """A new model with the overlays (paths or parsed dicts) applied in order.

    Raises
    ------
    InputError
        An overlay for a solid that does not exist (without formula and stoichiometry to add
        it), an unknown species, or two overlays in conflict.
    """
    from phasekit.model import Model

    parsed = []
    for i, o in enumerate(paths_or_documents("overlays", overlays, "overlay files")):
        if isinstance(o, Mapping):
            parsed.append(check_overlay(dict(o), f"overlays[{i}]"))
        elif isinstance(o, str | os.PathLike) and not isinstance(o, bool):
            parsed.append(read_overlay(o))
        else:
            raise InputError(f"overlays[{i}]", o, "the path of an overlay file (TOML), or an overlay read by "
                                                 "read_overlay")
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
    _check_values(solids, binary, mixing)
    new = Model(db.with_tables(solids=solids, binary=binary, mixing=mixing))
    new.overlays = list(getattr(model, "overlays", [])) + [o["name"] for o in parsed]
    new.overlay_stderr = {k: v for o in parsed for k, v in _stderr(o).items()}
    return new


def _check_values(solids, binary, mixing) -> None:
    """Every overlaid row: a validity range in order, and values within :data:`VALUE_BOUNDS` over it."""
    tables = ((solids, lambda r: ("solid", f"solid {r['solid']}")),
              (binary, lambda r: (r["parameter"], f"{r['parameter']}({r['cation']}, {r['anion']})")),
              (mixing, lambda r: (r["kind"], f"{r['kind']}({', '.join(x for x in (r['species1'], r['species2'], r['species3']) if x)})")))
    for table, describe in tables:
        rows = table[table["source"].astype(str).str.startswith("overlay ")]
        for _, r in rows.iterrows():
            kind, what = describe(r)
            lo_t, hi_t = float(r["t_min_c"]), float(r["t_max_c"])
            if not (math.isfinite(lo_t) and math.isfinite(hi_t) and lo_t < hi_t):
                raise InputError(f"{r['source'].split(':')[0]}: {what} validity range", f"{lo_t:g} to {hi_t:g} °C",
                                 "t_min_c below t_max_c")
            if kind not in VALUE_BOUNDS:
                continue
            lo, hi = VALUE_BOUNDS[kind]
            grid = np.linspace(lo_t, hi_t, 11) + 273.15
            values = basis(grid) @ r[list(COEFFS)].to_numpy(dtype=float)
            worst = values[np.argmax(np.abs(values))]
            if not np.all(np.isfinite(values)) or not np.all((values >= lo) & (values <= hi)):
                at = grid[np.argmax(np.abs(values))] - 273.15
                label = "ln K of" if kind == "solid" else ""
                raise InputError(f"{r['source'].split(':')[0]}: {label} {what}".replace("  ", " "),
                                 f"{worst:.6g} at {at:g} °C",
                                 f"a value from {lo:g} to {hi:g} over the validity range {lo_t:g}–{hi_t:g} °C (a "
                                 "physically sensible bound; check the units and the digits)")


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
