"""The inputs of a session: their shape, defaults and checks.

The same dictionary is kept in the browser (a ``dcc.Store`` with ``storage_type="local"``, filled
in the browser by ``collectInputs`` of assets/clientside.js), saved as a JSON file by "Save
session" and read back by "Load session". Values typed by the user are kept as the text they
typed, so nothing entered is lost, even an invalid value.
"""

from __future__ import annotations

import json

from webapp import database
from webapp.demo import demo_session
from webapp.systems import SYSTEMS
from webapp.uploads import MAX_COLUMNS, MAX_ROWS

FORMAT = "phasekit-session"
VERSION = 1
UNITS = ["mg/kg", "g/kg", "mass%", "mg/L", "g/L", "mol/kg"]
POND_ENDS = {
    "until_saturated": "until saturated with (solid)",
    "water_removed": "water evaporated (fraction of inflow)",
    "concentration_factor": "concentration factor (of inflow)",
}
#: the salts of the conversion view's feed (mol per kg water), in the order of its fields
CONVERSION_SALTS = ("NaNO3", "KCl", "NaCl", "KNO3")
#: the fields of the conversion view, kept as typed (the session's "conversion" entry)
CONVERSION_KEYS = (*CONVERSION_SALTS, "hot_c", "cold_c", "dilution", "hot_solid", "cold_solid", "exclude")
#: an uploaded table of analyses larger than this (characters of JSON) is not kept in the browser
#: (the check is in assets/clientside.js, collectInputs; browsers keep a few MB per site)
MAX_KEPT_TABLE_CHARS = 1_500_000


def _text(v, default="") -> str:
    if v is None:
        return default
    if isinstance(v, bool):
        return default
    if isinstance(v, int | float | str):
        return str(v)
    return default


def _choice(v, allowed, default):
    return v if v in allowed else default


def normalise(data) -> tuple[dict, list[str]]:
    """Complete inputs from a possibly partial or older dictionary.

    Returns the inputs (every key present, every value of the right type; unknown keys dropped)
    and notes about what was replaced by a default.
    """
    d = demo_session()
    notes: list[str] = []
    if not isinstance(data, dict):
        return d, ["no saved inputs: the demo session is loaded"]
    out = {"format": FORMAT, "version": VERSION}
    out["system"] = _choice(data.get("system"), SYSTEMS, d["system"])
    if data.get("system") not in SYSTEMS and "system" in data:
        notes.append(f"system {data.get('system')!r} is unknown; {out['system']} is shown")
    out["temp_c"] = _text(data.get("temp_c"), d["temp_c"])
    out["coordinates"] = _choice(data.get("coordinates"), ("triangular", "rectangular"), d["coordinates"])
    out["basis"] = _choice(data.get("basis"), ("g_per_100g_water", "molality"), d["basis"])
    b = data.get("brine") if isinstance(data.get("brine"), dict) else {}
    rows = []
    for r in b.get("rows", []) if isinstance(b.get("rows"), list) else []:
        if isinstance(r, dict):
            rows.append({"ion": _text(r.get("ion")), "value": _text(r.get("value"))})
    if not b:
        notes.append("no brine in the file: the demo brine is shown")
        out["brine"] = d["brine"]
    else:
        out["brine"] = {
            "name": _text(b.get("name")),
            "units": _choice(b.get("units"), UNITS, "mg/kg"),
            "density": _text(b.get("density")),
            "rows": rows[:40],
            "balance_on": b.get("balance_on") if isinstance(b.get("balance_on"), str) else None,
        }
    a = data.get("analyses")
    out["analyses"] = a if _valid_table(a) else None
    if a is not None and out["analyses"] is None:
        notes.append(f"the table of analyses in the file is not a table of at most {MAX_ROWS} rows and "
                     f"{MAX_COLUMNS} columns of text: it is not loaded")
    p = data.get("path") if isinstance(data.get("path"), dict) else {}
    out["path"] = {
        "process": _choice(p.get("process"), ("evaporation", "cooling"), d["path"]["process"]),
        "mode": _choice(p.get("mode"), ("fractional", "equilibrium"), d["path"]["mode"]),
        "start_c": _text(p.get("start_c"), d["path"]["start_c"]),
        "end_c": _text(p.get("end_c"), d["path"]["end_c"]),
        "scale": _choice(p.get("scale"), ("linear", "log"), "linear"),
        "exclude": _text(p.get("exclude"), ""),
    }
    q = data.get("polytherm") if isinstance(data.get("polytherm"), dict) else {}
    out["polytherm"] = {
        "t_min_c": _text(q.get("t_min_c"), d["polytherm"]["t_min_c"]),
        "t_max_c": _text(q.get("t_max_c"), d["polytherm"]["t_max_c"]),
        "basis": _choice(q.get("basis"), ("mass_percent", "grams_per_100g_water", "molality"),
                         d["polytherm"]["basis"]),
    }
    ponds = []
    for r in data.get("ponds", []) if isinstance(data.get("ponds"), list) else []:
        if isinstance(r, dict):
            ponds.append({"name": _text(r.get("name")), "temp_c": _text(r.get("temp_c")),
                          "end": _choice(r.get("end"), POND_ENDS, "until_saturated"), "value": _text(r.get("value"))})
    out["ponds"] = ponds[:20] if "ponds" in data else d["ponds"]
    # solids kept out of the ponds (text as typed); an older file without the key keeps none out
    out["ponds_exclude"] = _text(data.get("ponds_exclude"), "" if "ponds" in data else d.get("ponds_exclude", ""))
    c = data.get("conversion") if isinstance(data.get("conversion"), dict) else {}
    out["conversion"] = {k: _text(c.get(k), d["conversion"][k]) for k in CONVERSION_KEYS}
    out["database"], note = database.valid_choice(data.get("database"))
    if note:
        notes.append(note)
    return out, notes


def _valid_table(a) -> bool:
    if not isinstance(a, dict):
        return False
    try:
        ok = (isinstance(a["columns"], list) and isinstance(a["rows"], list) and isinstance(a["species"], dict)
              and len(a["rows"]) <= MAX_ROWS and len(a["columns"]) <= MAX_COLUMNS
              and all(isinstance(c, str) for c in a["columns"])
              and all(isinstance(v, str) and len(v) <= 200 for r in a["rows"] if isinstance(r, list) for v in r)
              and all(isinstance(r, list) and len(r) == len(a["columns"]) for r in a["rows"])
              and all(c in a["columns"] for c in a["species"]))
    except (KeyError, TypeError):
        return False
    return ok


def to_json(inputs: dict) -> str:
    """The session file's text."""
    data = dict(inputs)
    data["format"], data["version"] = FORMAT, VERSION
    return json.dumps(data, indent=2, ensure_ascii=False)

