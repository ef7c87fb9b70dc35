"""The thermodynamic driving force of dissolution.

The kinetics take the equilibrium model through one small, injectable function::

    saturation(brine_molalities: dict, solid: str, temp_c: float) -> float

which returns the **saturation index** ``SI = log10(IAP / K)`` of ``solid`` (mineral name,
e.g. ``"sylvite"``) in a brine of the given molalities (mol/kg water) at ``temp_c`` (°C):
negative when undersaturated, zero at saturation, -inf when an ion of the solid is absent.
Common-ion and other mixing effects enter through it. A saturation function may also have a
method ``check(brine_molalities, temp_c, solids) -> list of str`` returning the validity
warnings that concern those solids; the batch model calls it on the initial and the final
brine.

The film driving force Δ (mol of the solid per m³ of brine) is the concentration difference
between the solid's surface, at saturation, and the bulk brine at its current composition
(:func:`film_driving_force`). Film theory with one mass-transfer coefficient for all species
and without the bulk-flow (Stefan) correction: across the film the ions of the solid rise by
nu Δ in mol/m³, every other species has no net flux and keeps its bulk molarity, and Δ solves

    SI( surface composition(Δ) ) = 0,

molarities being turned into molalities with phasekit's density model
(:class:`~phasekit.kinetics.properties.BrineVolume`). Δ is zero exactly at equilibrium and,
for a single salt in water, equals the textbook ``c_sat - c`` in mol/m³.

Implementations
    :class:`EquilibriumSaturation` (default, :data:`equilibrium_saturation_index`) — phasekit's
    solids database and activity model, i.e. the saturation indices of
    ``phasekit.default_model().saturation``.
    :class:`SolubilityProductSaturation` — phasekit's activity model with a solubility product
    given by the caller (the database's K is not used); the tests use it as a test double with
    test-only solubility products.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable, Mapping

import numpy as np
from scipy.optimize import brentq

from phasekit.errors import ConvergenceError, InputError, PhasekitError, RangeError, ValidityWarning
from phasekit.kinetics.properties import BrineVolume, Solid, as_number, find_solid

SaturationFunction = Callable[[Mapping[str, float], str, float], float]

#: a brine taking up more than this (mol of solid per m³) before saturation is refused
_DELTA_MAX = 1.0e6
_LN10 = math.log(10.0)
#: saturation indices this close to zero are not told apart from it: the density model's
#: inversion is solved to 1e-13, which leaves SI uncertain by about 1e-13
SI_NOISE = 1e-11


def _default_model():
    import phasekit as pk

    return pk.default_model()


class EquilibriumSaturation:
    """Saturation index of a solid from phasekit's solids database and activity model.

    ``SI = [sum_i nu_i ln(gamma_i m_i) + n_w ln a_w - ln K] / ln 10`` (Harvie, Møller & Weare
    1984, eq. 1) with the solid's stoichiometry and ln K(T) from ``model.solids`` and the
    activity model's ``compute``: the values of the ``saturation_index`` column of
    ``model.saturation(brine, temp_c)`` (a unit test keeps them equal), computed for one solid
    and one composition so that it is cheap enough for an ODE right-hand side. Validity
    warnings come from :meth:`check`.

    Parameters
    ----------
    model : optional
        The model (default: ``phasekit.default_model()``).
    """

    def __init__(self, model=None):
        self._model = model
        self._solids: dict = {}

    @property
    def model(self):
        if self._model is None:
            self._model = _default_model()
        return self._model

    def __call__(self, brine_molalities: Mapping[str, float], solid: str, temp_c: float) -> float:
        model = self.model
        key = (solid, float(temp_c))
        hit = self._solids.get(key)
        if hit is None:  # stoichiometry and ln K of the solid at this temperature, once
            k = model.solids.index[model.solids.resolve(solid)]
            nu = {model.species[i]: float(v) for i, v in enumerate(model.solids.nu[k]) if v}
            hit = (nu, float(model.solids.nw[k]), float(model.solids.ln_k(float(temp_c))[k]))
            self._solids[key] = hit
        nu, nw, ln_k = hit
        m = np.zeros((1, len(model.species)))
        for s, v in brine_molalities.items():
            m[0, model.index[s]] += v
        if any(m[0, model.index[i]] <= 0.0 for i in nu):
            return -math.inf
        ln_g, _, ln_aw, _, _ = model.compute(m, float(temp_c))
        ln_iap = nw * float(ln_aw[0])
        for i, v in nu.items():
            j = model.index[i]
            ln_iap += v * (math.log(m[0, j]) + float(ln_g[0, j]))
        return (ln_iap - ln_k) / _LN10

    def check(self, brine_molalities: Mapping[str, float], temp_c: float, solids=None) -> list[str]:
        """Validity warnings of the model for this brine: the activity model's, and those of the
        solids in ``solids`` (all solids if None)."""
        mol = {k: v for k, v in brine_molalities.items() if v > 0} or {"Na": 0.0, "Cl": 0.0}
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            table = self.model.saturation(mol, temp_c, amounts=False)
        others = [n for n in self.model.solids.names if solids is not None and n not in solids]
        return [w for w in table.attrs.get("warnings", []) if not any(w.startswith(f"{n}:") for n in others)]


#: the default saturation function: phasekit's equilibrium model
equilibrium_saturation_index = EquilibriumSaturation()


class SolubilityProductSaturation:
    """Saturation index from phasekit's activity model and a solubility product given by the caller.

    ``SI = [sum_i nu_i ln(gamma_i m_i) + h ln a_w - ln K] / ln 10`` with gamma_i and a_w from
    ``phasekit.default_model().activity`` (Pitzer model), the solid's stoichiometry from the
    solids database, and K from the caller — the database's K is **not** used. For a
    solubility product the caller knows, and as a test double.

    Parameters
    ----------
    log10_k : mapping
        {solid (mineral name): log10 K, or a function of temp_c returning log10 K}.
    model : optional
        Activity model (default: ``phasekit.default_model()``).
    """

    def __init__(self, log10_k: Mapping[str, float | Callable[[float], float]], model=None):
        if not hasattr(log10_k, "items") or not log10_k:
            raise InputError("log10_k", log10_k, "a non-empty mapping {solid: log10 K}")
        self.log10_k = dict(log10_k)
        self._model = model

    @classmethod
    def from_solubility(cls, molalities: Mapping[str, float], temp_c: float = 25.0, model=None):
        """Solubility products that reproduce given solubilities of the pure salts in water.

        ``log10 K`` = log10 IAP of the solution of the pure salt at the given molality (mol of
        the salt per kg water) at ``temp_c``, with phasekit's activity model; held constant in
        temperature.

        Parameters
        ----------
        molalities : mapping
            {solid (mineral name or salt formula): solubility of its salt in water, mol/kg}.
        temp_c : float
        model : optional
            Activity model (default: ``phasekit.default_model()``).
        """
        if not hasattr(molalities, "items") or not molalities:
            raise InputError("molalities", molalities, "a non-empty mapping {solid: solubility in mol/kg water}")
        given = {}
        for name, m in molalities.items():
            msat = as_number(m, f"molalities[{name!r}]", "a solubility > 0 mol/kg water")
            if msat <= 0:
                raise InputError(f"molalities[{name!r}]", m, "a solubility > 0 mol/kg water")
            given[find_solid(name, temp_c, field="molalities").name] = msat
        out = cls(dict.fromkeys(given, 0.0), model)
        for name, msat in given.items():
            ions = find_solid(name, temp_c).ions
            out.log10_k[name] = out({ion: nu * msat for ion, nu in ions.items()}, name, temp_c)
        return out

    @property
    def model(self):
        if self._model is None:
            self._model = _default_model()
        return self._model

    def __call__(self, brine_molalities: Mapping[str, float], solid: str, temp_c: float) -> float:
        if solid not in self.log10_k:
            raise InputError("solid", solid, f"one of the solids given a solubility product: {sorted(self.log10_k)}")
        s = find_solid(solid, temp_c)
        lk = self.log10_k[solid]
        lk = float(lk(temp_c)) if callable(lk) else float(lk)
        for ion in s.ions:
            if brine_molalities.get(ion, 0.0) <= 0.0:
                return -math.inf
        act = self.model.activity({k: v for k, v in brine_molalities.items() if v > 0}, temp_c)
        ln_iap = s.hydrate_water * act.ln_water_activity
        for ion, nu in s.ions.items():
            ln_iap += nu * (act.ln_gamma[ion] + math.log(brine_molalities[ion]))
        return ln_iap / _LN10 - lk


def film_driving_force(saturation: SaturationFunction, brine: Mapping[str, float], solid: Solid | str,
                       volume: BrineVolume, guess: float | None = None) -> float:
    """Concentration difference across the film, mol of ``solid`` per m³ of brine.

    The surface is at saturation; across the film the solid's ions rise by nu Δ (mol/m³) while
    every other species keeps its bulk molarity (no net flux), and Δ solves ``SI = 0`` at the
    surface composition. Zero when the brine is saturated or supersaturated (SI >= 0).
    Secant iterations from ``guess``, safeguarded by bracketing and Brent's method
    (|ΔΔ| < 1e-12 Δ).

    Parameters
    ----------
    saturation : callable
        ``saturation(brine_molalities, solid_name, temp_c) -> SI`` (log10 IAP/K).
    brine : mapping
        Bulk molalities, mol/kg water.
    solid : Solid or str
    volume : BrineVolume
        Volumetric conversions at the temperature of the brine.
    guess : float, optional
        A previous solution (mol/m³), to start from.

    Raises
    ------
    RangeError
        If saturation lies beyond the data of the density model.
    """
    temp_c = volume.temp_c
    if isinstance(solid, str):
        solid = find_solid(solid, temp_c)
    bulk = volume.molarities(dict(brine))
    for ion in solid.ions:
        bulk.setdefault(ion, 0.0)
    beyond: list[RangeError] = []

    def si(delta: float) -> float:
        c = dict(bulk)
        for ion, nu in solid.ions.items():
            c[ion] += nu * delta
        try:
            m = volume.molalities(c, key=solid.name)
        except RangeError as exc:  # beyond the density data: unknown, not a number
            beyond.append(exc)
            return math.nan
        value = float(saturation(m, solid.name, temp_c))
        if math.isnan(value):
            raise PhasekitError(f"the saturation function returned NaN for {solid.name} at {temp_c} °C")
        return value

    s0 = float(saturation(dict(brine), solid.name, temp_c))
    if s0 >= -SI_NOISE:
        return 0.0
    if guess is not None and guess > 0.0:
        root = _secant(si, guess, volume.slopes, solid.name)
        if root is not None:
            return root
    lo, hi = _bracket(si, guess if guess and guess > 0 else 100.0, solid, brine, beyond)
    if lo == hi:
        return lo
    return float(brentq(_signed(si), lo, hi, xtol=1e-14 * hi, rtol=1e-12, maxiter=200))


def _signed(si):
    """SI with values inside the noise band set to zero (Brent's method then stops there)."""
    def f(x):
        v = si(x)
        return 0.0 if abs(v) <= SI_NOISE else v
    return f


def _secant(si, x0: float, slopes: dict, key: str) -> float | None:
    """Secant iterations on SI(Δ) = 0 from a previous root, starting with the slope last seen
    for ``key`` (kept in ``slopes``); None if they leave the safe path (then bracketing takes over)."""
    f0 = si(x0)
    if abs(f0) <= SI_NOISE:
        return x0
    slope = slopes.get(key)
    x1 = x0 - f0 / slope if slope else x0 * (1.0 + 1e-4)
    if not (0.5 * x0 < x1 < 2.0 * x0) or x1 == x0:
        x1 = x0 * (1.0 + 1e-4)
    f1 = si(x1)
    for _ in range(12):
        if not (math.isfinite(f0) and math.isfinite(f1)) or f1 == f0:
            return None
        slopes[key] = (f1 - f0) / (x1 - x0)
        x2 = x1 - f1 / slopes[key]
        if not (0.5 * x1 < x2 < 2.0 * x1):
            return None
        if abs(x2 - x1) <= 1e-12 * x2:
            return x2
        x0, f0, x1, f1 = x1, f1, x2, si(x2)
        if abs(f1) <= SI_NOISE:
            return x1
    return None


def _bracket(si, x: float, solid: Solid, brine, beyond: list) -> tuple[float, float]:
    """An interval [lo, hi] with SI(lo) < -SI_NOISE and SI(hi) > SI_NOISE, both finite; or
    (x, x) if SI(x) is within the noise band."""
    fx = si(x)
    if abs(fx) <= SI_NOISE:
        return x, x
    if math.isnan(fx):  # start beyond the density data: come down
        hi_bad = x
        while math.isnan(fx):
            x *= 0.5
            if x < 1e-12:
                raise beyond[-1]
            fx = si(x)
        if fx < 0:
            lo = x
            return lo, _highest_valid(si, lo, hi_bad, solid, beyond)
    if fx < 0.0:
        while fx < 0.0:
            if abs(fx) <= SI_NOISE:
                return x, x
            lo, x = x, x * 4.0
            if x > _DELTA_MAX:
                raise ConvergenceError(f"the brine does not saturate with {solid.name} before {_DELTA_MAX:g} "
                                       "mol/m³ have dissolved; check the saturation function",
                                       {"solid": solid.name, "brine": dict(brine)})
            fx = si(x)
            if math.isnan(fx):
                return lo, _highest_valid(si, lo, x, solid, beyond)
        return lo, x
    hi = x
    for _ in range(2000):
        x *= 0.25
        fx = si(x)
        if abs(fx) <= SI_NOISE:
            return x, x
        if fx < 0.0:
            return x, hi
        hi = x
    raise ConvergenceError(f"no undersaturated composition found for {solid.name}", {"brine": dict(brine)})


def _highest_valid(si, lo: float, bad: float, solid: Solid, beyond: list) -> float:
    """Between an undersaturated ``lo`` and a point ``bad`` beyond the density data, a point
    at or above saturation within the data; RangeError if saturation lies beyond the data."""
    for _ in range(60):
        mid = 0.5 * (lo + bad)
        f = si(mid)
        if math.isnan(f):
            bad = mid
        elif f < 0.0:
            lo = mid
        else:
            return mid
    exc = beyond[-1]
    raise RangeError(exc.field, exc.value,
                     f"{exc.expected} — the surface of {solid.name} at saturation lies beyond the data of the "
                     "density model")
