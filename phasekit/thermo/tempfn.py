"""The one temperature function of the database.

Every temperature-dependent value P of the database (Pitzer parameters, ln K of
solids) is stored as five coefficients a0..a4 of

    P(T) = a0 + a1 (T - Tr) + a2 (T - Tr)^2 + a3 (1/T - 1/Tr) + a4 ln(T/Tr)

with T in kelvin and Tr = 298.15 K. a0 is the value at 25 °C. Derivative data at
25 °C map as a1 = dP/dT, a2 = (1/2) d²P/dT². A van 't Hoff equation with constant
ΔCp° maps as a0 = ln K(Tr), a3 = -ΔH°/R + ΔCp° Tr / R, a4 = ΔCp°/R (the
constant term of ΔCp°(Tr/T - 1)/R is a3's Tr(1/T - 1/Tr) part).
"""

from __future__ import annotations

import numpy as np

TR = 298.15
COEFFS = ("a0", "a1", "a2", "a3", "a4")


def basis(temp_k):
    """Basis values [1, T-Tr, (T-Tr)², 1/T-1/Tr, ln(T/Tr)], shape (..., 5)."""
    t = np.asarray(temp_k, dtype=float)
    d = t - TR
    return np.stack([np.ones_like(t), d, d * d, 1.0 / t - 1.0 / TR, np.log(t / TR)], axis=-1)


def basis_dt(temp_k):
    """Derivative of :func:`basis` with respect to T."""
    t = np.asarray(temp_k, dtype=float)
    return np.stack([np.zeros_like(t), np.ones_like(t), 2.0 * (t - TR), -1.0 / t**2, 1.0 / t], axis=-1)


def evaluate(coeffs, temp_k):
    """P(T) for coefficient array ``coeffs`` (..., 5) at scalar T."""
    return np.asarray(coeffs) @ basis(float(temp_k))
