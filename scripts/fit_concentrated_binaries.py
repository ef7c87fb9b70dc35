"""25 °C Pitzer parameters of LiCl and NaNO3 valid up to their saturated solutions.

    python scripts/fit_concentrated_binaries.py            # rewrite the 25 °C values (a0) of their rows
    python scripts/fit_concentrated_binaries.py --dry-run  # fit and report only

Run scripts/calibrate_solids.py afterwards (it refits the temperature terms and ln K with these values).

LiCl
----

Why: Pitzer & Mayorga 1973 (PM73) fitted β0, β1, C^φ of LiCl to 6 mol/kg. Extrapolated to the saturated
solution (19.9 mol/kg at 25 °C) they give a water activity of 0.025 where Greenspan 1977 (J. Res. NBS 81A,
89, "Humidity fixed points of binary saturated aqueous solutions"; from memory) gives 0.113, i.e. an
osmotic coefficient of 5.1 instead of 3.04. Every lithium chloride mixture near LiCl·H2O saturation
(lithium carnallite, brines of the last ponds) is then wrong. The three-parameter form cannot follow
both ends (the best compromise misses PM73's γ± by 5-10 %); the two-α form of B (Pitzer 1991,
Activity Coefficients in Electrolyte Solutions, ch. 3: B = β0 + β1 g(α1 √I) + β2 g(α2 √I)) with a small
α2 can. Fitted here, at 25 °C:

* pseudo-data: φ and ln γ± of PM73's own parameters at 0.1–6 mol/kg (weight 5; the range of PM73's fit);
* φ = 3.04 of the saturated solution, 19.9 mol/kg, from a_w = 0.113 (Greenspan 1977) (weight 3);
* α1 = 2 and α2 = 0.3 fixed (α2 = 0.1–0.3 fit equally well; 0.3 gives the smallest coefficients).

The result stays within 0.01 of PM73's φ to 6 mol/kg and within 1.1 % of the Robinson & Stokes γ±
(the check in tests/validation/test_single_salts.py). The temperature coefficients (a1) of the rows
are not touched: β1, C^φ keep SP77's, β0's is refitted by scripts/calibrate_solids.py to the LiCl·H2O
solubilities, β2 and α2 have none.

NaNO3
-----
PM73 fitted NaNO3 to 6 mol/kg; the saturated solution at 25 °C is 10.73 mol/kg (CRC 47.7 %). There PM73
give φ = 0.733 where Greenspan's a_w = 0.7425 of saturated NaNO3 gives 0.770, and the solubilities at
10-30 °C (checks) came out 2.5-3.3 % high. The plain three-parameter form follows both (φ within 0.004
of PM73 to 6 mol/kg, 0.766 at saturation): β0, β1, C^φ fitted the same way (α2 unused).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.optimize import least_squares

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "scripts"))


from phasekit.chemistry.species import M_WATER  # noqa: E402
from phasekit.thermo.water import aphi as a_phi  # noqa: E402

B, ALPHA1 = 1.2, 2.0
#: salt: (cation, anion, PM73 beta0, beta1, beta2, C^phi at 25 degC, alpha2 (0: unused), saturated molality at
#: 25 degC (CRC Handbook, from memory), a_w of the saturated solution (Greenspan 1977, from memory))
JOBS = {
    "LiCl": ("Li", "Cl", (0.1494, 0.3074, 0.0, 0.00359), 0.3, 19.9, 0.113),
    "NaNO3": ("Na", "NO3", (0.0068, 0.1783, 0.0, -0.00072), 0.0, 10.73, 0.7425),
}


def _g(x):
    return 2.0 * (1.0 - (1.0 + x) * np.exp(-x)) / x**2


def _gp(x):
    return -2.0 * (1.0 - (1.0 + x + 0.5 * x * x) * np.exp(-x)) / x**2


def phi(m, p, alpha2, aphi):
    b0, b1, b2, c = p
    s = np.sqrt(m)
    beta2 = b2 * np.exp(-alpha2 * s) if alpha2 > 0 else 0.0
    return 1.0 - aphi * s / (1.0 + B * s) + m * (b0 + b1 * np.exp(-ALPHA1 * s) + beta2) + m * m * c


def ln_gamma(m, p, alpha2, aphi):
    b0, b1, b2, c = p
    s = np.sqrt(m)
    f = -aphi * (s / (1.0 + B * s) + 2.0 / B * np.log(1.0 + B * s))
    bb = b0 + b1 * _g(ALPHA1 * s) + (b2 * _g(alpha2 * s) if alpha2 > 0 else 0.0)
    bp = (b1 * _gp(ALPHA1 * s) + (b2 * _gp(alpha2 * s) if alpha2 > 0 else 0.0)) / m
    return f + m * m * bp + 2.0 * m * bb + 1.5 * m * m * c


def fit(aphi: float, job):
    """(beta0, beta1, beta2, C^phi), max |phi - PM73| to 6 mol/kg, phi at saturation and its target."""
    _, _, pm73, alpha2, m_sat, aw_sat = job
    ms = np.array([0.1, 0.25, 0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0, 6.0])
    t_phi, t_lng = phi(ms, pm73, 0.0, aphi), ln_gamma(ms, pm73, 0.0, aphi)
    phi_sat = -np.log(aw_sat) / (2.0 * m_sat * M_WATER)

    def full(p):
        return (p[0], p[1], p[2], p[3]) if alpha2 > 0 else (p[0], p[1], 0.0, p[2])

    def resid(p):
        q = full(p)
        return np.r_[5 * (phi(ms, q, alpha2, aphi) - t_phi), 5 * (ln_gamma(ms, q, alpha2, aphi) - t_lng),
                     3 * (phi(m_sat, q, alpha2, aphi) - phi_sat)]

    start = [pm73[0], pm73[1], 0.0, pm73[3]] if alpha2 > 0 else [pm73[0], pm73[1], pm73[3]]
    res = least_squares(resid, start)
    q = full(res.x)
    dev = float(np.abs(phi(ms, q, alpha2, aphi) - t_phi).max())
    return q, dev, float(phi(m_sat, q, alpha2, aphi)), phi_sat


def main(argv) -> int:
    aphi = float(a_phi(25.0))
    for salt, job in JOBS.items():
        cat, an, _, alpha2, m_sat, aw_sat = job
        p, dev, ps, target = fit(aphi, job)
        print(f"{salt}: beta0 {p[0]:.6g}, beta1 {p[1]:.6g}, beta2 {p[2]:.6g}, C^phi {p[3]:.6g}, alpha2 {alpha2}; "
              f"max |phi - PM73| to 6 mol/kg {dev:.4f}; phi at {m_sat} mol/kg {ps:.4f} (target {target:.4f})")
        if "--dry-run" in argv:
            continue
        src = (f"a0 fitted in this project (scripts/fit_concentrated_binaries.py) to PM73's phi and ln gamma at "
               f"0.1-6 mol/kg and a_w = {aw_sat} of saturated {salt} at 25 degC (Greenspan 1977, J. Res. NBS 81A, "
               "89, from memory)" + (f", two-alpha form of B (alpha2 = {alpha2})" if alpha2 > 0 else ""))
        names = ("beta0", "beta1", "beta2", "cphi") if alpha2 > 0 else ("beta0", "beta1", "cphi")
        values = p if alpha2 > 0 else (p[0], p[1], p[3])
        updates = {(cat, an, name): {"a0": v} for name, v in zip(names, values)}
        if alpha2 > 0:
            updates[(cat, an, "alpha2")] = {"a0": alpha2}
        n = rewrite_rows(cat, an, updates, src)
        print(f"  rewrote {n} {cat}-{an} rows of data/pitzer_binary.csv")
    return 0


def rewrite_rows(cation: str, anion: str, updates: dict, src: str) -> int:
    """Set a0 of the cation-anion rows of data/pitzer_binary.csv (calibrate_solids.rewrite_csv), with ``src``
    as the a0 part of their source and the rest of the source (the temperature terms) kept."""
    from calibrate_solids import rewrite_csv

    path = ROOT / "data" / "pitzer_binary.csv"
    rows = pd.read_csv(path, comment="#", dtype=str).set_index(["cation", "anion", "parameter"])
    out = {}
    for key, upd in updates.items():
        if key not in rows.index:
            raise SystemExit(f"data/pitzer_binary.csv has no {'-'.join(key)} row: add it (a1..a4 = 0) first")
        old = rows.loc[key, "source"]
        rest = old.split(";", 1)[1].strip() if ";" in old else ""
        out[key] = {"a0": upd["a0"], "source": src + ("; " + rest if rest else "")}
    return rewrite_csv(path, ("cation", "anion", "parameter"), out)


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
