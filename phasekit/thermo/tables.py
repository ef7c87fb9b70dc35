"""Precomputed tables of the thermo layer, shipped with the package so that no process start
rebuilds them: A_phi on its 1 K grids (IAPWS-95 and the IAPWS 1997 permittivity, see
:mod:`phasekit.thermo.water`) and ln J on the ln x grid of the E-theta integral (see
:mod:`phasekit.thermo.etheta`).

The file ``precomputed.json`` holds the grids and the values exactly (JSON floats round-trip
float64), so the splines built from it are the splines built from freshly computed values, bit
for bit; ``tests/unit/test_tables.py`` recomputes every value and compares.
``python scripts/precompute_tables.py`` rewrites the file (after a change of a grid, a formula
or the ``iapws`` package). A table whose stored grid differs from the grid asked for is not
used: the values are then computed, as before.
"""

from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path

import numpy as np

PATH = Path(__file__).with_name("precomputed.json")


@lru_cache(maxsize=1)
def _stored() -> dict:
    try:
        return json.loads(PATH.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}


def stored_values(name: str, grid: np.ndarray) -> np.ndarray | None:
    """The stored values of table ``name`` on ``grid``, or None (no file, or another grid)."""
    entry = _stored().get(name)
    if not entry:
        return None
    stored_grid = np.array(entry["grid"], dtype=float)
    if stored_grid.shape != grid.shape or not np.array_equal(stored_grid, grid):
        return None
    return np.array(entry["values"], dtype=float)


def compute_all() -> dict:
    """Every table computed from its formulation: {name: (grid, values)}."""
    from phasekit.thermo import etheta, water

    return {
        "aphi": (water.aphi_grid(), water.aphi_values(water.aphi_grid())),
        "aphi_cold": (water.aphi_cold_grid(), water.aphi_values(water.aphi_cold_grid())),
        "etheta_lnj": (etheta.lnx_grid(), etheta.lnj_values(etheta.lnx_grid())),
    }


def write(path: Path = PATH) -> None:
    """Compute every table and write the file."""
    import iapws

    doc = {"about": "A_phi (kg/mol)^(1/2) on 1 K grids of temperature (degC) and ln J on a grid of ln x; "
                    "computed by phasekit.thermo.tables.compute_all with iapws " + str(iapws.__version__) +
                    "; rewrite with python scripts/precompute_tables.py"}
    for name, (grid, values) in compute_all().items():
        doc[name] = {"grid": [float(x) for x in grid], "values": [float(v) for v in values]}
    path.write_text(json.dumps(doc, indent=1) + "\n", encoding="utf-8")
    _stored.cache_clear()
