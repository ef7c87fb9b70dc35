"""Dissolution of a population of particles in a batch of brine (isothermal, well mixed).

Model
-----
Each solid is charged as spheres in size classes (:mod:`phasekit.kinetics.sizes`). A particle
of diameter d dissolves by film theory (rate = k A Δc; Noyes & Whitney 1897, J. Am. Chem. Soc.
19, 930, and Nernst 1904, Z. phys. Chem. 47, 52, in the form of e.g. Mullin 2001,
Crystallization, 4th ed., ch. 6 — references from memory):

    d/dt (rho_m pi d^3 / 6) = -k pi d^2 Δc   =>   d(d^2)/dt = -4 Sh D Δc / rho_m

with rho_m the molar density of the crystal (mol/m³), k = Sh D / d from
:mod:`phasekit.kinetics.transfer` and Δc (mol of the solid per m³ of brine) the concentration
difference to saturation at the current brine composition (:mod:`phasekit.kinetics.saturation`).
For Sh = 2 and constant Δc this is the d² law, d² = d0² - 8 D Δc t / rho_m.

The state is d²/d0² of every class; the brine follows from the mass balance (ions and hydrate
water of the dissolved solid added to the initial brine), its density from phasekit's density
model. A class counts as dissolved when d²/d0² < 1e-10 (1e-15 of its mass left). Integration by
``scipy.integrate.solve_ivp`` (LSODA, dense output); it stops at ``duration_s`` or, without
one, when every solid is either dissolved or in equilibrium with the brine (|SI| < 1e-8).
Times to a dissolved fraction are found by Brent's method on the dense output.

Assumptions (stated, not hidden): isothermal; spheres that keep their shape; liberated grains
(each particle is one solid); no crystal growth — a brine supersaturated with a solid leaves it
unchanged (a warning says so); no nucleation; the liquid volume of the tank changes only
through the dissolved salt; the insoluble part of an ore takes no part.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from phasekit.chemistry.species import M_WATER, SPECIES
from phasekit.errors import InputError, ValidityWarning, warn_validity
from phasekit.kinetics import properties as props
from phasekit.kinetics.saturation import SaturationFunction, equilibrium_saturation_index, film_driving_force
from phasekit.kinetics.sizes import FRACTION_SUM_TOL, SizeDistribution
from phasekit.kinetics.transfer import RE_MAX, Agitation, agitation

#: saturation index within which a solid counts as in equilibrium with the brine (stop criterion)
SI_EQUILIBRIUM = 1e-8
#: rows of the history evenly spaced in time (besides the solver's steps)
N_UNIFORM = 50
#: a class is dissolved when d^2/d0^2 falls below this (remaining mass fraction 1e-15)
GONE = 1e-10
#: ionic strength (mol/kg) above which using the viscosity of pure water is flagged
_I_VISCOSITY_WARN = 1.0


@dataclass
class _Charge:
    solid: props.Solid
    mass_kg: float
    sizes: SizeDistribution
    diffusivity: float
    start: int  # first index in the state vector

    @property
    def stop(self) -> int:
        return self.start + self.sizes.diameters_m.size

    @property
    def class_mass_kg(self) -> np.ndarray:
        return self.mass_kg * self.sizes.mass_fractions


@dataclass
class DissolutionResult:
    """Result of :func:`dissolve` or :func:`leach`.

    Attributes
    ----------
    history : pandas.DataFrame
        One row per time: ``time_s``; ``<solid>_dissolved_fraction`` (mass of the solid
        dissolved / mass charged) for every solid; ``total_dissolved_fraction`` (all solids,
        by mass); ``<species>_molality`` (mol/kg water) of the brine; ``water_kg``;
        ``<solid>_saturation_index``.
    summary : pandas.DataFrame
        Indexed by solid: ``formula``, ``charged_kg``, ``dissolved_kg``, ``dissolved_fraction``,
        ``saturation_index`` at the end, ``time_to_complete_s`` (NaN if not reached).
    brine : dict
        Final molalities, mol/kg water.
    water_kg : float
        Final mass of water in the brine.
    temp_c : float
    correlation : str
        Mass-transfer correlation used (see :mod:`phasekit.kinetics.transfer`).
    warnings : list of str
        Validity and model warnings that apply to this result.
    """

    history: pd.DataFrame
    summary: pd.DataFrame
    brine: dict
    water_kg: float
    temp_c: float
    correlation: str
    warnings: list = field(default_factory=list)
    _model: object = field(default=None, repr=False)

    def time_to(self, fraction: float, solid: str | None = None) -> float | None:
        """Time (s) at which ``fraction`` of the charged mass has dissolved.

        Parameters
        ----------
        fraction : float
            Dissolved fraction, 0 < fraction <= 1 (1 = the last particle is gone).
        solid : str, optional
            A solid (mineral name or salt formula); all solids together by mass if omitted.

        Returns
        -------
        float or None
            Seconds, or None if the fraction is not reached within the computed history
            (e.g. the brine saturates first).
        """
        return self._model.time_to(fraction, solid)

    def particle_diameters(self, time_s: float) -> pd.DataFrame:
        """Diameters of the size classes at ``time_s`` (µm; 0 once dissolved)."""
        return self._model.particle_diameters(time_s)


class _BatchModel:
    """The ODE system and its solution (internal; see :func:`dissolve`)."""

    def __init__(self, charges, brine0, water0, temp_c, agit: Agitation, mu, water_scale, saturation):
        self.charges: list[_Charge] = charges
        self.brine0 = brine0
        self.water0 = water0
        self.temp_c = temp_c
        self.agit = agit
        self.mu = mu
        self.volume = props.BrineVolume(temp_c, water_scale)  # water_scale: measured / estimated water content
        self.saturation = saturation
        species = set(brine0)
        for c in charges:
            species |= set(c.solid.ions)
        self.species = sorted(species, key=lambda s: (-np.sign(SPECIES[s].charge), s))
        self.n = charges[-1].stop
        self.d0 = np.concatenate([c.sizes.diameters_m for c in charges])
        self.mass0 = np.concatenate([c.class_mass_kg for c in charges])
        self._guess: dict[str, float] = {}
        self.sol = None
        self.t_stop = 0.0
        self.steps_t = np.array([0.0])
        self.steps_y = np.ones((self.n, 1))

    # ------------------------------------------------------------------ state
    def dissolved_mol(self, y: np.ndarray) -> np.ndarray:
        """mol dissolved of each solid."""
        left = self.mass0 * np.maximum(y, 0.0) ** 1.5
        return np.array([(self.mass0[c.start:c.stop].sum() - left[c.start:c.stop].sum()) / c.solid.molar_mass
                         for c in self.charges])

    def brine(self, y: np.ndarray) -> tuple[dict[str, float], float]:
        """Brine molalities and water mass (kg) in state ``y``."""
        n = self.dissolved_mol(y)
        water = self.water0 + M_WATER * sum(ni * c.solid.hydrate_water for ni, c in zip(n, self.charges))
        amount = {s: self.brine0.get(s, 0.0) * self.water0 for s in self.species}
        for ni, c in zip(n, self.charges):
            for ion, nu in c.solid.ions.items():
                amount[ion] += ni * nu
        return {s: max(a, 0.0) / water for s, a in amount.items()}, water

    def kinematic_viscosity(self, mol: dict) -> float:
        return self.mu / self.volume.density(mol)

    def driving_force(self, mol: dict, charge: _Charge) -> float:
        """Δc of a solid, mol per m³ of brine."""
        name = charge.solid.name
        delta = film_driving_force(self.saturation, mol, charge.solid, self.volume, self._guess.get(name))
        if delta > 0:
            self._guess[name] = delta
        return delta

    def rhs(self, t, y):
        mol, _ = self.brine(y)
        nu = self.kinematic_viscosity(mol)
        dy = np.zeros_like(y)
        for c in self.charges:
            sl = slice(c.start, c.stop)
            yy = y[sl]
            dc = self.driving_force(mol, c)
            if dc <= 0.0:
                continue
            d0 = self.d0[sl]
            d = d0 * np.sqrt(np.maximum(yy, 0.0))
            sh = self.agit.sherwood(d, nu, c.diffusivity)
            dy[sl] = -4.0 * sh * c.diffusivity * dc / (c.solid.molar_density * d0**2)
        return dy

    def saturation_indices(self, mol: dict) -> list[float]:
        return [float(self.saturation(mol, c.solid.name, self.temp_c)) for c in self.charges]

    def stop_event(self, t, y):
        """> 0 while some solid still dissolves; <= 0 when all are dissolved or in equilibrium."""
        mol, _ = self.brine(y)
        g = -1.0
        for c, si in zip(self.charges, self.saturation_indices(mol)):
            g = max(g, min(float(np.max(y[c.start:c.stop])) - 0.1 * GONE, -si - SI_EQUILIBRIUM))
        return g

    # -------------------------------------------------------------- solution
    def state(self, t: float) -> np.ndarray:
        if self.sol is None or t <= 0.0:
            return np.ones(self.n)
        return np.asarray(self.sol(min(t, self.t_stop)), dtype=float)

    def fractions(self, y: np.ndarray) -> np.ndarray:
        """Dissolved fraction of each solid and of all together (last)."""
        left = self.mass0 * np.maximum(y, 0.0) ** 1.5
        out = [1.0 - left[c.start:c.stop].sum() / self.mass0[c.start:c.stop].sum() for c in self.charges]
        out.append(1.0 - left.sum() / self.mass0.sum())
        return np.array(out)

    def charge_of(self, solid: str) -> _Charge:
        s = props.find_solid(solid, self.temp_c)
        for c in self.charges:
            if c.solid.name == s.name:
                return c
        raise InputError("solid", solid, f"one of the charged solids {[c.solid.name for c in self.charges]}")

    def time_to(self, fraction, solid=None):
        f = props.as_number(fraction, "fraction", "a dissolved fraction > 0 and <= 1")
        if not (0.0 < f <= 1.0):
            raise InputError("fraction", fraction, "a dissolved fraction > 0 and <= 1")
        if solid is None:
            sl, col = slice(0, self.n), -1
        else:
            c = self.charge_of(solid)
            sl, col = slice(c.start, c.stop), self.charges.index(c)
        if self.sol is None:
            return None
        ts, ys = self.steps_t, self.steps_y
        if f >= 1.0:
            def g(t):  # largest remaining d^2/d0^2: crosses GONE when the last particle is gone
                return float(np.max(self.state(t)[sl])) - GONE
            values = ys[sl].max(axis=0) - GONE
        else:
            def g(t):
                return f - self.fractions(self.state(t))[col]
            values = np.array([f - self.fractions(ys[:, i])[col] for i in range(ys.shape[1])])
        hit = np.flatnonzero(values <= 0.0)
        if hit.size == 0:
            return None
        i = int(hit[0])
        if i == 0:
            return 0.0
        return float(brentq(g, ts[i - 1], ts[i], xtol=1e-12 * ts[i], rtol=1e-12))

    def particle_diameters(self, time_s):
        t = props.positive(time_s, "time_s", "s", allow_zero=True)
        y = self.state(t)
        rows = []
        for c in self.charges:
            for k in range(c.start, c.stop):
                rows.append({
                    "solid": c.solid.name, "class": k - c.start, "initial_diameter_um": self.d0[k] * 1e6,
                    "diameter_um": self.d0[k] * math.sqrt(y[k]) * 1e6 if y[k] > GONE else 0.0,
                    "initial_mass_fraction": c.sizes.mass_fractions[k - c.start],
                })
        return pd.DataFrame(rows)


# ------------------------------------------------------------------------ inputs
def _solids_input(solids, temp_c) -> list[tuple[props.Solid, float]]:
    if not hasattr(solids, "items") or not solids:
        raise InputError("solids", solids, "a non-empty mapping {solid: mass in kg}, e.g. {'sylvite': 5.0}")
    out, seen = [], set()
    for name, mass in solids.items():
        s = props.find_solid(name, temp_c, field="solids")
        if s.name in seen:
            raise InputError("solids", name, f"each solid once ({s.name} given twice)")
        seen.add(s.name)
        out.append((s, props.positive(mass, f"solids[{name!r}]", "kg")))
    return out


def _sizes_input(sizes, solids: list[tuple[props.Solid, float]], names) -> dict[str, SizeDistribution]:
    if isinstance(sizes, SizeDistribution):
        return {s.name: sizes for s, _ in solids}
    if hasattr(sizes, "items"):
        out = {}
        for (s, _), given in zip(solids, names):
            dist = sizes.get(given, sizes.get(s.name))
            if not isinstance(dist, SizeDistribution):
                raise InputError(f"sizes[{given!r}]", dist,
                                 "a SizeDistribution (phasekit.kinetics.sieve, lognormal, rosin_rammler or single)")
            out[s.name] = dist
        return out
    raise InputError("sizes", sizes, "a SizeDistribution or a mapping {solid: SizeDistribution} "
                                     "(phasekit.kinetics.sieve, lognormal, rosin_rammler or single)")


def _water_input(brine, temp_c, brine_volume_m3, water_kg, brine_density_kg_m3) -> tuple[float, float]:
    """Water mass (kg) and the measured/estimated water-content factor."""
    scale = 1.0
    if brine_density_kg_m3 is not None:
        rho = props.positive(brine_density_kg_m3, "brine_density_kg_m3", "kg/m³")
        if not (900.0 <= rho <= 2000.0):
            raise InputError("brine_density_kg_m3", brine_density_kg_m3, "a brine density from 900 to 2000 kg/m³")
        scale = rho / props.BrineVolume(temp_c).density(brine)
    if (brine_volume_m3 is None) == (water_kg is None):
        raise InputError("brine_volume_m3/water_kg", (brine_volume_m3, water_kg),
                         "exactly one of: the brine volume (m³) or the mass of its water (kg)")
    if water_kg is not None:
        return props.positive(water_kg, "water_kg", "kg"), scale
    v = props.positive(brine_volume_m3, "brine_volume_m3", "m³")
    return v * props.BrineVolume(temp_c, scale).water_per_volume(brine), scale


def _ionic_strength(mol: dict) -> float:
    return 0.5 * sum(m * SPECIES[s].charge ** 2 for s, m in mol.items())


# ---------------------------------------------------------------------- public
def dissolve(
    solids,
    sizes,
    brine=None,
    *,
    brine_volume_m3: float | None = None,
    water_kg: float | None = None,
    temp_c: float = 25.0,
    power_w_kg: float | None = None,
    slip_velocity_m_s: float | None = None,
    correlation: str | None = None,
    duration_s: float | None = None,
    saturation: SaturationFunction | None = None,
    brine_density_kg_m3: float | None = None,
    viscosity_pa_s: float | None = None,
    output_times_s=None,
    rtol: float = 1e-6,
) -> DissolutionResult:
    """Dissolve solids charged into a batch of brine and follow the brine to saturation.

    Parameters
    ----------
    solids : mapping
        {solid: mass charged, kg}. A solid is a mineral name (``"sylvite"``) or a salt formula
        (``"KCl"``: the stable solid of that salt at ``temp_c``), see
        ``data/kinetics_solids.csv``.
    sizes : SizeDistribution or mapping
        Particle sizes, one distribution for all solids or {solid: distribution}; built with
        :func:`~phasekit.kinetics.sieve`, :func:`~phasekit.kinetics.lognormal`,
        :func:`~phasekit.kinetics.rosin_rammler` or :func:`~phasekit.kinetics.single`
        (sizes in µm there).
    brine : mapping or Brine, optional
        Initial brine, mol/kg water by species; pure water if omitted.
    brine_volume_m3, water_kg : float
        Size of the batch: the brine volume in m³, or the mass of its water in kg (one of them).
    temp_c : float
        Temperature, °C (0–100).
    power_w_kg : float, optional
        Mean power input per mass of slurry of a stirred vessel, W/kg.
    slip_velocity_m_s : float, optional
        Particle velocity relative to the liquid, m/s (instead of ``power_w_kg``).
    correlation : str, optional
        Sherwood correlation (:mod:`phasekit.kinetics.transfer`); chosen from the above by
        default, ``"diffusion"`` (Sh = 2) when neither is given.
    duration_s : float, optional
        Time to integrate, s; by default until every solid is dissolved or in equilibrium.
    saturation : callable, optional
        ``saturation(brine_molalities, solid, temp_c) -> saturation index`` (see
        :mod:`phasekit.kinetics.saturation`); phasekit's equilibrium model by default.
    brine_density_kg_m3 : float, optional
        Measured density of the initial brine, kg/m³; by default phasekit's density model
        (:mod:`phasekit.chemistry.density`). A measured value scales the model's densities of
        the whole run by the same factor.
    viscosity_pa_s : float, optional
        Dynamic viscosity of the brine, Pa·s; by default that of pure water (IAPWS 2008), which
        underestimates concentrated brines (a warning says so).
    output_times_s : sequence of float, optional
        Extra times at which the history has rows (besides the solver's steps).
    rtol : float
        Relative tolerance of the integration.

    Returns
    -------
    DissolutionResult

    Raises
    ------
    InputError
        Bad input, naming the field, the value and what would be accepted (``RangeError`` for
        a temperature outside 0–100 °C, or a surface composition beyond the density data).
    """
    t = props.check_temperature(temp_c)
    solid_list = _solids_input(solids, t)
    names = list(solids.keys())
    dists = _sizes_input(sizes, solid_list, names)
    brine0 = props.check_brine(brine)
    water0, scale = _water_input(brine0, t, brine_volume_m3, water_kg, brine_density_kg_m3)
    agit = agitation(power_w_kg, slip_velocity_m_s, correlation)
    mu = props.water_viscosity(t) if viscosity_pa_s is None else props.positive(viscosity_pa_s, "viscosity_pa_s", "Pa·s")
    t_end = None if duration_s is None else props.positive(duration_s, "duration_s", "s")
    if saturation is None:
        saturation = equilibrium_saturation_index
    elif not callable(saturation):
        raise InputError("saturation", saturation, "a function (brine_molalities, solid, temp_c) -> saturation index")
    r = props.as_number(rtol, "rtol", "a relative tolerance from 1e-12 to 1e-3")
    if not (1e-12 <= r <= 1e-3):
        raise InputError("rtol", rtol, "a relative tolerance from 1e-12 to 1e-3")
    extra_t = [] if output_times_s is None else [
        props.positive(x, f"output_times_s[{i}]", "s", allow_zero=True) for i, x in enumerate(output_times_s)]

    charges, start = [], 0
    for s, mass in solid_list:
        dist = dists[s.name]
        charges.append(_Charge(s, mass, dist, s.diffusivity(t), start))
        start += dist.diameters_m.size
    model = _BatchModel(charges, brine0, water0, t, agit, mu, scale, saturation)
    notes: list[str] = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("default")  # each distinct message once
        _integrate(model, t_end, r, notes)
        times = set(model.steps_t.tolist()) | set(extra_t)
        t_last = model.t_stop if t_end is None else t_end
        times |= set(np.linspace(0.0, t_last, N_UNIFORM + 1).tolist())
        times.add(t_last)
        times = np.array(sorted(times))
        history = _history(model, times)
    check = getattr(saturation, "check", None)
    if callable(check):
        for x in (0.0, float(times[-1])):
            for w in check(model.brine(model.state(x))[0], t, [c.solid.name for c in model.charges]):
                if w not in notes:
                    notes.append(w)
    notes.extend(w for w in model.volume.warnings if w not in notes)
    for w in caught:  # keep what the saturation function and the correlations said, on the result
        if issubclass(w.category, ValidityWarning):
            if str(w.message) not in notes:
                notes.append(str(w.message))
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    for msg in notes:
        warn_validity(msg)
    _check_result(model, history, times, viscosity_pa_s is None, notes)
    summary = _summary(model, history)
    final_mol, final_water = model.brine(model.state(float(times[-1])))
    return DissolutionResult(history=history, summary=summary, brine=final_mol, water_kg=final_water, temp_c=t,
                             correlation=agit.correlation, warnings=notes, _model=model)


def _integrate(model: _BatchModel, t_end: float | None, rtol: float, notes: list) -> None:
    """Initial driving forces, validity of the correlation, and the integration itself."""
    agit = model.agit
    mol0, _ = model.brine(np.ones(model.n))
    nu0 = model.kinematic_viscosity(mol0)
    t_scale = 0.0
    for c in model.charges:
        dc = model.driving_force(mol0, c)
        if dc <= 0:
            props.validity_warning(f"the brine is already saturated with {c.solid.name}: it does not dissolve", notes)
            continue
        t_scale = max(t_scale, c.solid.molar_density * float(np.max(c.sizes.diameters_m)) ** 2
                      / (8.0 * c.diffusivity * dc))
        re = float(np.max(agit.reynolds(c.sizes.diameters_m, nu0)))
        if re > RE_MAX[agit.correlation]:
            props.validity_warning(
                f"particle Reynolds number {re:.3g} of {c.solid.name} above {RE_MAX[agit.correlation]:g}, "
                f"the range of the {agit.correlation} correlation ({agit.reference})", notes)
    if t_scale <= 0.0:
        return
    horizon = t_end if t_end is not None else 1e3 * t_scale

    def event(tt, yy):
        return model.stop_event(tt, yy)

    event.terminal = True
    event.direction = -1
    sol = solve_ivp(model.rhs, (0.0, horizon), np.ones(model.n), method="LSODA", dense_output=True,
                    events=event, rtol=rtol, atol=rtol * 1e-2)
    if sol.status < 0:
        raise RuntimeError(f"dissolution integration failed: {sol.message}")
    model.sol = sol.sol
    model.t_stop = float(sol.t[-1])
    model.steps_t, model.steps_y = sol.t, sol.y
    if t_end is None and sol.status == 0:
        props.validity_warning(f"stopped at {horizon:.3g} s before all solids dissolved or saturated", notes)


def _check_result(model: _BatchModel, history: pd.DataFrame, times: np.ndarray, water_viscosity: bool,
                  notes: list) -> None:
    """Warnings about the model's own assumptions, visible on the result."""
    i_max = max(_ionic_strength(model.brine(model.state(x))[0]) for x in (0.0, float(times[-1])))
    if water_viscosity and i_max > _I_VISCOSITY_WARN:
        props.validity_warning(
            f"viscosity of pure water used for a brine of ionic strength up to {i_max:.3g} mol/kg; concentrated "
            "brines are more viscous (near halite saturation about twice as viscous, from memory of the CRC "
            "Handbook table of concentrative properties): give viscosity_pa_s for a measured value", notes)
    for c in model.charges:
        col = history[f"{c.solid.name}_saturation_index"]
        left = history[f"{c.solid.name}_dissolved_fraction"] < 1.0 - 1e-12
        worst = float(col[left].max()) if left.any() else -np.inf
        if worst > 1e-6:
            props.validity_warning(
                f"the brine becomes supersaturated with {c.solid.name} (saturation index up to {worst:.3g}); "
                "crystal growth is not modelled: its remaining amount is held constant", notes)


def _history(model: _BatchModel, times: np.ndarray) -> pd.DataFrame:
    rows = []
    for x in times:
        y = model.state(float(x))
        fr = model.fractions(y)
        mol, water = model.brine(y)
        row = {"time_s": float(x)}
        for c, f in zip(model.charges, fr):
            row[f"{c.solid.name}_dissolved_fraction"] = float(f)
        row["total_dissolved_fraction"] = float(fr[-1])
        for s in model.species:
            row[f"{s}_molality"] = mol[s]
        row["water_kg"] = water
        for c, si in zip(model.charges, model.saturation_indices(mol)):
            row[f"{c.solid.name}_saturation_index"] = si
        rows.append(row)
    return pd.DataFrame(rows)


def _summary(model: _BatchModel, history: pd.DataFrame) -> pd.DataFrame:
    last = history.iloc[-1]
    rows = []
    for c in model.charges:
        f = float(last[f"{c.solid.name}_dissolved_fraction"])
        done = model.time_to(1.0, c.solid.name)
        rows.append({
            "solid": c.solid.name, "formula": c.solid.formula, "charged_kg": c.mass_kg, "dissolved_kg": f * c.mass_kg,
            "dissolved_fraction": f, "saturation_index": float(last[f"{c.solid.name}_saturation_index"]),
            "time_to_complete_s": np.nan if done is None else done,
        })
    return pd.DataFrame(rows).set_index("solid")


def leach(
    ore_kg: float,
    composition,
    sizes,
    brine=None,
    *,
    residence_s: float,
    brine_volume_m3: float | None = None,
    water_kg: float | None = None,
    temp_c: float = 25.0,
    power_w_kg: float | None = None,
    slip_velocity_m_s: float | None = None,
    correlation: str | None = None,
    saturation: SaturationFunction | None = None,
    brine_density_kg_m3: float | None = None,
    viscosity_pa_s: float | None = None,
    rtol: float = 1e-6,
) -> DissolutionResult:
    """Leach an ore of several salts in a batch of brine for a residence time.

    Typical use: a sylvinite (sylvite + halite) leached with a brine near halite saturation, so
    that sylvite dissolves while halite hardly does.

    Parameters
    ----------
    ore_kg : float
        Mass of ore, kg.
    composition : mapping
        {solid: mass fraction in the ore}; fractions sum to at most 1 (the rest is insoluble and
        takes no part). Grains are taken as liberated: each particle is one solid.
    sizes : SizeDistribution or mapping
        Grain sizes, one distribution for all solids or {solid: distribution}.
    brine, brine_volume_m3, water_kg, temp_c, power_w_kg, slip_velocity_m_s, correlation,
    saturation, brine_density_kg_m3, viscosity_pa_s, rtol
        As for :func:`dissolve`.
    residence_s : float
        Residence (contact) time, s.

    Returns
    -------
    DissolutionResult
        Its ``summary`` gives, per solid, the mass dissolved in the residence time.
    """
    ore = props.positive(ore_kg, "ore_kg", "kg")
    if not hasattr(composition, "items") or not composition:
        raise InputError("composition", composition, "a non-empty mapping {solid: mass fraction of the ore}")
    fractions = {}
    for k, v in composition.items():
        w = props.as_number(v, f"composition[{k!r}]", "a mass fraction > 0 and <= 1")
        if not (0.0 < w <= 1.0):
            raise InputError(f"composition[{k!r}]", v, "a mass fraction > 0 and <= 1")
        fractions[k] = w
    total = sum(fractions.values())
    if total > 1.0 + FRACTION_SUM_TOL:
        raise InputError("composition", f"sum {total:.6g}", "mass fractions that sum to at most 1 (rest insoluble)")
    solids = {k: ore * w for k, w in fractions.items()}
    res = dissolve(solids, sizes, brine, brine_volume_m3=brine_volume_m3, water_kg=water_kg, temp_c=temp_c,
                   power_w_kg=power_w_kg, slip_velocity_m_s=slip_velocity_m_s, correlation=correlation,
                   duration_s=props.positive(residence_s, "residence_s", "s"), saturation=saturation,
                   brine_density_kg_m3=brine_density_kg_m3, viscosity_pa_s=viscosity_pa_s, rtol=rtol)
    return res
