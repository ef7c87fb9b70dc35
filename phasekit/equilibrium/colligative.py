"""Vapour pressure, boiling point and freezing point of a brine of fixed composition.

* Vapour pressure: the brine's water vapour pressure is ``p = a_w(T) p_sat(T)``, a_w from the
  Pitzer model and p_sat the vapour pressure of pure water on the IAPWS-IF97 saturation line
  (ideal vapour; the Poynting correction, below 0.1 % at these pressures, is left out).
* Boiling point at a pressure P: the root of ``ln a_w(T) + ln p_sat(T) = ln P`` over the model's
  temperature range (0–150 °C), found by ``scipy.optimize.brentq``.
* Freezing point: the temperature where the saturation index of ice is zero,
  ``ln a_w(T) = ln K_ice(T)``, with the database's ice solid (the solid made of water only) and the
  water activity of the supercooled brine, searched from 0 down to ``T_LIQUID_MIN_C`` (-30 °C).

The composition is held as given: no water is lost to the vapour or to ice, and no salt
crystallizes. A brine supersaturated with a salt at its boiling or freezing point (a freezing
point below the eutectic, for example) gets a warning naming the solid, because there the liquid
as given is metastable.

References
----------
Pitzer, K. S. (1991), Activity Coefficients in Electrolyte Solutions, 2nd ed., CRC Press, ch. 3
(water activity from the osmotic coefficient, ln a_w = -M_w Σm φ).
Wagner, W. et al. (2000), The IAPWS Industrial Formulation 1997 for the Thermodynamic Properties of
Water and Steam, J. Eng. Gas Turbines Power 122, 150–182 (saturation pressure).
Robinson, R. A. & Stokes, R. H. (1959), Electrolyte Solutions, 2nd ed., Butterworths, ch. 2
(freezing-point depression and boiling-point elevation from the water activity).
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq

from phasekit.equilibrium.common import composition_array
from phasekit.equilibrium.saturation import LN10, SI_TOLERANCE
from phasekit.errors import InputError, RangeError, ValidityWarning, warn_validity
from phasekit.thermo.water import T_LIQUID_MIN_C, T_MAX_C, T_MIN_C, saturation_pressure_kpa
from phasekit.validate import number

#: standard atmosphere, kPa
ATMOSPHERE_KPA = 101.325


@dataclass
class _Colligative:
    """Common fields; ``float(result)`` gives the main value."""

    water_activity: float
    ionic_strength: float
    warnings: list = field(default_factory=list)
    database: str = "embedded database"

    def __float__(self) -> float:  # pragma: no cover - overridden
        raise NotImplementedError


@dataclass
class VapourPressure(_Colligative):
    """Water vapour pressure of a brine at one temperature.

    Attributes
    ----------
    pressure_kpa : float
        Vapour pressure of the brine, kPa.
    pure_water_kpa : float
        Vapour pressure of pure water at the same temperature, kPa (IAPWS-IF97).
    temp_c : float
    water_activity, ionic_strength : float
        The brine's water activity and ionic strength (mol/kg) at ``temp_c``.
    warnings : list of str
    database : str
    """

    pressure_kpa: float = math.nan
    pure_water_kpa: float = math.nan
    temp_c: float = math.nan

    def __float__(self) -> float:
        return float(self.pressure_kpa)


@dataclass
class BoilingPoint(_Colligative):
    """Boiling point of a brine (composition as given) at one pressure.

    Attributes
    ----------
    temp_c : float
        Boiling point, °C.
    pressure_kpa : float
    elevation_c : float
        Boiling point minus that of pure water at the same pressure, K.
    water_activity, ionic_strength : float
        At the boiling point.
    warnings : list of str
    database : str
    """

    temp_c: float = math.nan
    pressure_kpa: float = math.nan
    elevation_c: float = math.nan

    def __float__(self) -> float:
        return float(self.temp_c)


@dataclass
class FreezingPoint(_Colligative):
    """Freezing point (ice saturation temperature) of a brine.

    Attributes
    ----------
    temp_c : float
        Freezing point, °C.
    depression_c : float
        Freezing point of pure water with the same ice solid minus ``temp_c``, K.
    water_activity, ionic_strength : float
        At the freezing point.
    ice : str
        Name of the ice solid used.
    warnings : list of str
    database : str
    """

    temp_c: float = math.nan
    depression_c: float = math.nan
    ice: str = "ice"

    def __float__(self) -> float:
        return float(self.temp_c)


def _model(model):
    from phasekit.model import default_model

    return model or default_model()


def _ln_aw(model, m, temp_c) -> float:
    """ln a_w of one checked composition at ``temp_c`` (no checks, no warnings: for root-finding)."""
    return float(model.compute(m[None, :], float(temp_c))[2][0])


def _state(model, m, temp_c, supercooled=False):
    """(ln a_w, ionic strength, validity warnings) at the result's temperature, warnings collected, not shown."""
    comp = {s: float(v) for s, v in zip(model.species, m) if v > 0} or {model.species[0]: 0.0}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        r = model.activity(comp, temp_c, supercooled=supercooled)
    return r.ln_water_activity, r.ionic_strength, list(r.warnings)


def _composition(model, brine):
    """The brine's molality vector, checked as the activity model checks it (species, values, charge)."""
    m = composition_array(model, brine)
    model._check(m[None, :], 25.0, None)
    return m


def _supersaturated(model, m, temp_c) -> list[str]:
    """Warnings for the salts that the brine, as given, is supersaturated with at ``temp_c``."""
    ln_g, _, ln_aw, _, _ = model.compute(m[None, :], temp_c)
    si = (model.solids.ln_iap(m[None, :], ln_g, ln_aw) - model.solids.ln_k(temp_c)[None, :])[0] / LN10
    out = []
    for k in np.flatnonzero(model.solids.has_ions & np.isfinite(si) & (si > SI_TOLERANCE)):
        out.append(f"the brine as given is supersaturated with {model.solids.names[k]} at {temp_c:.2f} °C "
                   f"(SI {si[k]:+.3f}): that salt would crystallize first, and the result is that of a "
                   "metastable liquid")
    return out


_RANGE = re.compile(r"^temperature \S+ °C outside the validity range (\S+) °C of the (?:mixing parameter )?(.+?)"
                    r"(?: parameters)?$")


def _condense(found: list[str], temp_c: float) -> list[str]:
    """One warning for all the parameter sets used outside their temperature range (a freezing point of seawater
    would otherwise give one line for each of some thirty sets), the other warnings as they are."""
    sets, rest = {}, []
    for w in found:
        hit = _RANGE.match(w)
        if hit:
            sets.setdefault(hit.group(1), []).append(hit.group(2))
        else:
            rest.append(w)
    out = [f"temperature {temp_c:.4g} °C outside the validity range {rng} °C of the Pitzer parameters of "
           f"{', '.join(names)}: they are extrapolated" for rng, names in sets.items()]
    return out + rest


def _emit(found: list[str]) -> list[str]:
    found = list(dict.fromkeys(found))
    for w in found:
        warn_validity(w)
    return found


def vapour_pressure(brine, temp_c: float, model=None) -> VapourPressure:
    """Water vapour pressure of a brine: its water activity times that of pure water.

    Parameters
    ----------
    brine : Brine or mapping
        Composition, mol per kg water by species (electrically neutral).
    temp_c : float
        Temperature, °C, from 0 to 150 (the model's range; the Pitzer parameters of most pairs
        end at 100 °C, beyond which the result carries validity warnings).
    model : Model, optional
        The model to use (the embedded database by default).

    Returns
    -------
    VapourPressure
        ``.pressure_kpa`` (kPa), ``.pure_water_kpa``, ``.water_activity``, ``.warnings``;
        ``float(result)`` is the pressure in kPa.

    Raises
    ------
    InputError
        A composition that cannot be used (unknown species, negative or non-numeric molality,
        charge imbalance) or a temperature that is not a number.
    RangeError
        A temperature outside 0–150 °C.

    References
    ----------
    Wagner et al. (2000), J. Eng. Gas Turbines Power 122, 150 (IAPWS-IF97 saturation pressure);
    Pitzer (1991), Activity Coefficients in Electrolyte Solutions, 2nd ed., ch. 3 (water activity).
    """
    model = _model(model)
    t = number("temp_c", temp_c, f"a temperature in °C from {T_MIN_C:g} to {T_MAX_C:g}")
    if not T_MIN_C <= t <= T_MAX_C:
        raise RangeError("temp_c", temp_c, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")
    m = _composition(model, brine)
    ln_aw, ion, found = _state(model, m, t)
    p0 = saturation_pressure_kpa(t)
    return VapourPressure(water_activity=math.exp(ln_aw), ionic_strength=ion, warnings=_emit(_condense(found, t)),
                          database=model.label, pressure_kpa=math.exp(ln_aw) * p0, pure_water_kpa=p0, temp_c=t)


def boiling_point(brine, pressure_kpa: float = ATMOSPHERE_KPA, model=None) -> BoilingPoint:
    """Boiling point of a brine of the given composition at a pressure.

    The temperature where the brine's water vapour pressure, a_w(T) p_sat(T), equals
    ``pressure_kpa``. The composition is held as given (no water boiled off, no salt
    crystallized): the boiling point of the liquid as it is, the start of boiling.

    Parameters
    ----------
    brine : Brine or mapping
        Composition, mol per kg water by species (electrically neutral).
    pressure_kpa : float
        Absolute pressure, kPa (default 101.325, one standard atmosphere).
    model : Model, optional
        The model to use (the embedded database by default).

    Returns
    -------
    BoilingPoint
        ``.temp_c`` (°C), ``.elevation_c`` (K above pure water at that pressure),
        ``.water_activity``, ``.warnings``; ``float(result)`` is the boiling point in °C.

    Raises
    ------
    InputError
        A pressure that is not a positive number, or a composition that cannot be used.
    RangeError
        A boiling point outside the model's temperature range, 0–150 °C, where the model cannot
        be evaluated: a pressure below the brine's vapour pressure at 0 °C, or one at which the
        brine boils above 150 °C. The error names the pressure and the range of pressures that
        can be answered for this brine.

    Notes
    -----
    Between 100 and 150 °C the model is evaluated beyond the validity range of most of its Pitzer
    parameters (0–100 °C) and of its solids: such boiling points are returned with validity
    warnings (in ``.warnings`` and as :class:`~phasekit.errors.ValidityWarning`), not refused.
    A brine supersaturated with a salt at its boiling point also gets a warning.

    References
    ----------
    Robinson & Stokes (1959), Electrolyte Solutions, 2nd ed., ch. 2 (boiling-point elevation from
    the water activity); Wagner et al. (2000), J. Eng. Gas Turbines Power 122, 150 (IAPWS-IF97).
    """
    model = _model(model)
    p = number("pressure_kpa", pressure_kpa, "an absolute pressure in kPa (a number > 0)", lo=0.0, lo_open=True)
    m = _composition(model, brine)
    ln_p = math.log(p)

    def f(t):
        return _ln_aw(model, m, t) + math.log(saturation_pressure_kpa(t)) - ln_p

    lo, hi = f(T_MIN_C), f(T_MAX_C)
    if lo > 0 or hi < 0:
        p_lo = math.exp(lo + ln_p)
        p_hi = math.exp(hi + ln_p)
        raise RangeError("pressure_kpa", pressure_kpa,
                         f"a pressure from {p_lo:.4g} to {p_hi:.4g} kPa, at which this brine boils within the "
                         f"model's range {T_MIN_C:g}–{T_MAX_C:g} °C")
    t = float(brentq(f, T_MIN_C, T_MAX_C, xtol=1e-7))
    ln_aw, ion, found = _state(model, m, t)
    found += _supersaturated(model, m, t)
    t_pure = float(brentq(lambda x: math.log(saturation_pressure_kpa(x)) - ln_p, 0.0, 350.0, xtol=1e-7)) \
        if p < saturation_pressure_kpa(350.0) else math.nan
    return BoilingPoint(water_activity=math.exp(ln_aw), ionic_strength=ion, warnings=_emit(_condense(found, t)),
                        database=model.label, temp_c=t, pressure_kpa=p, elevation_c=t - t_pure)


def _ice_index(model) -> int:
    idx = [k for k in range(len(model.solids.names)) if not model.solids.has_ions[k]]
    if not idx:
        raise InputError("model", model.label, "a database with an ice solid (a solid made of water only)")
    return idx[0]


def freezing_point(brine, model=None) -> FreezingPoint:
    """Freezing point of a brine: the temperature where the saturation index of ice is zero.

    Solves ``ln a_w(T) = ln K_ice(T)`` with the database's ice solid (``data/solids.csv``, valid
    -20–0 °C) and the water activity of the brine, supercooled below 0 °C, searched from 0 °C down
    to -30 °C. The composition is held as given: the first ice crystal, not a freezing path.

    Parameters
    ----------
    brine : Brine or mapping
        Composition, mol per kg water by species (electrically neutral).
    model : Model, optional
        The model to use (the embedded database by default).

    Returns
    -------
    FreezingPoint
        ``.temp_c`` (°C), ``.depression_c`` (K below the ice point of pure water with the same ice
        solid), ``.water_activity``, ``.warnings``; ``float(result)`` is the freezing point in °C.

    Raises
    ------
    InputError
        A composition that cannot be used, or a database without an ice solid.
    RangeError
        A brine that does not freeze above -30 °C, the lowest temperature at which the model
        evaluates the liquid (A_phi of supercooled water from IAPWS-95).

    Notes
    -----
    The Pitzer parameters of the database are valid from 0 °C: every freezing point below 0 °C is
    computed with their temperature functions extrapolated, and carries validity warnings (in
    ``.warnings`` and as :class:`~phasekit.errors.ValidityWarning`). This is expected, not an
    error; the checks in ``tests/validation/test_colligative.py`` show how far it holds. Below
    -20 °C ice itself is outside its validity range. A brine supersaturated with a salt at its
    freezing point (below a eutectic) gets a warning naming the salt.

    References
    ----------
    Robinson & Stokes (1959), Electrolyte Solutions, 2nd ed., ch. 2 (freezing-point depression and
    water activity); Pitzer (1991), Activity Coefficients in Electrolyte Solutions, 2nd ed., ch. 3.
    """
    model = _model(model)
    m = _composition(model, brine)
    k = _ice_index(model)

    def ln_k(t):
        return float(model.solids.ln_k(t)[k])

    def f(t):  # ln10 * SI of ice
        return _ln_aw(model, m, t) - ln_k(t)

    t_top = T_MIN_C + 1.0  # above the ice point: SI < 0 for any brine
    lo = f(T_LIQUID_MIN_C)
    if lo < 0:
        raise RangeError("brine", f"ionic strength {_state(model, m, T_MIN_C)[1]:.4g} mol/kg",
                         f"a brine that freezes above {T_LIQUID_MIN_C:g} °C, the lowest temperature at which the "
                         f"model evaluates the liquid (the ice saturation index is still {lo / LN10:.3f} there)")
    t = float(brentq(f, T_LIQUID_MIN_C, t_top, xtol=1e-7))
    ln_aw, ion, found = _state(model, m, t, supercooled=True)
    ice = model.solids.solids[k]
    if not ice.t_min_c <= t <= ice.t_max_c:
        found.append(f"temperature {t:.3g} °C outside the validity range {ice.t_min_c:g}–{ice.t_max_c:g} °C "
                     f"of the solid {ice.name}")
    found += _supersaturated(model, m, t)
    t_pure = float(brentq(ln_k, T_LIQUID_MIN_C, t_top, xtol=1e-9))
    return FreezingPoint(water_activity=math.exp(ln_aw), ionic_strength=ion, warnings=_emit(_condense(found, t)),
                         database=model.label, temp_c=t, depression_c=t_pure - t, ice=ice.name)
