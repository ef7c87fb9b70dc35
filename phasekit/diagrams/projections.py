"""Jänecke projections of quaternary systems: the reciprocal salt pair and the oceanic salts at halite saturation.

Two diagrams, both traced by the network construction of :mod:`phasekit.diagrams.network`
(corners, sides, then the field boundaries inside, every invariant point solved exactly):

- :func:`reciprocal_isotherm` — Na+, K+ // Cl−, SO4²− – H2O in Jänecke's square: x = mol K2
  per 100 mol (Na2 + K2), y = mol SO4 per 100 mol (Cl2 + SO4) (Jänecke 1906, Z. anorg.
  Chem. 51, 132). Fields of halite, sylvite, thenardite/mirabilite, arcanite and glaserite;
  at an invariant point three solids and the liquid coexist (C = 4 components, at fixed T
  and P the phase rule allows P = 4 phases).
- :func:`seawater_isotherm` — Na+, K+, Mg2+ // Cl−, SO4²− – H2O saturated with halite (Na
  and Cl in excess), projected on the triangle K2–Mg–SO4 (mol per 100 mol of K2 + Mg +
  SO4), the classical diagram of potash work (van 't Hoff's oceanic salts; D'Ans 1933).
  Halite is present everywhere; at an invariant point halite and three more solids coexist
  with the liquid (C = 5, P = 5).

The water content (mol H2O per 100 mol of the projected salts) is given for every point as
``jaenecke_H2O``.

What is left out: metastable boundaries; the fields are those of the database's solids
(there is no langbeinite, loeweite, vanthoffite, kieserite's lower hydrates or
pentahydrite / starkeyite in it); Ca-bearing solids.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.diagrams.engine import LN10, Evaluator
from phasekit.diagrams.export import DiagramData
from phasekit.diagrams.network import Network
from phasekit.diagrams.systems import HaliteSaturatedSystem, ReciprocalSystem, check_temperature
from phasekit.errors import ValidityWarning, warn_validity

SQRT3_2 = float(np.sqrt(3.0) / 2.0)


@dataclass
class ProjectionResult(DiagramData):
    """A Jänecke projection at one temperature.

    Attributes
    ----------
    system : str
        ``"reciprocal"`` (Na, K // Cl, SO4), ``"reciprocal_nitrate"`` (Na, K // Cl, NO3) or ``"seawater"`` (Na, K, Mg // Cl, SO4 at halite saturation).
    temp_c : float
    curves : pandas.DataFrame
        Field boundaries (and the stretches of the sides): ``boundary`` (id), ``solids`` (tuple;
        imposed halite included), ``face`` (``interior`` or the side's name), ``point``, the
        Jänecke coordinates (``jaenecke_*``), plot coordinates ``x``, ``y``, ion molalities
        (``<ion>_molality``), ``water_activity``, ``ionic_strength``.
    invariant_points : pandas.DataFrame
        Points inside the diagram where three solids (plus halite in the seawater diagram)
        coexist with the liquid: ``solids``, coordinates, molalities, ``max_abs_saturation_index``.
    side_points : pandas.DataFrame
        Invariant points of the sides (ternary subsystems) and the corners: ``location``
        (``side``/``corner``), ``side``, ``solids`` and the same columns.
    fields : pandas.DataFrame
        Crystallization fields as polygons: ``solid``, ``field``, ``vertex``, Jänecke and plot coordinates.
    warnings : list of str
    """

    system: str
    temp_c: float
    curves: pd.DataFrame
    invariant_points: pd.DataFrame
    side_points: pd.DataFrame
    fields: pd.DataFrame
    corners: dict = field(default_factory=dict)
    warnings: list = field(default_factory=list)
    database: str = "embedded database"

    kind = "projection"
    table_names = ("curves", "invariant_points", "side_points", "fields")

    def meta(self) -> dict:
        return {"system": self.system, "temp_c": self.temp_c, "corners": self.corners, "warnings": list(self.warnings),
                "database": self.database}

    @property
    def field_solids(self) -> list:
        """Solids with a crystallization field in this diagram."""
        return sorted(set(self.fields["solid"]))


#: second anion of each reciprocal system
RECIPROCAL_ANION = {"reciprocal": "SO4", "reciprocal_nitrate": "NO3"}


def _plot_xy(system: str, coords: dict):
    if system in RECIPROCAL_ANION:
        return coords["jaenecke_K2"] / 100.0, coords[f"jaenecke_{RECIPROCAL_ANION[system]}"] / 100.0
    mg, so4 = coords["jaenecke_Mg"] / 100.0, coords["jaenecke_SO4"] / 100.0
    return mg + 0.5 * so4, SQRT3_2 * so4


def _point_columns(sysm, system, points) -> dict:
    M = np.array([p.m for p in points])
    coords = sysm.coordinates(M)
    x, y = _plot_xy(system, coords)
    out = dict(coords)
    out["x"], out["y"] = x, y
    for ion in sysm.ions:
        out[f"{ion}_molality"] = M[:, sysm.model_index[ion]]
    out["water_activity"] = np.exp([p.ln_aw for p in points])
    out["ionic_strength"] = np.array([p.ionic_strength for p in points])
    return out


def _solids_tuple(ev, local) -> tuple:
    names = [ev.names[k] for k in ev.imposed] + sorted(ev.names[k] for k in local)
    return tuple(names)


def _build(model, sysm, system: str, temp_c: float) -> ProjectionResult:
    ev = Evaluator(model, sysm, temp_c)
    net = Network(ev)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for ei in range(len(sysm.edges)):
            net.side(ei)
        net.interior()
    # ------------------------------------------------------------- curves
    frames = []
    for sg in net.segments:
        cols = _point_columns(sysm, system, sg.points)
        frames.append(pd.DataFrame({"boundary": sg.id, "solids": [_solids_tuple(ev, sg.solids)] * len(sg.points),
                                    "face": sg.face, "point": np.arange(len(sg.points)), **cols}))
    curves = pd.concat(frames, ignore_index=True)
    # ---------------------------------------------------- invariant points
    def node_rows(nodes, with_location):
        rows = []
        for nd in nodes:
            cols = _point_columns(sysm, system, [nd.point])
            row = {}
            if with_location:
                row["location"] = nd.location
                row["side"] = nd.face
            row["solids"] = _solids_tuple(ev, nd.solids)
            row.update({k: float(v[0]) for k, v in cols.items()})
            act = list(ev.imposed) + list(nd.solids)
            row["max_abs_saturation_index"] = float(np.max(np.abs(nd.point.lnsi[act]))) / LN10
            rows.append(row)
        return pd.DataFrame(rows)

    inner = node_rows([nd for nd in net.nodes if nd.location == "interior"], False)
    if inner.empty:
        inner = pd.DataFrame(columns=["solids", "x", "y", "max_abs_saturation_index"])
    side = node_rows([nd for nd in net.nodes if nd.location != "interior"], True)
    # -------------------------------------------------------------- fields
    frows = []
    fid = 0
    solids_in = sorted({k for sg in net.segments for k in sg.solids})
    for k in solids_in:
        for ring in net.field_cycles(k):
            cols = _point_columns(sysm, system, ring)
            n = len(ring)
            df = pd.DataFrame({"solid": ev.names[k], "field": fid, "vertex": np.arange(n),
                               **{c: v for c, v in cols.items() if c.startswith("jaenecke_") or c in ("x", "y")}})
            frows.append(df)
            fid += 1
    fields = pd.concat(frows, ignore_index=True) if frows else pd.DataFrame(columns=["solid", "field", "vertex"])
    # ------------------------------------------------------------ warnings
    warns = list(net.warnings)
    allm = np.array([p.m for sg in net.segments for p in sg.points])
    ion = np.array([p.ionic_strength for sg in net.segments for p in sg.points])
    warns += model._validity(allm, temp_c, ion)
    rng = model.solids.t_range
    for name in sorted({ev.names[k] for k in solids_in} | {ev.names[k] for k in ev.imposed}):
        kk = model.solids.index[name]
        if not rng[kk, 0] <= temp_c <= rng[kk, 1]:
            warns.append(f"{name}: {temp_c:g} °C outside the validity range {rng[kk, 0]:g}–{rng[kk, 1]:g} °C "
                         "of its solubility product (extrapolated)")
    for w in warns:
        warn_validity(w)
    corners = {v.name: list(_plot_xy(system, _corner_coords(system, v.coords))) for v in sysm.vertices}
    return ProjectionResult(system, float(temp_c), curves, inner.reset_index(drop=True), side.reset_index(drop=True),
                            fields, corners, warns, getattr(model, "label", "embedded database"))


def _corner_coords(system, proj):
    if system in RECIPROCAL_ANION:
        return {"jaenecke_K2": np.array(100.0 * proj[0]),
                f"jaenecke_{RECIPROCAL_ANION[system]}": np.array(100.0 * proj[1])}
    return {"jaenecke_Mg": np.array(100.0 * proj[0]), "jaenecke_SO4": np.array(100.0 * proj[1])}


def reciprocal_isotherm(temp_c: float, exclude=(), model=None, anion: str = "SO4") -> ProjectionResult:
    """Isotherm of a reciprocal salt pair in Jänecke's square: Na+, K+ // Cl−, SO4²− – H2O
    (``anion="SO4"``) or Na+, K+ // Cl−, NO3− – H2O (``anion="NO3"``, the system of the conversion
    NaNO3 + KCl → KNO3 + NaCl).

    Parameters
    ----------
    temp_c : float
        Temperature, °C.
    exclude : sequence of str
        Solids left out (metastable diagrams).
    anion : {"SO4", "NO3"}
        The anion paired with chloride.

    Returns
    -------
    ProjectionResult
        ``system`` is ``"reciprocal"`` (SO4) or ``"reciprocal_nitrate"`` (NO3); the second
        Jänecke coordinate is ``jaenecke_SO4`` (mol SO4 per 100 mol Cl2 + SO4) or
        ``jaenecke_NO3`` (mol NO3 per 100 mol Cl + NO3).
    """
    from phasekit.model import default_model

    model = model or default_model()
    sysm = ReciprocalSystem(model, exclude, anion=anion)
    t = check_temperature(model, sysm.ions, temp_c)
    return _build(model, sysm, "reciprocal" if anion == "SO4" else "reciprocal_nitrate", t)


def seawater_isotherm(temp_c: float, exclude=(), model=None) -> ProjectionResult:
    """Isotherm of the oceanic salts at halite saturation, on the Jänecke triangle K2–Mg–SO4.

    Parameters
    ----------
    temp_c : float
        Temperature, °C.
    exclude : sequence of str
        Solids left out (halite cannot be: it is imposed).

    Returns
    -------
    ProjectionResult
    """
    from phasekit.model import default_model

    model = model or default_model()
    sysm = HaliteSaturatedSystem(model, exclude)
    t = check_temperature(model, sysm.ions, temp_c)
    return _build(model, sysm, "seawater", t)
