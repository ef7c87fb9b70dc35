"""Particle size distributions, discretized into size classes by mass.

A :class:`SizeDistribution` holds class diameters (m) and the mass fraction of the solid in
each class. Build it from

- :func:`sieve` — a sieve analysis: class edges (sieve openings, µm) and the mass fraction
  retained in each class. A class is represented by the geometric mean of its two openings
  (common practice, no source); a pan class with lower edge 0 by half its upper opening
  (common practice, no source).
- :func:`lognormal` — a mass-based log-normal distribution with mass-median diameter d50 and
  geometric standard deviation σg (Allen 1997, Particle Size Measurement, 5th ed., ch. 4;
  from memory), truncated at ±3.5 ln σg and renormalized.
- :func:`rosin_rammler` — cumulative mass retained R(d) = exp(-(d/d')^n) (Rosin & Rammler
  1933, J. Inst. Fuel 7, 29) with characteristic size d' (63.2 % passing) and spread n,
  truncated at R = 1e-4 and 1 - 1e-4 and renormalized.
- :func:`single` — one size.

Sizes are given in **micrometres** (``_um`` arguments) and stored in metres.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.special import erf

from phasekit.errors import InputError
from phasekit.kinetics.properties import as_number, positive

#: largest grain size accepted, µm: 10 cm, beyond the suspended grains the film model describes (a
#: larger value is a slip of units: µm typed as mm or m)
MAX_GRAIN_UM = 100_000.0


def _grain(value, field: str) -> float:
    d = positive(value, field, "µm")
    if d > MAX_GRAIN_UM:
        raise InputError(field, value, f"a grain size in µm of at most {MAX_GRAIN_UM:g} µm (10 cm); is it in mm?")
    return d

#: fractions must sum to one within this
FRACTION_SUM_TOL = 1e-3


@dataclass(frozen=True, eq=False)
class SizeDistribution:
    """Size classes of a solid.

    Attributes
    ----------
    diameters_m : ndarray
        Representative diameter of each class, m.
    mass_fractions : ndarray
        Mass fraction of the solid in each class (sums to 1).
    description : str
    """

    diameters_m: np.ndarray
    mass_fractions: np.ndarray
    description: str = ""

    def __post_init__(self):
        d = np.asarray(self.diameters_m, dtype=float).ravel()
        w = np.asarray(self.mass_fractions, dtype=float).ravel()
        if d.size == 0 or d.shape != w.shape:
            raise InputError("mass_fractions", list(w), f"one fraction per size class ({d.size} classes)")
        for i, x in enumerate(d):
            if not (math.isfinite(x) and x > 0):
                raise InputError(f"diameters_m[{i}]", x, "a finite diameter > 0 (m)")
        _check_fractions(w)
        object.__setattr__(self, "diameters_m", d)
        object.__setattr__(self, "mass_fractions", w / w.sum())

    def table(self):
        """The classes as a DataFrame (diameter_um, mass_fraction)."""
        import pandas as pd

        return pd.DataFrame({"diameter_um": self.diameters_m * 1e6, "mass_fraction": self.mass_fractions})

    @property
    def mean_diameter_m(self) -> float:
        """Sauter mean diameter d32 = 1 / sum(w_i / d_i), m."""
        return float(1.0 / np.sum(self.mass_fractions / self.diameters_m))


def _check_fractions(w: np.ndarray, field: str = "mass_fractions") -> None:
    for i, x in enumerate(w):
        if not (math.isfinite(x) and x >= 0):
            raise InputError(f"{field}[{i}]", x, "a finite mass fraction >= 0")
    total = float(w.sum())
    if abs(total - 1.0) > FRACTION_SUM_TOL:
        hint = " (percentages? divide by 100)" if abs(total - 100.0) < 0.1 else ""
        raise InputError(field, f"sum {total:.6g}", f"mass fractions that sum to 1 within {FRACTION_SUM_TOL:g}{hint}")


def _numbers(values, field: str) -> np.ndarray:
    try:
        items = list(values)
    except TypeError:
        raise InputError(field, values, "a sequence of numbers") from None
    return np.array([as_number(v, f"{field}[{i}]", "a finite number") for i, v in enumerate(items)], dtype=float)


def sieve(edges_um, mass_fractions) -> SizeDistribution:
    """Size classes from a sieve analysis.

    Parameters
    ----------
    edges_um : sequence of float
        Sieve openings in µm, increasing, one more than there are classes; the first may be 0
        for the pan.
    mass_fractions : sequence of float
        Mass fraction retained in each class (between consecutive openings); sum to 1.

    Examples
    --------
    >>> sieve([0, 100, 200, 400, 800], [0.05, 0.25, 0.45, 0.25])  # doctest: +SKIP
    """
    e = _numbers(edges_um, "edges_um")
    w = _numbers(mass_fractions, "mass_fractions")
    if e.size < 2:
        raise InputError("edges_um", list(e), "at least two sieve openings (µm)")
    if e.size != w.size + 1:
        raise InputError("mass_fractions", list(w), f"{e.size - 1} fractions for {e.size} sieve openings")
    for i, x in enumerate(e):
        if x < 0 or (x == 0 and i > 0):
            raise InputError(f"edges_um[{i}]", x, "a sieve opening >= 0 µm (only the first, the pan, may be 0)")
    if np.any(np.diff(e) <= 0):
        raise InputError("edges_um", list(e), "increasing sieve openings (µm)")
    _check_fractions(w)
    lo, hi = e[:-1], e[1:]
    d = np.where(lo > 0, np.sqrt(np.where(lo > 0, lo, 1.0) * hi), 0.5 * hi)
    keep = w > 0
    return SizeDistribution(d[keep] * 1e-6, w[keep], f"sieve analysis, {keep.sum()} classes")


def lognormal(d50_um, gsd, n_classes: int = 24) -> SizeDistribution:
    """Mass-based log-normal distribution.

    Parameters
    ----------
    d50_um : float
        Mass-median diameter, µm.
    gsd : float
        Geometric standard deviation σg (> 1; dimensionless).
    n_classes : int
        Number of classes, equally spaced in ln d over ±3.5 ln σg.
    """
    d50 = _grain(d50_um, "d50_um")
    g = as_number(gsd, "gsd", "a geometric standard deviation > 1")
    if g <= 1.0:
        raise InputError("gsd", gsd, "a geometric standard deviation > 1 (use single() for one size)")
    n = _count(n_classes)
    s = math.log(g)
    z = np.linspace(-3.5, 3.5, n + 1)
    cdf = 0.5 * (1.0 + erf(z / math.sqrt(2.0)))
    w = np.diff(cdf)
    d = d50 * np.exp(s * 0.5 * (z[:-1] + z[1:]))
    return SizeDistribution(d * 1e-6, w / w.sum(), f"log-normal d50 = {d50:g} µm, σg = {g:g}")


def rosin_rammler(size_um, spread, n_classes: int = 24) -> SizeDistribution:
    """Rosin–Rammler distribution, cumulative mass retained R(d) = exp(-(d/d')^n).

    Parameters
    ----------
    size_um : float
        Characteristic size d' (63.2 % of the mass passes), µm.
    spread : float
        Uniformity (spread) exponent n > 0.
    n_classes : int
        Number of classes, equally spaced in ln d between R = 1 - 1e-4 and R = 1e-4.
    """
    dp = _grain(size_um, "size_um")
    n = positive(spread, "spread", "dimensionless exponent")
    k = _count(n_classes)
    d_lo = dp * (-math.log(1.0 - 1e-4)) ** (1.0 / n)
    d_hi = dp * (-math.log(1e-4)) ** (1.0 / n)
    edges = np.geomspace(d_lo, d_hi, k + 1)
    retained = np.exp(-((edges / dp) ** n))
    w = retained[:-1] - retained[1:]
    d = np.sqrt(edges[:-1] * edges[1:])
    return SizeDistribution(d * 1e-6, w / w.sum(), f"Rosin–Rammler d' = {dp:g} µm, n = {n:g}")


def single(diameter_um) -> SizeDistribution:
    """All particles of one diameter (µm)."""
    d = _grain(diameter_um, "diameter_um")
    return SizeDistribution(np.array([d * 1e-6]), np.array([1.0]), f"single size {d:g} µm")


def _count(n_classes) -> int:
    if isinstance(n_classes, bool) or not isinstance(n_classes, (int, np.integer)) or not (1 <= n_classes <= 200):
        raise InputError("n_classes", n_classes, "an integer from 1 to 200")
    return int(n_classes)
