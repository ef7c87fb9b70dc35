"""Li–Cl Pitzer parameters valid up to the saturated solution (about 20 mol/kg at 25 °C).

    python scripts/fit_licl_concentrated.py            # rewrite the 25 °C values (a0) of the Li-Cl rows
    python scripts/fit_licl_concentrated.py --dry-run  # fit and report only

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
solubilities (run it after this script), β2 and α2 have none.
"""

from __future__ import annotations

import csv
import io
import sys
from pathlib import Path

import numpy as np
from scipy.optimize import least_squares

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


from phasekit.chemistry.species import M_WATER  # noqa: E402
from phasekit.thermo.water import aphi as a_phi  # noqa: E402

PM73 = (0.1494, 0.3074, 0.0, 0.00359)  # beta0, beta1, beta2, C^phi of LiCl at 25 degC
B, ALPHA1, ALPHA2 = 1.2, 2.0, 0.3
M_SAT, AW_SAT = 19.9, 0.113  # saturated LiCl at 25 degC: molality (CRC 45.8 %), a_w (Greenspan 1977)


def _g(x):
    return 2.0 * (1.0 - (1.0 + x) * np.exp(-x)) / x**2


def _gp(x):
    return -2.0 * (1.0 - (1.0 + x + 0.5 * x * x) * np.exp(-x)) / x**2


def phi(m, p, alpha2, aphi):
    b0, b1, b2, c = p
    s = np.sqrt(m)
    return 1.0 - aphi * s / (1.0 + B * s) + m * (b0 + b1 * np.exp(-ALPHA1 * s) + b2 * np.exp(-alpha2 * s)) + m * m * c


def ln_gamma(m, p, alpha2, aphi):
    b0, b1, b2, c = p
    s = np.sqrt(m)
    f = -aphi * (s / (1.0 + B * s) + 2.0 / B * np.log(1.0 + B * s))
    bb = b0 + b1 * _g(ALPHA1 * s) + (b2 * _g(alpha2 * s) if alpha2 > 0 else 0.0)
    bp = (b1 * _gp(ALPHA1 * s) + (b2 * _gp(alpha2 * s) if alpha2 > 0 else 0.0)) / m
    return f + m * m * bp + 2.0 * m * bb + 1.5 * m * m * c


def fit(aphi: float):
    ms = np.array([0.1, 0.25, 0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0, 6.0])
    t_phi, t_lng = phi(ms, PM73, 1.0, aphi), ln_gamma(ms, PM73, 0.0, aphi)
    phi_sat = -np.log(AW_SAT) / (2.0 * M_SAT * M_WATER)

    def resid(p):
        return np.r_[5 * (phi(ms, p, ALPHA2, aphi) - t_phi), 5 * (ln_gamma(ms, p, ALPHA2, aphi) - t_lng),
                     3 * (phi(M_SAT, p, ALPHA2, aphi) - phi_sat)]

    res = least_squares(resid, [0.15, 0.3, 0.0, 0.0])
    dev = float(np.abs(phi(ms, res.x, ALPHA2, aphi) - t_phi).max())
    return res.x, dev, float(phi(M_SAT, res.x, ALPHA2, aphi)), phi_sat


def main(argv) -> int:
    aphi = float(a_phi(25.0))
    p, dev, ps, target = fit(aphi)
    print(f"A_phi(25 degC) = {aphi:.5f}; beta0 {p[0]:.6g}, beta1 {p[1]:.6g}, beta2 {p[2]:.6g}, C^phi {p[3]:.6g}, "
          f"alpha2 {ALPHA2}; max |phi - PM73| to 6 mol/kg {dev:.4f}; phi at {M_SAT} mol/kg {ps:.4f} (target {target:.4f})")
    if "--dry-run" in argv:
        return 0
    src = ("a0 fitted in this project (scripts/fit_licl_concentrated.py) to PM73's phi and ln gamma at 0.1-6 mol/kg "
           "and a_w = 0.113 of saturated LiCl at 25 degC (Greenspan 1977, J. Res. NBS 81A, 89; from memory), "
           "two-alpha form of B (alpha2 = 0.3)")
    updates = {}
    for name, value in zip(("beta0", "beta1", "beta2", "cphi"), p):
        updates[("Li", "Cl", name)] = {"a0": value, "_source_a0": src}
    updates[("Li", "Cl", "alpha2")] = {"a0": ALPHA2, "_source_a0": src}
    n = rewrite_licl(updates, src)
    print(f"rewrote {n} Li-Cl rows of data/pitzer_binary.csv")
    return 0


def rewrite_licl(updates: dict, src: str) -> int:
    """Set a0 of the Li-Cl rows (adding the beta2 and alpha2 rows when missing), keeping a1..a4."""
    path = ROOT / "data" / "pitzer_binary.csv"
    lines = path.read_text().splitlines()
    header_i = next(i for i, ln in enumerate(lines) if ln.startswith("cation,"))
    cols = lines[header_i].split(",")
    done, out = set(), []
    for ln in lines:
        if ln.startswith("Li,Cl,"):
            row = next(csv.reader(io.StringIO(ln)))
            key = tuple(row[:3])
            if key in updates:
                row[cols.index("a0")] = f"{updates[key]['a0']:.9g}"
                old = row[cols.index("source")]
                rest = old.split(";", 1)[1].strip() if ";" in old else ""
                row[cols.index("source")] = src + ("; " + rest if rest else "")
                done.add(key)
                buf = io.StringIO()
                csv.writer(buf, lineterminator="").writerow(row)
                ln = buf.getvalue()
        out.append(ln)
    last = max(i for i, ln in enumerate(out) if ln.startswith("Li,Cl,"))
    template = next(csv.reader(io.StringIO(out[last])))
    for key, upd in updates.items():
        if key in done:
            continue
        row = list(template)
        row[2] = key[2]
        row[cols.index("a0")] = f"{upd['a0']:.9g}"
        for c in ("a1", "a2", "a3", "a4"):
            row[cols.index(c)] = "0"
        row[cols.index("source")] = src + "; no temperature dependence"
        buf = io.StringIO()
        csv.writer(buf, lineterminator="").writerow(row)
        last += 1
        out.insert(last, buf.getvalue())
        done.add(key)
    path.write_text("\n".join(out) + "\n")
    return len(done)


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
