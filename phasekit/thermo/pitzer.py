"""The Pitzer ion-interaction model, vectorized over many compositions.

Equations: Pitzer 1973 (J. Phys. Chem. 77, 268), Pitzer & Mayorga 1973
(J. Phys. Chem. 77, 2300), Pitzer & Kim 1974 (J. Am. Chem. Soc. 96, 5701),
with the unsymmetric mixing terms of Pitzer 1975 (J. Solution Chem. 4, 249),
in the notation of Pitzer 1991 ("Activity Coefficients in Electrolyte
Solutions", 2nd ed., ch. 3) and Harvie, Møller & Weare 1984 (Geochim.
Cosmochim. Acta 48, 723, eqs. 1–9).

Excess Gibbs energy per kg of water, divided by RT:

    g = f(I) + ΣcΣa m_c m_a (2 B_ca + Z C_ca)
        + Σc<c' m_c m_c' (2 Φ_cc' + Σa m_a ψ_cc'a)
        + Σa<a' m_a m_a' (2 Φ_aa' + Σc m_c ψ_aa'c)
    f(I) = -A_phi (4 I / b) ln(1 + b √I),  b = 1.2 (kg/mol)^(1/2)

ln γ_i = ∂g/∂m_i and ln a_w = -M_w Σm φ with Σm (φ - 1) = Σ m_i ln γ_i - g.
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from phasekit.chemistry.species import M_WATER
from phasekit.errors import InputError, RangeError, warn_validity
from phasekit.thermo import tempfn
from phasekit.thermo.etheta import jtable
from phasekit.thermo.kernel import PARALLEL_MIN_ROWS, chunks_for, pitzer_rows_parallel, pitzer_rows_serial
from phasekit.thermo.water import T_LIQUID_MIN_C, T_MAX_C, T_MIN_C, aphi
from phasekit.validate import MAX_MOLALITY


@dataclass
class ActivityResult:
    """Activities of a composition (scalars) or of many (arrays, one per row).

    Attributes
    ----------
    gamma, ln_gamma : dict
        Molal activity coefficient of every species of the model, and its log.
    osmotic : float or ndarray
        Osmotic coefficient φ.
    water_activity, ln_water_activity : float or ndarray
    ionic_strength : float or ndarray
        mol/kg water.
    excess_gibbs : float or ndarray
        G^ex / (RT) per kg of water.
    warnings : list of str
        Validity-range warnings that apply to this result.
    """

    gamma: dict
    ln_gamma: dict
    osmotic: object
    water_activity: object
    ln_water_activity: object
    ionic_strength: object
    excess_gibbs: object
    warnings: list = field(default_factory=list)

    def mean_gamma(self, salt: dict) -> object:
        """Mean activity coefficient of a salt given as {ion: stoichiometric number}."""
        nu = sum(salt.values())
        ln = sum(n * self.ln_gamma[s] for s, n in salt.items()) / nu
        return np.exp(ln)


class PitzerModel:
    """Pitzer activity model over the species of a :class:`~phasekit.thermo.database.Database`.

    Parameters
    ----------
    database : Database
        Species and parameter tables.
    """

    def __init__(self, database):
        self.db = database
        sp = database.species
        self.cations = [s for s in sp if database.charges[s] > 0]
        self.anions = [s for s in sp if database.charges[s] < 0]
        self.species = self.cations + self.anions
        self.index = {s: i for i, s in enumerate(self.species)}
        self.zc = np.array([database.charges[s] for s in self.cations], dtype=float)
        self.za = np.array([-database.charges[s] for s in self.anions], dtype=float)
        self.z = np.concatenate([self.zc, -self.za])
        self._build_coefficients()
        self._cache: dict = {}
        self._validity_cache: dict = {}

    # ------------------------------------------------------------------ set-up
    def _build_coefficients(self):
        nc, na = len(self.cations), len(self.anions)
        ci = {s: i for i, s in enumerate(self.cations)}
        ai = {s: i for i, s in enumerate(self.anions)}
        names = ("beta0", "beta1", "beta2", "cphi", "alpha1", "alpha2")
        co = {n: np.zeros((nc, na, 5)) for n in names}
        trange = np.zeros((nc, na, 2))
        trange[..., 0], trange[..., 1] = -np.inf, np.inf
        has = np.zeros((nc, na), dtype=bool)
        mmax = np.full((nc, na), np.inf)
        # default alphas
        for i in range(nc):
            for j in range(na):
                if self.zc[i] == 2 and self.za[j] == 2:
                    co["alpha1"][i, j, 0], co["alpha2"][i, j, 0] = 1.4, 12.0
                else:
                    co["alpha1"][i, j, 0], co["alpha2"][i, j, 0] = 2.0, 0.0
        for row in self.db.binary.itertuples():
            i, j = ci[row.cation], ai[row.anion]
            co[row.parameter][i, j] = [row.a0, row.a1, row.a2, row.a3, row.a4]
            if row.parameter not in ("alpha1", "alpha2"):
                has[i, j] = True
                trange[i, j] = [max(trange[i, j, 0], row.t_min_c) if np.isfinite(trange[i, j, 0]) else row.t_min_c,
                                min(trange[i, j, 1], row.t_max_c) if np.isfinite(trange[i, j, 1]) else row.t_max_c]
                mmax[i, j] = row.m_max
        self._co_binary = co
        self._binary_range = trange
        self._binary_has = has
        self._binary_mmax = mmax
        theta_c = np.zeros((nc, nc, 5))
        theta_a = np.zeros((na, na, 5))
        psi_c = np.zeros((nc, nc, na, 5))
        psi_a = np.zeros((na, na, nc, 5))
        #: (species indices, t_min_c, t_max_c, label) of every mixing row, for the validity warnings
        self._mixing_ranges = []
        for row in self.db.mixing.itertuples():
            a = [row.a0, row.a1, row.a2, row.a3, row.a4]
            s1, s2, s3 = row.species1, row.species2, row.species3
            members = tuple(self.index[x] for x in (s1, s2, s3) if x)
            label = f"{row.kind}({','.join(x for x in (s1, s2, s3) if x)})"
            self._mixing_ranges.append((members, float(row.t_min_c), float(row.t_max_c), label))
            if row.kind == "theta":
                if s1 in ci:
                    theta_c[ci[s1], ci[s2]] = theta_c[ci[s2], ci[s1]] = a
                else:
                    theta_a[ai[s1], ai[s2]] = theta_a[ai[s2], ai[s1]] = a
            else:
                if s1 in ci:
                    psi_c[ci[s1], ci[s2], ai[s3]] = psi_c[ci[s2], ci[s1], ai[s3]] = a
                else:
                    psi_a[ai[s1], ai[s2], ci[s3]] = psi_a[ai[s2], ai[s1], ci[s3]] = a
        self._co_theta_c, self._co_theta_a = theta_c, theta_a
        self._co_psi_c, self._co_psi_a = psi_c, psi_a
        zc, za = self.zc, self.za
        self._zprod = np.sqrt(zc[:, None] * za[None, :])

    def parameters(self, temp_c: float) -> dict:
        """All model parameters evaluated at one temperature (cached per temperature).

        Returns arrays beta0, beta1, beta2, alpha1, alpha2, cphi, C (n_cation, n_anion);
        theta_c, theta_a; psi_c[i, j, a], psi_a[a, b, c]; and aphi.
        """
        key = round(float(temp_c), 10)
        hit = self._cache.get(key)
        if hit is not None:
            return hit
        bas = tempfn.basis(float(temp_c) + 273.15)
        p = {n: np.ascontiguousarray(c @ bas) for n, c in self._co_binary.items()}
        p["C"] = p["cphi"] / (2.0 * self._zprod)
        ua = np.unique(np.concatenate([p["alpha1"].ravel(), p["alpha2"].ravel()]))
        ua = np.ascontiguousarray(ua[ua > 0])
        p["ualpha"] = ua
        p["ia1"] = np.searchsorted(ua, p["alpha1"]).astype(np.int64)
        p["ia2"] = np.where(p["alpha2"] > 0, np.searchsorted(ua, p["alpha2"]), -1).astype(np.int64)
        p["theta_c"] = np.ascontiguousarray(self._co_theta_c @ bas)
        p["theta_a"] = np.ascontiguousarray(self._co_theta_a @ bas)
        p["psi_c"] = np.ascontiguousarray(self._co_psi_c @ bas)
        p["psi_a"] = np.ascontiguousarray(self._co_psi_a @ bas)
        p["aphi"] = float(aphi(float(temp_c)))
        if len(self._cache) > 4096:
            self._cache.clear()
        self._cache[key] = p
        return p

    # -------------------------------------------------------------- inputs
    def _as_array(self, molalities):
        """Return (array (N, ns), scalar_input, row_index)."""
        if isinstance(molalities, pd.DataFrame):
            if molalities.shape[0] == 0 or molalities.shape[1] == 0:
                raise InputError("molalities", "empty DataFrame", "at least one row and one species column")
            cols = {}
            for c in molalities.columns:
                name = self.db.parse_species(c)
                if name in cols:
                    raise InputError("molalities", c, f"one column per species ({name} given twice)")
                cols[name] = c
            arr = np.zeros((molalities.shape[0], len(self.species)))
            for name, c in cols.items():
                if pd.api.types.is_bool_dtype(molalities[c]) or any(isinstance(v, bool | np.bool_)
                                                                     for v in molalities[c].tolist()):
                    raise InputError(f"molalities[{c!r}]", "True/False values", "numbers (mol/kg water)")
                col = pd.to_numeric(molalities[c], errors="coerce").to_numpy(dtype=float)
                bad = np.isnan(col) & molalities[c].notna().to_numpy()
                if bad.any():
                    r = int(np.flatnonzero(bad)[0])
                    raise InputError(f"molalities[{c!r}] row {molalities.index[r]!r}", molalities[c].iloc[r], "a number")
                arr[:, self.index[name]] = col
            return arr, False, molalities.index
        if isinstance(molalities, dict) or hasattr(molalities, "items"):
            items = list(molalities.items())
            if not items:
                raise InputError("molalities", {}, "a mapping of species to mol/kg water, e.g. {'Na': 1, 'Cl': 1}")
            arr = np.zeros((1, len(self.species)))
            for k, v in items:
                name = self.db.parse_species(k)
                if isinstance(v, bool | np.bool_):
                    raise InputError(f"molalities[{k!r}]", v, "a number (mol/kg water), not True/False")
                try:
                    val = float(v)
                except (TypeError, ValueError):
                    raise InputError(f"molalities[{k!r}]", v, "a number (mol/kg water)") from None
                arr[0, self.index[name]] += val
            return arr, True, None
        raise InputError("molalities", type(molalities).__name__, "a mapping or a pandas DataFrame")

    def _check(self, m, temp_c, index, check_charge=True, t_min_c=T_MIN_C):
        temp_c = self._check_temp(temp_c)
        if not (np.isfinite(m).all() and (m >= 0).all() and (m <= MAX_MOLALITY).all()):
            bad = ~np.isfinite(m) | (m < 0) | (m > MAX_MOLALITY)
            r, c = np.argwhere(bad)[0]
            where = f" row {index[r]!r}" if index is not None else ""
            raise InputError(f"molalities[{self.species[c]!r}]{where}", float(m[r, c]),
                             f"a finite molality from 0 to {MAX_MOLALITY:g} mol/kg water")
        if check_charge:
            imb = m @ self.z
            tot = m @ np.abs(self.z)
            bad = np.abs(imb) > 1e-6 * tot + 1e-12
            if bad.any():
                r = int(np.flatnonzero(bad)[0])
                where = f" row {index[r]!r}" if index is not None else ""
                raise InputError(
                    f"molalities{where}",
                    f"charge imbalance {imb[r]:+.6g} eq/kg",
                    "an electrically neutral composition (balance the analysis explicitly, "
                    "e.g. Brine.balance(on='Cl'))",
                )
        if np.ndim(temp_c) == 0:
            t = float(temp_c)
            ok = t_min_c <= t <= T_MAX_C
        else:
            t = np.asarray(temp_c, dtype=float)
            ok = bool(np.all((t >= t_min_c) & (t <= T_MAX_C)))
        if not ok:
            tt = np.atleast_1d(t)
            bad = tt[~((tt >= t_min_c) & (tt <= T_MAX_C))][0]
            raise RangeError("temp_c", float(bad), f"a temperature from {t_min_c:g} to {T_MAX_C:g} °C")

    @staticmethod
    def _check_temp(temp_c):
        """A temperature (°C) or an array of them: numbers, not booleans, None or text."""
        if np.ndim(temp_c) == 0:
            if isinstance(temp_c, bool | np.bool_) or not isinstance(temp_c, numbers.Real):
                raise InputError("temp_c", temp_c, "a temperature in °C (a number)")
            if not math.isfinite(float(temp_c)):
                raise RangeError("temp_c", temp_c, f"a temperature from {T_MIN_C:g} to {T_MAX_C:g} °C")
            return temp_c
        arr = np.asarray(temp_c)
        if arr.dtype.kind not in "iuf":
            raise InputError("temp_c", f"array of {arr.dtype}", "temperatures in °C (numbers)")
        if not np.isfinite(arr).all():
            raise RangeError("temp_c", "an array with a non-finite value", f"temperatures from {T_MIN_C:g} to "
                             f"{T_MAX_C:g} °C")
        return temp_c

    def _validity(self, m, temp_c, ionic_strength) -> list[str]:
        """Validity-range warnings for these compositions (cached by the species present)."""
        if m.shape[0] == 1:
            present = tuple(i for i, v in enumerate(m[0].tolist()) if v > 0)
            imax = float(ionic_strength[0])
        else:
            present = tuple(np.flatnonzero((m > 0).any(axis=0)).tolist())
            imax = float(np.max(ionic_strength))
        if np.ndim(temp_c) == 0:
            tmin = tmax = float(temp_c)
        else:
            tmin, tmax = float(np.min(temp_c)), float(np.max(temp_c))
        key = (present, tmin, tmax)
        hit = self._validity_cache.get(key)
        if hit is not None:
            return list(hit) + self._strength_warning(imax)
        out = []
        nc = len(self.cations)
        pc = np.zeros(nc, dtype=bool)
        pa = np.zeros(len(self.anions), dtype=bool)
        for s in present:
            if s < nc:
                pc[s] = True
            else:
                pa[s - nc] = True
        pair = pc[:, None] & pa[None, :]
        for i, j in zip(*np.nonzero(pair & ~self._binary_has)):
            out.append(f"no binary parameters for {self.cations[i]}-{self.anions[j]}: taken as zero")
        for i, j in zip(*np.nonzero(pair & self._binary_has)):
            lo, hi = self._binary_range[i, j]
            if tmin < lo or tmax > hi:
                out.append(
                    f"temperature {tmin:g}–{tmax:g} °C outside the validity range {lo:g}–{hi:g} °C "
                    f"of the {self.cations[i]}-{self.anions[j]} parameters"
                )
        present_set = set(present)
        for members, lo, hi, label in self._mixing_ranges:
            if (tmin < lo or tmax > hi) and present_set.issuperset(members):
                out.append(f"temperature {tmin:g}–{tmax:g} °C outside the validity range {lo:g}–{hi:g} °C "
                           f"of the mixing parameter {label}")
        if len(self._validity_cache) > 4096:
            self._validity_cache.clear()
        self._validity_cache[key] = tuple(out)
        return out + self._strength_warning(imax)

    def _strength_warning(self, imax: float) -> list[str]:
        """The warning of an ionic strength above the validity limit (never cached: it names the value)."""
        if imax > self.db.ionic_strength_max:
            return [f"ionic strength {imax:.3g} mol/kg above the model's validity limit "
                    f"{self.db.ionic_strength_max:g} mol/kg"]
        return []

    # ----------------------------------------------------------------- core
    def compute(self, m, temp_c):
        """Core evaluation on an array ``m`` (N, ns) at scalar ``temp_c``.

        Returns (ln_gamma (N, ns), osmotic (N,), ln_aw (N,), I (N,), g (N,)).
        No input checks: use :meth:`activity` for user input.
        """
        p = self.parameters(temp_c)
        m = np.ascontiguousarray(m, dtype=float)
        n = m.shape[0]
        ln_gamma = np.empty_like(m)
        osm, ln_aw, ion, g = np.empty(n), np.empty(n), np.empty(n), np.empty(n)
        x0, h, coef, kmax = jtable()
        args = (m, len(self.cations), self.zc, self.za, p["beta0"], p["beta1"], p["beta2"], p["ualpha"],
                p["ia1"], p["ia2"], p["C"], p["theta_c"], p["theta_a"], p["psi_c"], p["psi_a"], p["aphi"],
                x0, h, coef, kmax, ln_gamma, osm, ln_aw, ion, g, M_WATER)
        if n >= PARALLEL_MIN_ROWS:
            pitzer_rows_parallel(*args, np.empty(chunks_for(n), dtype=np.int64))
        else:
            pitzer_rows_serial(*args)
        return ln_gamma, osm, ln_aw, ion, g

    # ----------------------------------------------------------- public API
    def activity(self, molalities, temp_c: float, check_charge: bool = True,
                 supercooled: bool = False) -> ActivityResult:
        """Activity coefficients, osmotic coefficient and water activity.

        Parameters
        ----------
        molalities : mapping or pandas.DataFrame
            mol per kg water by species (``Na``, ``Mg2+``, ``SO4--`` ...). A mapping
            gives scalar results; a DataFrame (rows = compositions, columns = species)
            gives arrays, one value per row.
        temp_c : float or array
            Temperature in °C (an array gives one temperature per row).
        check_charge : bool
            Refuse a composition that is not electrically neutral (default).
        supercooled : bool
            Also accept temperatures below 0 °C, down to ``T_LIQUID_MIN_C`` (-30 °C): the liquid
            is then supercooled water (for freezing points). The Pitzer parameters are valid from
            0 °C, so such results carry validity warnings.

        Returns
        -------
        ActivityResult
        """
        m, scalar, index = self._as_array(molalities)
        self._check(m, temp_c, index, check_charge, T_LIQUID_MIN_C if supercooled else T_MIN_C)
        t = np.asarray(temp_c, dtype=float)
        if t.ndim == 0:
            ln_g, osm, ln_aw, ion, g = self.compute(m, float(t))
        else:
            if t.shape != (m.shape[0],):
                raise InputError("temp_c", f"array of shape {t.shape}", f"a scalar or one value per row ({m.shape[0]})")
            ln_g = np.empty_like(m)
            osm, ln_aw, ion, g = (np.empty(m.shape[0]) for _ in range(4))
            for tv in np.unique(t):
                sel = t == tv
                ln_g[sel], osm[sel], ln_aw[sel], ion[sel], g[sel] = self.compute(m[sel], float(tv))
        warns = self._validity(m, temp_c, ion)
        for w in warns:
            warn_validity(w)
        if scalar:
            row = ln_g[0].tolist()
            lg = dict(zip(self.species, row))
            return ActivityResult(
                gamma=dict(zip(self.species, np.exp(ln_g[0]).tolist())),
                ln_gamma=lg,
                osmotic=float(osm[0]),
                water_activity=math.exp(ln_aw[0]),
                ln_water_activity=float(ln_aw[0]),
                ionic_strength=float(ion[0]),
                excess_gibbs=float(g[0]),
                warnings=warns,
            )
        lg = {s: ln_g[:, i] for i, s in enumerate(self.species)}
        return ActivityResult(
            gamma={s: np.exp(v) for s, v in lg.items()},
            ln_gamma=lg,
            osmotic=osm,
            water_activity=np.exp(ln_aw),
            ln_water_activity=ln_aw,
            ionic_strength=ion,
            excess_gibbs=g,
            warnings=warns,
        )
