"""Liquid-side mass-transfer coefficients of dissolving particles (Sherwood correlations).

``k = Sh D / d`` with the particle diameter d, the diffusion coefficient D of the salt and a
Sherwood number Sh from one of:

``"diffusion"``
    Sh = 2: a sphere in a stagnant, unbounded liquid (exact; Bird, Stewart & Lightfoot 2002,
    Transport Phenomena, 2nd ed., ch. 22).
``"ranz-marshall"`` — a particle with a slip velocity u relative to the liquid
    Sh = 2 + 0.6 Re^(1/2) Sc^(1/3), Re = u d / nu (Ranz & Marshall 1952, Chem. Eng. Prog. 48,
    141). Fitted to evaporating drops in air, Re up to about 200 (from memory); its use for
    liquids (Sc ~ 10^3) is common practice. Above Re = 200 results carry a ValidityWarning.
``"asai"`` — particles suspended in an agitated vessel, power input per mass ε (W/kg)
    Sh = [2^5.8 + (0.61 Re_ε^0.58 Sc^(1/3))^5.8]^(1/5.8), Re_ε = ε^(1/3) d^(4/3) / nu
    (Asai, Konishi & Sasaki 1988, J. Chem. Eng. Japan 21, 107; from memory). Fitted to
    particles from a few µm to about 1 mm, Re_ε up to about 10^3 (from memory, low
    confidence); above Re_ε = 1000 results carry a ValidityWarning. The default for stirred
    vessels: it joins the Sh = 2 limit of fine particles to the turbulent regime of mm-size
    crystals.
``"armenante-kirwan"`` — the same situation
    Sh = 2 + 0.52 Re_ε^0.52 Sc^(1/3) (Armenante & Kirwan 1989, Chem. Eng. Sci. 44, 2781;
    from memory). Fitted to microparticles; used here up to Re_ε = 10 (from memory, low
    confidence), above which results carry a ValidityWarning: at Re_ε = 100–300 it lies
    28–38 % below the Asai and the Levins & Glastonbury (1972) correlations, which agree with
    each other within 8 % (see tests/validation/test_kinetics_validation.py).

The power per mass ε is the mean over the vessel (impeller power / mass of slurry); the
local dissipation near the impeller is higher, away from it lower.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from phasekit.errors import InputError
from phasekit.kinetics.properties import positive

#: correlations and the Reynolds number above which they are extrapolated (see module docstring)
RE_MAX = {
    "diffusion": np.inf,
    "ranz-marshall": 200.0,  # Ranz & Marshall 1952 (from memory)
    "asai": 1000.0,  # Asai, Konishi & Sasaki 1988 (from memory, low confidence)
    "armenante-kirwan": 10.0,  # Armenante & Kirwan 1989 (from memory, low confidence)
}

REFERENCES = {
    "diffusion": "Sh = 2 (stagnant liquid; Bird, Stewart & Lightfoot 2002, ch. 22)",
    "ranz-marshall": "Ranz & Marshall 1952, Chem. Eng. Prog. 48, 141",
    "asai": "Asai, Konishi & Sasaki 1988, J. Chem. Eng. Japan 21, 107",
    "armenante-kirwan": "Armenante & Kirwan 1989, Chem. Eng. Sci. 44, 2781",
}


def reynolds_slip(velocity_m_s, diameter_m, kinematic_viscosity_m2_s):
    """Particle Reynolds number ``u d / nu``."""
    return np.asarray(velocity_m_s) * np.asarray(diameter_m) / kinematic_viscosity_m2_s


def reynolds_kolmogorov(power_w_kg, diameter_m, kinematic_viscosity_m2_s):
    """Kolmogorov particle Reynolds number ``ε^(1/3) d^(4/3) / nu``."""
    return np.cbrt(power_w_kg) * np.asarray(diameter_m) ** (4.0 / 3.0) / kinematic_viscosity_m2_s


def sherwood_ranz_marshall(re, sc):
    """Sh = 2 + 0.6 Re^(1/2) Sc^(1/3) (Ranz & Marshall 1952)."""
    return 2.0 + 0.6 * np.sqrt(re) * np.cbrt(sc)


def sherwood_asai(re_eps, sc):
    """Sh = [2^5.8 + (0.61 Re_ε^0.58 Sc^(1/3))^5.8]^(1/5.8) (Asai, Konishi & Sasaki 1988, from memory)."""
    return (2.0**5.8 + (0.61 * np.asarray(re_eps) ** 0.58 * np.cbrt(sc)) ** 5.8) ** (1.0 / 5.8)


def sherwood_armenante_kirwan(re_eps, sc):
    """Sh = 2 + 0.52 Re_ε^0.52 Sc^(1/3) (Armenante & Kirwan 1989, from memory)."""
    return 2.0 + 0.52 * np.asarray(re_eps) ** 0.52 * np.cbrt(sc)


@dataclass(frozen=True)
class Agitation:
    """How the liquid moves past the particles.

    Build it with :func:`agitation`. ``correlation`` is one of the keys of :data:`RE_MAX`.
    """

    correlation: str
    slip_velocity_m_s: float = 0.0
    power_w_kg: float = 0.0

    def reynolds(self, diameter_m, kinematic_viscosity):
        """Particle Reynolds number of the correlation (slip or Kolmogorov)."""
        if self.correlation == "ranz-marshall":
            return reynolds_slip(self.slip_velocity_m_s, diameter_m, kinematic_viscosity)
        if self.correlation in ("asai", "armenante-kirwan"):
            return reynolds_kolmogorov(self.power_w_kg, diameter_m, kinematic_viscosity)
        return np.zeros_like(np.asarray(diameter_m, dtype=float))

    def sherwood(self, diameter_m, kinematic_viscosity, diffusivity):
        """Sherwood number of particles of diameter ``diameter_m`` (m, array)."""
        d = np.asarray(diameter_m, dtype=float)
        if self.correlation == "diffusion":
            return np.full_like(d, 2.0)
        re = self.reynolds(d, kinematic_viscosity)
        sc = kinematic_viscosity / diffusivity
        if self.correlation == "ranz-marshall":
            return sherwood_ranz_marshall(re, sc)
        if self.correlation == "asai":
            return sherwood_asai(re, sc)
        return sherwood_armenante_kirwan(re, sc)

    def coefficient(self, diameter_m, kinematic_viscosity, diffusivity):
        """Mass-transfer coefficient ``k = Sh D / d``, m/s."""
        d = np.asarray(diameter_m, dtype=float)
        return self.sherwood(d, kinematic_viscosity, diffusivity) * diffusivity / d

    @property
    def reference(self) -> str:
        return REFERENCES[self.correlation]


def agitation(power_w_kg=None, slip_velocity_m_s=None, correlation: str | None = None) -> Agitation:
    """Choose the mass-transfer correlation from what is given.

    Parameters
    ----------
    power_w_kg : float, optional
        Mean power input per mass of slurry, W/kg (stirred vessel): ``"asai"`` by default,
        ``"armenante-kirwan"`` on request.
    slip_velocity_m_s : float, optional
        Velocity of the particles relative to the liquid, m/s: ``"ranz-marshall"``.
    correlation : str, optional
        Name of the correlation; with neither power nor velocity, ``"diffusion"`` (Sh = 2).

    Raises
    ------
    InputError
        Negative power or velocity, both given, or a correlation that does not fit.
    """
    stirred = ("asai", "armenante-kirwan")
    if correlation is not None and correlation not in RE_MAX:
        raise InputError("correlation", correlation, f"one of {sorted(RE_MAX)}")
    if power_w_kg is not None and slip_velocity_m_s is not None:
        raise InputError("power_w_kg/slip_velocity_m_s", (power_w_kg, slip_velocity_m_s),
                         "one of the two: power per mass for a stirred vessel, or a slip velocity")
    if power_w_kg is not None:
        p = positive(power_w_kg, "power_w_kg", "W/kg", allow_zero=True)
        corr = correlation or "asai"
        if corr not in stirred:
            raise InputError("correlation", corr, f"one of {list(stirred)} with power_w_kg")
        return Agitation(corr, power_w_kg=p)
    if slip_velocity_m_s is not None:
        u = positive(slip_velocity_m_s, "slip_velocity_m_s", "m/s", allow_zero=True)
        corr = correlation or "ranz-marshall"
        if corr != "ranz-marshall":
            raise InputError("correlation", corr, "'ranz-marshall' with slip_velocity_m_s")
        return Agitation(corr, slip_velocity_m_s=u)
    corr = correlation or "diffusion"
    if corr != "diffusion":
        raise InputError("correlation", corr,
                         "'diffusion' without power_w_kg or slip_velocity_m_s (give one of them for "
                         f"{corr!r})")
    return Agitation("diffusion")
