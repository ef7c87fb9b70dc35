"""The systems offered by the diagram view.

A system is a pair of salts with a common ion (a ternary isotherm salt–salt–water), one of the
reciprocal pairs Na, K // Cl, SO4 and Na, K // Cl, NO3 (Jänecke squares; the second is the system
of the nitrate conversion, see :mod:`webapp.conversion_view`), or the seawater system at halite
saturation (Jänecke K2–Mg–SO4 triangle) — the diagrams of :mod:`phasekit.diagrams`.
Each system also names the salts whose solubility curves the polytherm view draws.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class System:
    """One entry of the system menu.

    Attributes
    ----------
    key : str
        Stable identifier, kept in saved sessions.
    label : str
        Menu text.
    kind : {"ternary", "reciprocal", "reciprocal_nitrate", "seawater"}
        The kind of diagram; for the projections it is also the library's ``result.system`` (the
        name :func:`phasekit.plotting.overlay.projection_path` takes).
    salts : tuple of str
        Ternary: the two salts (first = horizontal axis). Reciprocal: the four salts, corners of
        the square in the order (c1 a1, c2 a1, c1 a2, c2 a2). Seawater: the salts of the polytherms.
    ions : tuple
        Reciprocal: ((c1, c2), (a1, a2)); empty otherwise.
    """

    key: str
    label: str
    kind: str
    salts: tuple
    ions: tuple = ()


def _ternary(a: str, b: str) -> System:
    return System(f"{a}-{b}", f"{a} – {b} – water", "ternary", (a, b))


SYSTEMS: dict[str, System] = {s.key: s for s in [
    _ternary("NaCl", "MgCl2"),
    _ternary("NaCl", "KCl"),
    _ternary("KCl", "MgCl2"),
    _ternary("NaCl", "Na2SO4"),
    _ternary("MgCl2", "MgSO4"),
    _ternary("Na2SO4", "MgSO4"),
    _ternary("K2SO4", "MgSO4"),
    _ternary("KCl", "K2SO4"),
    _ternary("Na2SO4", "K2SO4"),
    _ternary("NaNO3", "KNO3"),
    _ternary("NaCl", "NaNO3"),
    _ternary("KCl", "KNO3"),
    System("reciprocal", "Na⁺, K⁺ ∥ Cl⁻, SO₄²⁻ – water (Jänecke square)", "reciprocal",
           ("NaCl", "KCl", "Na2SO4", "K2SO4"), (("Na", "K"), ("Cl", "SO4"))),
    System("reciprocal-nitrate", "Na⁺, K⁺ ∥ Cl⁻, NO₃⁻ – water (Jänecke square)",
           "reciprocal_nitrate", ("NaCl", "KCl", "NaNO3", "KNO3"), (("Na", "K"), ("Cl", "NO3"))),
    System("seawater", "Seawater salts at halite saturation (Jänecke K₂ – Mg – SO₄ triangle)", "seawater",
           ("NaCl", "KCl", "MgCl2", "MgSO4", "K2SO4")),
]}

DEFAULT_SYSTEM = "NaCl-MgCl2"


def get_system(key) -> System:
    """The system of a menu key (the default one for an unknown key)."""
    return SYSTEMS.get(key, SYSTEMS[DEFAULT_SYSTEM])


def menu_options() -> list[dict]:
    """Options of the system dropdown."""
    return [{"label": s.label, "value": s.key} for s in SYSTEMS.values()]


#: the library's anion argument of ``reciprocal_isotherm`` for each reciprocal kind
RECIPROCAL_ANION = {"reciprocal": "SO4", "reciprocal_nitrate": "NO3"}
