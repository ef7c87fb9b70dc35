"""Result of a process path (evaporation, cooling, heating, or a programme of both)."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd


@dataclass
class PathResult:
    """A crystallization path.

    Attributes
    ----------
    events : pandas.DataFrame
        One row per phase change: ``solid``, ``event`` ("appears" | "disappears"), ``point``
        ("transition point" or "eutonic" where the change happens at an invariant point of an
        isothermal evaporation, else empty), ``concentration_factor``, ``water_removed_fraction``,
        ``temp_c``, and the brine composition at that point.
    steps : pandas.DataFrame
        One row per step: ``water_removed_fraction``, ``concentration_factor``, ``temp_c``,
        ``liquid_water_kg`` (per kg of initial water), molality of each species,
        ``water_activity``, ``ionic_strength``, ``density_kg_per_l`` (NaN where the density
        model does not reach), ``solids`` (the solids in equilibrium with the liquid at that row,
        "+"-joined; at an event row, the assemblage the path goes on with, except that a solid
        leaving a transition point in fractional mode is still listed).
    precipitated : pandas.DataFrame
        Aligned with ``steps``: mol of each solid per kg of initial water — cumulative harvest
        in fractional mode, amount present in equilibrium mode.
    end_point : str
        Why the path stopped, in words.
    mode : str
    warnings : list of str
    complete : bool
        False when the path stopped before its end: the solver failed (``stop_reason``
        "failure") or the liquid reached the database's validity limit ("validity limit"); the
        rows computed up to there are kept.
    stop_reason : str
        One of "eutonic", "drying point", "end of programme", "end condition",
        "validity limit", "failure".
    exclude : list of str
        Solids kept out of the path.
    allow_beyond_validity : bool
        Whether the path was allowed past the validity limit.
    mass_balance : pandas.DataFrame
        ``stream``, ``kind`` (in, out, closure), ``kg_per_t_feed``: feed brine = each solid
        (harvested in fractional mode, present at the end in equilibrium mode) + water evaporated
        + the brine left (bittern), and the closure (in - out); see :mod:`phasekit.paths.balance`.
    grades : pandas.DataFrame
        One row per solid and one for all solids together: ``crop_g`` (per kg of initial water),
        ``main_solid``, ``purity``, ``KCl_percent``, ``K2O_percent``; the definitions are in
        ``grades.attrs["definitions"]``.
    charge_balance_note : str
        How the brine was made neutral before the path ("" if it was not changed).
    """

    events: pd.DataFrame
    steps: pd.DataFrame
    precipitated: pd.DataFrame
    end_point: str
    mode: str
    initial_density_kg_per_l: float = float("nan")
    initial_solution_mass_kg: float = float("nan")
    solid_masses: dict = field(default_factory=dict)
    warnings: list = field(default_factory=list)
    database: str = "embedded database"
    complete: bool = True
    stop_reason: str = "end of programme"
    exclude: list = field(default_factory=list)
    allow_beyond_validity: bool = False
    mass_balance: pd.DataFrame = field(default_factory=pd.DataFrame)
    grades: pd.DataFrame = field(default_factory=pd.DataFrame)
    charge_balance_note: str = ""

    @property
    def first_solid(self) -> dict | None:
        """The first solid to come out: its name and where (None if nothing precipitates)."""
        app = self.events[self.events["event"] == "appears"]
        if app.empty:
            return None
        row = app.iloc[0]
        return {"solid": row["solid"], "concentration_factor": float(row["concentration_factor"]),
                "water_removed_fraction": float(row["water_removed_fraction"]), "temp_c": float(row["temp_c"])}

    def summary(self) -> pd.DataFrame:
        """Final amount of each solid: mol and g per kg of initial water, g per kg of initial
        brine, and kg per m³ of initial brine (where its density is known)."""
        last = self.precipitated.iloc[-1] if len(self.precipitated) else pd.Series(dtype=float)
        rows = []
        for solid, mol in last.items():
            if mol <= 0:
                continue
            g = mol * self.solid_masses.get(solid, np.nan)
            g_brine = g / self.initial_solution_mass_kg
            rows.append({"solid": solid, "mol_per_kg_water": mol, "g_per_kg_water": g,
                         "g_per_kg_brine": g_brine, "kg_per_m3_brine": g_brine * self.initial_density_kg_per_l})
        return pd.DataFrame(rows, columns=["solid", "mol_per_kg_water", "g_per_kg_water", "g_per_kg_brine",
                                           "kg_per_m3_brine"]).set_index("solid")
