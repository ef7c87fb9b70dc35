"""The validation report: the model against the published measurements, system by system.

:func:`build_report` computes, with a model, every table of ``docs/validation.md``:

* the reference set: rows by file, kind and role, and how many rest on recall ("from memory");
* the share of the database's own rows (``data/*.csv``) whose source says "from memory";
* for each ternary system of :data:`SYSTEMS` and each temperature of :data:`SURVEY_TEMPS`, whether the
  isotherm is complete (every saturation curve ends at an invariant point or a binary axis) and which
  solids meet at its invariant points;
* the temperatures (every 5 °C) at which each double salt has a stable crystallization field;
* the residual of every check row: for a liquid saturated with two solids of a ternary system, the
  model's invariant point with the same two solids at the row's temperature against the measured
  composition (difference of each salt's molality, mol/kg, and in per cent); for a single saturated
  salt, the model's solubility of that solid.

:func:`render` writes it as Markdown, numbers rounded so that the text does not depend on the last bits
of floating point; ``scripts/validation_report.py`` writes the file and its figures, and a test fails
when the committed report differs from the one the database gives now.
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd

from phasekit.calibration.measurements import SOLUBILITY_KINDS, read_measurements
from phasekit.chemistry.salts import parse_salt
from phasekit.data_files import data_dir
from phasekit.errors import PhasekitError, ValidityWarning

#: ternary systems of the report (salt pairs with a common ion)
SYSTEMS = (("K2SO4", "MgSO4"), ("KCl", "MgCl2"), ("NaCl", "KCl"), ("NaCl", "MgCl2"), ("KCl", "K2SO4"),
           ("Na2SO4", "K2SO4"), ("Na2SO4", "MgSO4"), ("NaCl", "Na2SO4"), ("MgCl2", "MgSO4"))
SURVEY_TEMPS = (0.0, 25.0, 50.0, 75.0, 100.0)
#: double salts whose temperatures of stability are reported, with the system where they appear
DOUBLE_SALTS = {"schoenite": ("K2SO4", "MgSO4"), "leonite": ("K2SO4", "MgSO4"), "langbeinite": ("K2SO4", "MgSO4"),
                "carnallite": ("KCl", "MgCl2"), "glaserite": ("Na2SO4", "K2SO4"), "bloedite": ("Na2SO4", "MgSO4"),
                "loeweite": ("Na2SO4", "MgSO4"), "vanthoffite": ("Na2SO4", "MgSO4")}
STABILITY_TEMPS = tuple(float(t) for t in range(0, 101, 5))


def system_name(salts) -> str:
    """``("K2SO4", "MgSO4")`` -> ``"K2SO4-MgSO4-H2O"`` (the ``system`` of the measurement files)."""
    return "-".join(salts) + "-H2O"


def figure_name(salts) -> str:
    """File name of a system's figure in ``docs/validation/``."""
    return system_name(salts) + ".png"


@dataclass
class Report:
    """Tables of the validation report (see the module docstring)."""

    reference: pd.DataFrame
    reference_files: pd.DataFrame
    water_activity: pd.DataFrame
    transitions: pd.DataFrame
    database_memory: pd.DataFrame
    survey: pd.DataFrame
    stability: pd.DataFrame
    checks: pd.DataFrame
    fit_rows: pd.DataFrame


def _isotherm(model, salts, temp_c):
    from phasekit.diagrams.ternary import isotherm

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return isotherm(list(salts), temp_c=float(temp_c), model=model, tie_lines_per_curve=0)


def isotherm_state(model, salts, temp_c) -> dict:
    """Completeness and invariant points of one isotherm (errors become a reason, never an exception)."""
    try:
        res = _isotherm(model, salts, temp_c)
    except PhasekitError as exc:
        return {"complete": False, "points": (), "stable": (), "reason": str(exc).split("\n")[0], "result": None}
    incomplete = [w for w in res.warnings if "incomplete" in w]
    stable = tuple(sorted(set(res.curves.loc[~res.curves["metastable"], "solid"]))) if len(res.curves) else ()
    points = tuple(tuple(s) for s in res.invariant_points["solids"])
    return {"complete": not incomplete, "points": points, "stable": stable,
            "reason": incomplete[0] if incomplete else "", "result": res}


def reference_memory(directory=None) -> pd.DataFrame:
    """Rows of every file of ``data/reference/`` and how many rest on recall (a ``from_memory`` column saying
    yes, or "from memory" in a source)."""
    directory = directory or data_dir() / "reference"
    rows = []
    for path in sorted(directory.glob("*.csv")):
        df = pd.read_csv(path, comment="#", dtype=str, keep_default_na=False)
        if "from_memory" in df.columns:
            mem = df["from_memory"].str.lower().isin(("yes", "true", "1"))
        else:
            mem = df.apply(lambda r: r.str.contains("from memory", case=False).any(), axis=1)
        rows.append({"file": path.name, "rows": len(df), "from_memory": int(mem.sum())})
    return pd.DataFrame(rows)


def _saturated_water_activity(model, meas) -> pd.DataFrame:
    """Model a_w of a solid's saturated solution against the measured rows (kind water_activity, a solid, no
    composition)."""
    from phasekit.equilibrium.solubility import solubility

    out = []
    rows = meas[(meas["kind"] == "water_activity") & meas["solid_list"].map(len).astype(bool)] if len(meas) else meas
    for r in rows.itertuples():
        if r.molalities:
            continue
        try:
            aw = solubility(r.solid_list[0], float(r.temp_c), model=model).water_activity
        except PhasekitError:
            aw = np.nan
        out.append({"system": r.system, "temp_c": float(r.temp_c), "solid": r.solid_list[0], "measured": r.value,
                    "model": aw, "role": r.role, "reference": r.reference})
    return pd.DataFrame(out, columns=["system", "temp_c", "solid", "measured", "model", "role", "reference"])


def _transitions(model, meas) -> pd.DataFrame:
    """Model transition temperatures in water (two solids of one salt) against the measured rows."""
    from phasekit.equilibrium.solubility import polytherm

    out, cache = [], {}
    rows = meas[(meas["kind"] == "invariant") & (meas["solid_list"].map(len) == 2)
                & meas["system"].str.fullmatch(r"[A-Za-z0-9]+-H2O")] if len(meas) else meas
    for r in rows.itertuples():
        salt = r.system.split("-")[0]
        if salt not in cache:
            try:
                cache[salt] = polytherm(salt, 0.0, 100.0, 1.0, model=model)[1]
            except PhasekitError:
                cache[salt] = pd.DataFrame(columns=["solid_below", "solid_above", "temp_c"])
        tr = cache[salt]
        hit = tr[tr.apply(lambda x, r=r: {x["solid_below"], x["solid_above"]} == set(r.solid_list), axis=1)] \
            if len(tr) else tr
        out.append({"system": r.system, "solids": "+".join(r.solid_list), "measured_c": float(r.temp_c),
                    "model_c": float(hit["temp_c"].iloc[0]) if len(hit) else np.nan, "role": r.role,
                    "reference": r.reference})
    return pd.DataFrame(out, columns=["system", "solids", "measured_c", "model_c", "role", "reference"])


def database_memory(directory=None) -> pd.DataFrame:
    """Rows of each database file (``data/*.csv``) and how many say "from memory" in their source."""
    directory = directory or data_dir()
    rows = []
    for path in sorted(directory.glob("*.csv")):
        df = pd.read_csv(path, comment="#", dtype=str, keep_default_na=False)
        if "source" not in df.columns:
            continue
        mem = df["source"].str.contains("from memory", case=False)
        rows.append({"file": path.name, "rows": len(df), "from_memory": int(mem.sum())})
    return pd.DataFrame(rows)


def _check_row(model, row, cache) -> dict | None:
    """Model against one check row (None when the row is not a ternary invariant or single-salt point)."""
    salts = [s for s in row.system.replace("-H2O", "").split("-")]
    out = {"system": row.system, "temp_c": row.temp_c, "solids": "+".join(row.solid_list),
           "reference": row.reference, "memory": bool(row.memory)}
    m = row.molalities
    if len(salts) == 2 and len(row.solid_list) == 2 and row.kind == "invariant":
        key = (tuple(salts), round(float(row.temp_c), 3))
        if key not in cache:
            cache[key] = isotherm_state(model, salts, row.temp_c)
        st = cache[key]
        want = tuple(sorted(row.solid_list))
        res = st["result"]
        hit = None
        if res is not None:
            for r in res.invariant_points.itertuples(index=False):
                if tuple(sorted(r.solids)) == want:
                    hit = r._asdict()
        for k, salt in enumerate(salts, 1):
            ions = parse_salt(salt)
            own = [i for i in ions if all(i not in parse_salt(o) for o in salts if o != salt)]
            mol = m.get(own[0], 0.0) / ions[own[0]] if own else np.nan
            out[f"salt_{k}"] = salt
            out[f"measured_{k}"] = mol
            out[f"model_{k}"] = hit[f"{salt}_molality"] if hit else np.nan
        out["found"] = hit is not None
        out["note"] = "" if hit else ("no invariant point with these solids in the model" if st["complete"]
                                      else f"isotherm incomplete: {st['reason']}")
        return out
    if len(salts) == 1 and len(row.solid_list) == 1 and row.kind == "saturation":
        from phasekit.equilibrium.solubility import solubility

        salt = salts[0]
        ions = parse_salt(salt)
        ion = next(iter(ions))
        out.update({"salt_1": salt, "measured_1": m.get(ion, 0.0) / ions[ion]})
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", ValidityWarning)
                out["model_1"] = solubility(row.solid_list[0], row.temp_c, model=model).molality
            out["found"], out["note"] = True, ""
        except PhasekitError as exc:
            out["model_1"], out["found"], out["note"] = np.nan, False, str(exc).split("\n")[0]
        return out
    return None


def build_report(model, measurements: pd.DataFrame | None = None, survey_temps=SURVEY_TEMPS,
                 stability_temps=STABILITY_TEMPS) -> Report:
    """All tables of the report for ``model`` (see the module docstring)."""
    meas = read_measurements() if measurements is None else measurements
    ref = (meas.assign(recalled=meas["memory"]).groupby(["file", "kind", "role"])
           .agg(rows=("system", "size"), from_memory=("recalled", "sum")).reset_index()) if len(meas) else pd.DataFrame()
    cache: dict = {}
    survey = []
    for salts in SYSTEMS:
        for t in survey_temps:
            st = isotherm_state(model, salts, t)
            cache[(tuple(salts), round(float(t), 3))] = st
            survey.append({"system": system_name(salts), "temp_c": float(t), "complete": st["complete"],
                           "invariant_points": "; ".join(" + ".join(p) for p in st["points"]),
                           "reason": st["reason"]})
    stab = []
    for solid, salts in DOUBLE_SALTS.items():
        temps = []
        for t in stability_temps:
            key = (tuple(salts), round(float(t), 3))
            if key not in cache:
                cache[key] = isotherm_state(model, salts, t)
            if solid in cache[key]["stable"]:
                temps.append(t)
        stab.append({"solid": solid, "system": system_name(salts), "stable_at": _ranges(temps)})
    checks = []
    sol = meas[meas["kind"].isin(SOLUBILITY_KINDS)] if len(meas) else meas
    for row in sol[sol["role"] == "check"].itertuples():
        rec = _check_row(model, row, cache)
        if rec is not None:
            checks.append(rec)
    fit_rows = sol[sol["role"] == "fit"][["system", "temp_c", "solid_list", "reference"]] if len(sol) else sol
    return Report(ref, reference_memory(), _saturated_water_activity(model, meas), _transitions(model, meas),
                  database_memory(), pd.DataFrame(survey), pd.DataFrame(stab), pd.DataFrame(checks),
                  fit_rows.reset_index(drop=True))


def _ranges(temps) -> str:
    """``[40, 45, 50, 70]`` -> ``"40–50, 70"`` (steps of 5 °C)."""
    if not temps:
        return "nowhere"
    out, start, prev = [], temps[0], temps[0]
    for t in temps[1:]:
        if t - prev > 5.0 + 1e-9:
            out.append((start, prev))
            start = t
        prev = t
    out.append((start, prev))
    return ", ".join(f"{a:g}" if a == b else f"{a:g}–{b:g}" for a, b in out) + " °C"


def _g(x, digits=3) -> str:
    if x is None or (isinstance(x, float) and not np.isfinite(x)):
        return "—"
    return f"{x:.{digits}g}"


def _table(df: pd.DataFrame, columns: dict) -> list[str]:
    lines = ["| " + " | ".join(columns.values()) + " |", "|" + "---|" * len(columns)]
    for rec in df.to_dict("records"):
        lines.append("| " + " | ".join(str(rec[c]) for c in columns) + " |")
    return lines


def render(rep: Report, figures=()) -> str:
    """The report as Markdown (``figures``: relative paths of PNG files to show under their system)."""
    out = ["# Validation report", "",
           "Written by `scripts/validation_report.py` from the database in `data/` and the published measurements "
           "in `data/reference/measured_*.csv`; do not edit by hand (a test fails when this file is stale). "
           "Residuals compare the model with the **check** rows only (rows never used by a fit); the fit rows are "
           "listed for completeness. Compositions in mol per kg of water.", ""]
    out += ["## The reference set", ""]
    if len(rep.reference):
        out += _table(rep.reference, {"file": "file", "kind": "kind", "role": "role", "rows": "rows",
                                      "from_memory": "from memory"})
        n, mem = int(rep.reference["rows"].sum()), int(rep.reference["from_memory"].sum())
        out += ["", f"{n} rows, {n - mem} read from the publications, {mem} recalled (\"from memory\")."]
    else:
        out += ["No measurement file."]
    out += ["", "Every file of `data/reference/` (the measurement files above and the older tables the calibration "
            "still reads):", ""]
    out += _table(rep.reference_files, {"file": "file", "rows": "rows", "from_memory": "from memory"})
    out += ["", "## Database rows resting on recall", "",
            "Rows of the database files whose source says \"from memory\" (values recalled, not read from the "
            "publication): the first numbers to verify.", ""]
    db = rep.database_memory.assign(share=lambda d: (100.0 * d["from_memory"] / d["rows"]).round(0).astype(int))
    out += _table(db, {"file": "file", "rows": "rows", "from_memory": "from memory", "share": "share (%)"})
    tot, mem = int(db["rows"].sum()), int(db["from_memory"].sum())
    out += ["", f"In all {mem} of {tot} rows ({100.0 * mem / tot:.0f} %) rest on recall."]
    out += ["", "## Completeness of the ternary isotherms", "",
            "Complete: every saturation curve ends at an invariant point or on a binary axis.", ""]
    sv = rep.survey.assign(state=lambda d: np.where(d["complete"], "complete", "INCOMPLETE"),
                           temp=lambda d: d["temp_c"].map(lambda t: f"{t:g}"))
    out += _table(sv, {"system": "system", "temp": "°C", "state": "isotherm", "invariant_points": "invariant points"})
    out += ["", "## Where each double salt is stable in the model", "",
            "Temperatures (every 5 °C, 0–100 °C) at which the solid has a stable crystallization field in the "
            "isotherm of its system.", ""]
    out += _table(rep.stability, {"solid": "solid", "system": "system", "stable_at": "stable at"})
    out += ["", "## Check rows", ""]
    if len(rep.checks):
        ck = rep.checks.copy()
        for k in (1, 2):
            if f"measured_{k}" not in ck:
                ck[f"salt_{k}"], ck[f"measured_{k}"], ck[f"model_{k}"] = "", np.nan, np.nan
        ck["measured"] = [
            "; ".join(f"{s} {_g(a)}" for s, a in ((r["salt_1"], r["measured_1"]), (r["salt_2"], r["measured_2"]))
                      if isinstance(s, str) and s) for r in ck.to_dict("records")]
        ck["model"] = ["; ".join(f"{_g(b)}" for s, b in ((r["salt_1"], r["model_1"]), (r["salt_2"], r["model_2"]))
                                 if isinstance(s, str) and s) for r in ck.to_dict("records")]
        rel = []
        for r in ck.to_dict("records"):
            parts = [100.0 * (r[f"model_{k}"] - r[f"measured_{k}"]) / r[f"measured_{k}"] for k in (1, 2)
                     if isinstance(r[f"salt_{k}"], str) and r[f"salt_{k}"] and r[f"measured_{k}"] > 0]
            rel.append(max(parts, key=abs) if parts and all(np.isfinite(parts)) else np.nan)
        ck["worst_pct"] = rel
        ck["worst"] = [f"{x:+.1f}" if np.isfinite(x) else "—" for x in rel]
        ck["temp"] = ck["temp_c"].map(lambda t: f"{t:g}")
        ck["ref"] = [f"{r['reference']}{' (from memory)' if r['memory'] else ''}" for r in ck.to_dict("records")]
        out += _table(ck, {"system": "system", "temp": "°C", "solids": "solids", "measured": "measured (mol/kg)",
                           "model": "model (mol/kg)", "worst": "worst residual (%)", "note": "note", "ref": "source"})
        out += ["", "Median and worst absolute residual per system (per cent of the measured molality):", ""]
        agg = []
        for system, grp in ck.groupby("system", sort=True):
            vals = np.abs(grp["worst_pct"].to_numpy(float))
            ok = vals[np.isfinite(vals)]
            agg.append({"system": system, "n": len(grp), "found": len(ok),
                        "median": f"{np.median(ok):.1f}" if len(ok) else "—",
                        "worst": f"{np.max(ok):.1f}" if len(ok) else "—"})
        out += _table(pd.DataFrame(agg), {"system": "system", "n": "check rows", "found": "computed",
                                          "median": "median (%)", "worst": "worst (%)"})
    else:
        out += ["No check row."]
    out += ["", "## Water activity of saturated solutions", "",
            "The model's a_w of its own saturated solution of the solid against the published value.", ""]
    if len(rep.water_activity):
        wa = rep.water_activity.assign(
            temp=lambda d: d["temp_c"].map(lambda t: f"{t:g}"),
            meas=lambda d: d["measured"].map(lambda v: f"{v:.4f}"),
            mod=lambda d: d["model"].map(lambda v: f"{v:.4f}" if np.isfinite(v) else "—"),
            diff=lambda d: (d["model"] - d["measured"]).map(lambda v: f"{v:+.4f}" if np.isfinite(v) else "—"))
        out += _table(wa, {"system": "system", "temp": "°C", "solid": "solid", "meas": "measured", "mod": "model",
                           "diff": "model - measured", "role": "role", "reference": "source"})
    out += ["", "## Transition temperatures in water", ""]
    if len(rep.transitions):
        tr = rep.transitions.assign(
            meas=lambda d: d["measured_c"].map(lambda v: f"{v:g}"),
            mod=lambda d: d["model_c"].map(lambda v: f"{v:.1f}" if np.isfinite(v) else "none"))
        out += _table(tr, {"system": "system", "solids": "solids", "meas": "measured (°C)", "mod": "model (°C)",
                           "role": "role", "reference": "source"})
    out += ["", "## Fit rows", ""]
    if len(rep.fit_rows):
        fr = rep.fit_rows.assign(solids=lambda d: d["solid_list"].map("+".join),
                                 temp=lambda d: d["temp_c"].map(lambda t: f"{t:g}"))
        out += _table(fr, {"system": "system", "temp": "°C", "solids": "solids", "reference": "source"})
    else:
        out += ["No fit row."]
    if figures:
        out += ["", "## Figures", ""]
        for f in figures:
            out += [f"![{re.sub(r'[_.]', ' ', str(f))}]({f})", ""]
    return "\n".join(out).rstrip() + "\n"
