"""Where an ion first leaves the liquid on a path: the loss point of, e.g., lithium in a pond train.

:func:`ion_loss_point` reads a :class:`~phasekit.paths.result.PathResult` (evaporation, cooling, a
programme) and returns, for one ion, the first phase change at which a solid containing that ion appears:
the solid, the concentration factor, the fraction of the initial water removed, the temperature, and the
liquid at that point (molalities, the ion's molality and mass per cent of the liquid, and the fraction of
the ion's initial amount still in the liquid there). Up to that point, in fractional or equilibrium mode
alike, the ion is only concentrated; beyond it, part of it goes into the solid.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from phasekit.errors import InputError


@dataclass(frozen=True)
class IonLossPoint:
    """The first point of a path at which ``ion`` enters a solid.

    Attributes
    ----------
    ion : str
    solid : str
        The first solid containing the ion.
    concentration_factor, water_removed_fraction, temp_c : float
        Where it appears (initial water / water now; fraction of the initial water removed; °C).
    molality : float
        The ion's molality in the liquid there, mol per kg of water.
    mass_percent : float
        The ion's mass in per cent of the liquid (water and dissolved ions) there.
    fraction_in_liquid : float
        Amount of the ion in the liquid there over its initial amount (1 unless another solid took
        some before: by construction none did, so this is 1 within the solver's precision).
    liquid : dict
        Molality of every species of the liquid there.
    """

    ion: str
    solid: str
    concentration_factor: float
    water_removed_fraction: float
    temp_c: float
    molality: float
    mass_percent: float
    fraction_in_liquid: float
    liquid: dict = field(default_factory=dict)


def ion_loss_point(path, ion: str, model=None) -> IonLossPoint | None:
    """The first phase change of ``path`` at which a solid containing ``ion`` appears.

    Parameters
    ----------
    path : PathResult
        From :func:`phasekit.evaporate`, :func:`phasekit.cool`, :func:`phasekit.programme`, ...
    ion : str
        As analyses write it (``"Li"``; charged forms such as ``"Li+"`` are accepted).
    model : Model, optional
        The model that computed the path (for the solids' stoichiometry); default the embedded one.

    Returns
    -------
    IonLossPoint, or None if no solid containing the ion forms on the path.

    Raises
    ------
    InputError
        ``path`` is not a path result, or ``ion`` is not a species of the database or not in the brine.
    """
    from phasekit.chemistry.species import SPECIES
    from phasekit.model import default_model

    model = model or default_model()
    if not (hasattr(path, "events") and hasattr(path, "steps")):
        raise InputError("path", type(path).__name__, "a path result (from phasekit.evaporate, cool, programme, ...)")
    name = model.db.parse_species(ion)
    if name == "H2O" or name not in path.steps.columns:
        raise InputError("ion", ion, f"an ion of the path's brine: {[s for s in model.species if s in path.steps]}")
    ev = path.events[path.events["event"] == "appears"]
    for row in ev.itertuples(index=False):
        st = model.solid_stoichiometry(row.solid)
        if st.get(name, 0) <= 0:
            continue
        rec = row._asdict()
        liquid = {s: float(rec[s]) for s in model.species if s in rec}
        grams = sum(m * SPECIES[s].molar_mass for s, m in liquid.items())
        m_ion = liquid[name]
        first = path.steps.iloc[0]
        water_now = 1.0 / float(row.concentration_factor) * float(first["liquid_water_kg"])
        frac = m_ion * water_now / (float(first[name]) * float(first["liquid_water_kg"]))
        return IonLossPoint(ion=name, solid=row.solid, concentration_factor=float(row.concentration_factor),
                            water_removed_fraction=float(row.water_removed_fraction), temp_c=float(row.temp_c),
                            molality=m_ion, mass_percent=100.0 * m_ion * SPECIES[name].molar_mass / (1000.0 + grams),
                            fraction_in_liquid=frac, liquid=liquid)
    return None
