"""Systems of a phase diagram: unknowns, composition map, domain and candidate solids.

A diagram is traced in a vector of unknowns ``z`` of length ``n``. Its first ``d``
components are the diagram coordinates (the projection); then comes ``s``, the log of a
concentration scale; then the log-molalities of "hidden" ions fixed by solids that are
always present (halite in the seawater projection). The phase rule at fixed T and P then
reads: on a face of the diagram with ``k`` free coordinates a saturation curve carries
``k`` solids (plus the imposed ones), an invariant point ``k + 1``.

- :class:`TernarySystem` — salt A + salt B + water with one common ion; ``z = (x, s)``,
  ``x`` = mole fraction of salt B in the dissolved salts, ``s = ln(m_A + m_B)``.
- :class:`ReciprocalSystem` — Na+, K+ // Cl−, Y – H2O with Y = SO4²− or NO3−; ``z = (j_K, j_Y, s)``
  with the equivalent fractions of K among the cations and of Y among the anions (Jänecke's
  square, Jänecke 1906, Z. anorg. Chem. 51, 132) and ``s = ln`` (cation equivalents per kg
  water).
- :class:`HaliteSaturatedSystem` — Na+, K+, Mg2+ // Cl−, SO4²− – H2O saturated with halite,
  projected on the K2–Mg–SO4 triangle (Jänecke's projection of the oceanic salts, as in
  D'Ans 1933, "Die Lösungsgleichgewichte der Systeme der Salze ozeanischer Salzablagerungen");
  ``z = (f_Mg, f_SO4, s, ln m_Na)``, with fractions of P = m_K/2 + m_Mg + m_SO4 and ``s = ln P``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from phasekit.chemistry.salts import parse_salt, salt_formula_mass
from phasekit.chemistry.species import M_WATER
from phasekit.errors import InputError, RangeError
from phasekit.thermo.water import T_MAX_C, T_MIN_C
from phasekit.validate import names

#: finite-difference step on the unknowns
FD_H = 1e-7


@dataclass
class Vertex:
    """A corner of the diagram: its name and projection coordinates."""

    name: str
    coords: tuple
    bounds: tuple  # indices of the domain inequalities that are active (= 0) here


@dataclass
class Edge:
    """A side of a 2-D diagram from vertex ``a`` to vertex ``b``: the domain inequality that is 0 on it."""

    name: str
    a: int
    b: int
    bound: int  # index into System.bounds


@dataclass
class System:
    """Common interface of the systems (see the module docstring)."""

    name: str
    ions: list  # species of the system
    n: int
    d: int
    imposed: list  # solid indices always present
    candidates: list  # solid indices that may form (imposed included)
    bound_c: np.ndarray  # (nb, n): domain is bound_c @ z + bound_d >= 0
    bound_d: np.ndarray
    vertices: list
    edges: list
    s_index: int
    s_range: tuple = (np.log(1e-3), np.log(60.0))
    notes: list = field(default_factory=list)

    # composition map, implemented by subclasses
    def molalities(self, Z: np.ndarray) -> np.ndarray:  # pragma: no cover - interface
        raise NotImplementedError

    def fd_sign(self, z: np.ndarray) -> np.ndarray:
        """+1 or -1 per unknown so that a forward finite-difference step stays in the domain."""
        slack = self.bound_c @ z + self.bound_d
        if slack.min() > 1e-5:
            return np.ones(self.n)
        fwd = (slack[:, None] + self.bound_c * (2 * FD_H) < -1e-15).any(axis=0)
        return np.where(fwd, -1.0, 1.0)

    def fd_directions(self, z: np.ndarray) -> np.ndarray:
        """Rows: the finite-difference step directions at ``z`` (signed unit vectors by default)."""
        return np.diag(self.fd_sign(z))

    def ray_start(self, vertex: Vertex) -> np.ndarray:
        """A dilute starting point on the ray of a vertex (hidden unknowns are a first guess)."""
        z = np.zeros(self.n)
        z[: self.d] = vertex.coords
        z[self.s_index] = self.s_range[0]
        return z


def _salt_vector(model, salt: str, field_name: str) -> tuple[dict, np.ndarray]:
    try:
        ions = parse_salt(salt)
    except InputError:
        raise InputError(field_name, salt, "a salt of one cation and one anion of the database, "
                         "e.g. 'NaCl', 'Na2SO4', 'Mg(NO3)2'") from None
    v = np.zeros(len(model.species))
    for s, k in ions.items():
        v[model.index[s]] = k
    return ions, v


def system_solids(model, ions: list, exclude=(), field_name: str = "exclude") -> list:
    """Indices of the solids made only of ``ions`` (and water), less the excluded ones."""
    ion_idx = {model.index[s] for s in ions}
    out = []
    for k, nu in enumerate(model.solids.nu):
        if not model.solids.has_ions[k]:
            continue  # ice: left out (see the module notes of isotherm)
        if set(np.flatnonzero(nu > 0).tolist()) <= ion_idx:
            out.append(k)
    excl = set()
    for name in names(field_name, exclude, "solid names, e.g. ['glaserite']"):
        try:
            excl.add(model.solids.index[model.solids.resolve(name)])
        except InputError:
            raise InputError(field_name, name, f"a solid of the database: {', '.join(model.solids.names)}") from None
    return [k for k in out if k not in excl]


def temperature_range(model, ions: list) -> tuple[float, float, str]:
    """Temperatures covered by the binary Pitzer parameters of every cation–anion pair of ``ions``."""
    lo, hi = T_MIN_C, T_MAX_C
    pairs = []
    ci = {s: i for i, s in enumerate(model.cations)}
    ai = {s: i for i, s in enumerate(model.anions)}
    for c in ions:
        for a in ions:
            if c in ci and a in ai and model._binary_has[ci[c], ai[a]]:
                r = model._binary_range[ci[c], ai[a]]
                lo, hi = max(lo, float(r[0])), min(hi, float(r[1]))
                pairs.append(f"{c}-{a}")
    return lo, hi, ", ".join(pairs)


def check_temperature(model, ions: list, temp_c, field_name: str = "temp_c") -> float:
    """A temperature in °C within the range of the system's parameters, else :class:`RangeError`."""
    try:
        t = float(temp_c)
    except (TypeError, ValueError):
        raise InputError(field_name, temp_c, "a temperature in °C (a number)") from None
    if not np.isfinite(t):
        raise InputError(field_name, temp_c, "a finite temperature in °C")
    lo, hi, pairs = temperature_range(model, ions)
    if not lo <= t <= hi:
        raise RangeError(field_name, t, f"a temperature from {lo:g} to {hi:g} °C "
                         f"(the range of the Pitzer parameters of {pairs})")
    return t


class TernarySystem(System):
    """Salt A – salt B – water with one ion in common (see the module docstring).

    Parameters
    ----------
    model : Model
    salts : sequence of two str
        Salt formulas, e.g. ``["NaCl", "KCl"]``.
    exclude : sequence of str
        Solids left out (to compute metastable equilibria).
    """

    def __init__(self, model, salts, exclude=()):
        if isinstance(salts, str) or not hasattr(salts, "__len__") or len(salts) != 2:
            raise InputError("salts", salts, "a list of two salt formulas with one ion in common, e.g. ['NaCl', 'KCl']")
        names = [str(s).strip() for s in salts]
        (ia, va), (ib, vb) = (_salt_vector(model, s, f"salts[{i}]") for i, s in enumerate(names))
        if ia == ib:
            raise InputError("salts", list(salts), "two different salts")
        common = set(ia) & set(ib)
        if len(common) != 1:
            raise InputError("salts", list(salts), "two salts with exactly one ion in common, "
                             "e.g. ['NaCl', 'KCl'] (common Cl) or ['NaCl', 'Na2SO4'] (common Na)")
        self.salts = names
        self.salt_ions = [ia, ib]
        self.salt_vectors = np.array([va, vb])
        self.salt_masses = np.array([salt_formula_mass(s) for s in names])
        self.common_ion = common.pop()
        ions = sorted(set(ia) | set(ib), key=lambda s: model.index[s])
        cands = system_solids(model, ions, exclude)
        for i, (s, iv) in enumerate(zip(names, (ia, ib))):
            own = [k for k in cands if set(np.flatnonzero(model.solids.nu[k] > 0)) <= {model.index[x] for x in iv}]
            if not own:
                raise InputError(f"salts[{i}]", s, "a salt with at least one solid in the database "
                                 f"(solids: {', '.join(model.solids.names)})")
        # solid compositions in salt units: nu_k = pA vA + pB vB
        basis = self.salt_vectors.T
        self.solid_salts = {}
        for k in cands:
            p, *_ = np.linalg.lstsq(basis, model.solids.nu[k], rcond=None)
            self.solid_salts[k] = np.where(np.abs(p) < 1e-12, 0.0, p)
        c = np.array([[1.0, 0.0], [-1.0, 0.0]])
        d = np.array([0.0, 1.0])
        super().__init__(
            name=f"{names[0]}–{names[1]}–H2O", ions=ions, n=2, d=1, imposed=[], candidates=cands,
            bound_c=c, bound_d=d,
            vertices=[Vertex(names[0], (0.0,), (0,)), Vertex(names[1], (1.0,), (1,))],
            edges=[Edge(f"{names[0]}–{names[1]}", 0, 1, -1)], s_index=1,
        )

    def molalities(self, Z):
        Z = np.atleast_2d(Z)
        x, tot = Z[:, 0], np.exp(Z[:, 1])
        a, b = (1.0 - x) * tot, x * tot
        return a[:, None] * self.salt_vectors[0][None, :] + b[:, None] * self.salt_vectors[1][None, :]

    def salt_molalities(self, Z):
        """(N, 2) mol of salt A and B per kg water."""
        Z = np.atleast_2d(Z)
        tot = np.exp(Z[:, 1])
        return np.stack([(1.0 - Z[:, 0]) * tot, Z[:, 0] * tot], axis=1)

    def salts_of_molalities(self, M: np.ndarray) -> np.ndarray:
        """(N, 2) salt molalities of ion molality rows (least squares on the system's ions)."""
        sol, *_ = np.linalg.lstsq(self.salt_vectors.T, np.atleast_2d(M).T, rcond=None)
        return sol.T


class ReciprocalSystem(System):
    """Na+, K+ // Cl−, Y – H2O in Jänecke's square, Y = SO4²− or NO3− (see the module docstring)."""

    SECOND_ANIONS = ("SO4", "NO3")

    def __init__(self, model, exclude=(), anion: str = "SO4"):
        if anion not in self.SECOND_ANIONS:
            raise InputError("anion", anion, "'SO4' (Na, K // Cl, SO4) or 'NO3' (Na, K // Cl, NO3)")
        self.anion = anion
        #: mol of the second anion per equivalent
        self.per_eq = 0.5 if anion == "SO4" else 1.0
        ions = ["Na", "K", "Cl", anion]
        self.iv = np.array([model.index[s] for s in ions])
        self.model_index = {s: model.index[s] for s in ions}
        self.ns = len(model.species)
        cands = system_solids(model, ions, exclude)
        # domain: jK >= 0, 1 - jK >= 0, jY >= 0, 1 - jY >= 0
        c = np.array([[1.0, 0, 0], [-1.0, 0, 0], [0, 1.0, 0], [0, -1.0, 0]])
        d = np.array([0.0, 1.0, 0.0, 1.0])
        na_y, k_y = ("Na2SO4", "K2SO4") if anion == "SO4" else ("NaNO3", "KNO3")
        verts = [Vertex("NaCl", (0.0, 0.0), (0, 2)), Vertex("KCl", (1.0, 0.0), (1, 2)),
                 Vertex(k_y, (1.0, 1.0), (1, 3)), Vertex(na_y, (0.0, 1.0), (0, 3))]
        edges = [Edge("NaCl–KCl", 0, 1, 2), Edge(f"KCl–{k_y}", 1, 2, 1), Edge(f"{na_y}–{k_y}", 3, 2, 3),
                 Edge(f"NaCl–{na_y}", 0, 3, 0)]
        label = "SO4²−" if anion == "SO4" else "NO3−"
        super().__init__(name=f"Na+, K+ // Cl−, {label} – H2O", ions=ions, n=3, d=2, imposed=[], candidates=cands,
                         bound_c=c, bound_d=d, vertices=verts, edges=edges, s_index=2,
                         s_range=(np.log(1e-3), np.log(80.0)))

    def molalities(self, Z):
        Z = np.atleast_2d(Z)
        e = np.exp(Z[:, 2])
        out = np.zeros((Z.shape[0], self.ns))
        out[:, self.iv[0]] = (1.0 - Z[:, 0]) * e
        out[:, self.iv[1]] = Z[:, 0] * e
        out[:, self.iv[2]] = (1.0 - Z[:, 1]) * e
        out[:, self.iv[3]] = self.per_eq * Z[:, 1] * e
        return out

    def coordinates(self, M: np.ndarray) -> dict:
        """Jänecke coordinates of ion molality rows: mol per 100 mol of (Na2 + K2) = 100 mol (Cl2 + Y2/z)."""
        M = np.atleast_2d(M)
        na, k, cl, y = (M[:, i] for i in self.iv)
        e = na + k
        with np.errstate(divide="ignore", invalid="ignore"):
            y_eq = y / self.per_eq
            return {"jaenecke_K2": 100.0 * k / e, f"jaenecke_{self.anion}": 100.0 * y_eq / (cl + y_eq),
                    "jaenecke_H2O": 100.0 / M_WATER / (e / 2.0)}


class HaliteSaturatedSystem(System):
    """Na+, K+, Mg2+ // Cl−, SO4²− – H2O at halite saturation, on the K2–Mg–SO4 triangle."""

    def __init__(self, model, exclude=()):
        ions = ["Na", "K", "Mg", "Cl", "SO4"]
        self.iv = {s: model.index[s] for s in ions}
        self.model_index = dict(self.iv)
        self.ns = len(model.species)
        halite = model.solids.index["halite"]
        cands = system_solids(model, ions, exclude)
        if halite not in cands:
            raise InputError("exclude", "halite", "solids other than halite (halite is imposed in this projection)")
        # domain: fMg >= 0, fSO4 >= 0, 1 - fMg - fSO4 >= 0
        c = np.array([[1.0, 0, 0, 0], [0, 1.0, 0, 0], [-1.0, -1.0, 0, 0]])
        d = np.array([0.0, 0.0, 1.0])
        verts = [Vertex("K2", (0.0, 0.0), (0, 1)), Vertex("Mg", (1.0, 0.0), (1, 2)), Vertex("SO4", (0.0, 1.0), (0, 2))]
        edges = [Edge("K2–Mg", 0, 1, 1), Edge("Mg–SO4", 1, 2, 2), Edge("K2–SO4", 0, 2, 0)]
        super().__init__(name="Na+, K+, Mg2+ // Cl−, SO4²− – H2O, saturated with halite", ions=ions, n=4, d=2,
                         imposed=[halite], candidates=cands, bound_c=c, bound_d=d, vertices=verts, edges=edges,
                         s_index=2, s_range=(np.log(1e-3), np.log(40.0)))

    def molalities(self, Z):
        Z = np.atleast_2d(Z)
        p = np.exp(Z[:, 2])
        na = np.exp(Z[:, 3])
        k = 2.0 * (1.0 - Z[:, 0] - Z[:, 1]) * p
        mg = Z[:, 0] * p
        so4 = Z[:, 1] * p
        cl = na + k + 2.0 * mg - 2.0 * so4
        out = np.zeros((Z.shape[0], self.ns))
        iv = self.iv
        out[:, iv["Na"]], out[:, iv["K"]], out[:, iv["Mg"]] = na, k, mg
        out[:, iv["Cl"]], out[:, iv["SO4"]] = cl, so4
        return out

    _PAIRS = [((1.0, 0.0), (0.0, 1.0)), ((-1.0, 0.0), (0.0, 1.0)), ((1.0, 0.0), (0.0, -1.0)),
              ((-1.0, 0.0), (-1.0, 1.0)), ((0.0, -1.0), (1.0, -1.0)), ((-1.0, 0.0), (0.0, -1.0))]

    def fd_directions(self, z):
        """Step directions that stay in the triangle, also at its corners (e.g. (-1, 0) and (-1, 1) at Mg)."""
        D = np.eye(self.n)
        slack = self.bound_c[:, :2] @ z[:2] + self.bound_d
        if slack.min() > 1e-5:
            return D
        for a, b in self._PAIRS:
            pa = slack + self.bound_c[:, :2] @ (2 * FD_H * np.array(a))
            pb = slack + self.bound_c[:, :2] @ (2 * FD_H * np.array(b))
            if pa.min() >= -1e-15 and pb.min() >= -1e-15:
                D[0, :2], D[1, :2] = a, b
                return D
        return D

    def ray_start(self, vertex):
        z = super().ray_start(vertex)
        z[3] = np.log(6.1)  # about halite saturation in pure water
        return z

    def coordinates(self, M: np.ndarray) -> dict:
        """Jänecke coordinates: mol K2, Mg, SO4, Na2 and H2O per 100 mol (K2 + Mg + SO4)."""
        M = np.atleast_2d(M)
        iv = self.iv
        k2, mg, so4, na = M[:, iv["K"]] / 2.0, M[:, iv["Mg"]], M[:, iv["SO4"]], M[:, iv["Na"]]
        p = k2 + mg + so4
        with np.errstate(divide="ignore", invalid="ignore"):
            return {"jaenecke_K2": 100 * k2 / p, "jaenecke_Mg": 100 * mg / p, "jaenecke_SO4": 100 * so4 / p,
                    "jaenecke_Na2": 100 * na / 2.0 / p, "jaenecke_H2O": 100.0 / M_WATER / p}

