"""One chunk of a batch run: analyses in, one result row per analysis out.

For every row: the analysis is converted (:meth:`phasekit.Brine.read_table`, which keeps a bad
row as the error that names its row, column and value), its charge balance is reported and the
brine balanced as the run asks (recorded in ``balanced_on``), and then, for all the good rows of
the chunk at once, the saturation index and state of every solid and the first solid to
crystallize on isothermal evaporation (:func:`phasekit.batch.onset.first_onset`). For a brine
that is already supersaturated, the solids that form at once (CF = 1) are reported: one solid when
:func:`phasekit.batch.onset.single_solid_equilibrium` shows that it alone is the equilibrium, else
the assemblage of the full solver (``Model.equilibrate``), joined by "+". A row that fails at any stage is kept, with ``status`` "error" and the reason.

Every computation here depends on the row alone, so the output of a chunk is the same rows,
bit for bit, whatever other rows share the chunk.
"""

from __future__ import annotations

import hashlib
import json
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd

from phasekit.batch.onset import EVAL_ROWS, first_onset, single_solid_equilibrium
from phasekit.chemistry.brine import Brine
from phasekit.chemistry.species import SPECIES
from phasekit.chemistry.tables import PROBLEM_COLUMN
from phasekit.equilibrium.saturation import states
from phasekit.errors import ConvergenceError, InputError, PhasekitError

#: balancing policies besides the name of an ion
BALANCE_POLICIES = ("auto", "none")
#: relative charge imbalance below which a brine counts as neutral (as the activity model's check)
NEUTRAL_TOLERANCE = 1e-6


@dataclass(frozen=True)
class BatchSpec:
    """What a batch run does with each row (picklable: it travels to the workers).

    Attributes
    ----------
    units : str
        Units of every species column.
    temp_c : float
        Temperature of the saturation states and of the evaporation, °C.
    species_columns : tuple of str
        Columns holding species amounts.
    id_column : str or None
        Column of sample identifiers, copied to the output.
    density_column : str or None
        Column of densities (kg/L) for per-litre units.
    balance_on : str
        ``"auto"`` (increase the major ion of the side that is short: Cl or SO4 when cations are
        in excess, Na, Mg ... when anions are), ``"none"`` (a brine that is not neutral is an
        error), or the name of an ion to increase.
    missing : str
        ``"error"`` or ``"zero"``: what an empty species cell means.
    overlays : tuple of dict
        Database overlays, as read by :func:`phasekit.overlay.read_overlay` (their content, not
        their paths: a worker of a cluster need not see the caller's files).
    """

    units: str
    temp_c: float
    species_columns: tuple
    id_column: str | None = None
    density_column: str | None = None
    balance_on: str = "auto"
    missing: str = "error"
    overlays: tuple = ()


_FINGERPRINTS: dict = {}
_MODELS: dict = {}


def spec_model(spec: BatchSpec):
    """The model of a batch run: the embedded database with the spec's overlays (built once per process)."""
    from phasekit.model import default_model, load_model

    if not spec.overlays:
        return default_model()
    key = json.dumps(list(spec.overlays), sort_keys=True, default=str)
    model = _MODELS.get(key)
    if model is None:
        model = load_model(overlays=list(spec.overlays))
        if len(_MODELS) >= 4:
            _MODELS.clear()
        _MODELS[key] = model
    return model


def database_fingerprint(model) -> str:
    """A short hash of the model's database (parameters and solids), to tell mixed installations apart."""
    key = id(model)
    hit = _FINGERPRINTS.get(key)
    if hit is not None and hit[0] is model:
        return hit[1]
    from phasekit import __version__

    h = hashlib.sha256(__version__.encode())
    db = model.db
    for table in (db.binary, db.mixing, db.solids):
        h.update(pd.util.hash_pandas_object(table.astype(str), index=False).to_numpy().tobytes())
    h.update(repr(float(db.ionic_strength_max)).encode())
    fp = h.hexdigest()[:16]
    _FINGERPRINTS[key] = (model, fp)
    return fp


def balance_ion(brine: Brine, policy: str) -> str | None:
    """The ion to balance ``brine`` on under ``policy`` (None: leave it as it is)."""
    cb = brine.charge_balance()
    if policy == "none" or cb == 0.0:
        return None
    if policy != "auto":
        return policy
    m = brine.molalities
    side = [s for s in m if (SPECIES[s].charge < 0) == (cb > 0)]
    if not side:
        return "Cl" if cb > 0 else "Na"
    return max(side, key=lambda s: (abs(SPECIES[s].charge) * m[s], s))


def _balance(brine: Brine, policy: str) -> tuple[Brine, str]:
    ion = balance_ion(brine, policy)
    if ion is None:
        return brine, ""
    out = brine.balance(on=ion)
    return out, out.warnings[-1]


def _neutral(m: np.ndarray, z: np.ndarray) -> bool:
    return abs(float(m @ z)) <= NEUTRAL_TOLERANCE * float(m @ np.abs(z)) + 1e-12


def _blank(value) -> bool:
    if value is None:
        return True
    if isinstance(value, str):
        return not value.strip()
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


def read_rows(spec: BatchSpec, chunk: pd.DataFrame) -> list:
    """A Brine, or the error naming the row, column and value, for each row of ``chunk``.

    The conversion is :meth:`phasekit.Brine.from_analysis` on each row, with the messages of
    :meth:`phasekit.Brine.read_table` ("row 'S-12': column['Na']: got '-5'; expected ...").
    """
    records = chunk[list(spec.species_columns)].to_dict("records")
    dens = chunk[spec.density_column].tolist() if spec.density_column else [None] * len(records)
    problems = chunk[PROBLEM_COLUMN].tolist() if PROBLEM_COLUMN in chunk.columns else [""] * len(records)
    out: list = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for label, values, d, problem in zip(chunk.index, records, dens, problems):
            if isinstance(problem, str) and problem:
                out.append(PhasekitError(f"row {label!r}: {problem}"))
                continue
            try:
                out.append(Brine.from_analysis(values, units=spec.units, density=None if _blank(d) else d,
                                               temp_c=spec.temp_c, missing=spec.missing))
            except InputError as err:
                where = err.field.replace("values[", "column[", 1)
                if where == "density":
                    where = f"column[{spec.density_column!r}]"
                out.append(InputError(f"row {label!r}: {where}", err.value, err.expected))
            except PhasekitError as err:
                out.append(PhasekitError(f"row {label!r}: {err}"))
    return out


def output_columns(spec: BatchSpec, solids) -> list[str]:
    """Columns of the result table, in order."""
    head = [spec.id_column] if spec.id_column else ["row"]
    return head + ["status", "error", "charge_balance_percent", "balanced_on", "ionic_strength",
                   "first_solid", "first_solid_concentration_factor", "first_solid_water_removed_fraction",
                   "notes"] + [f"si_{s}" for s in solids] + [f"state_{s}" for s in solids]


def process_chunk(spec: BatchSpec, chunk: pd.DataFrame, model=None) -> pd.DataFrame:
    """Results of the rows of ``chunk``; see :func:`_process_chunk` (warnings are returned, not emitted)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return _process_chunk(spec, chunk, model)


def _process_chunk(spec: BatchSpec, chunk: pd.DataFrame, model=None) -> pd.DataFrame:
    """Results of the rows of ``chunk`` (its index labels name the rows in messages).

    Parameters
    ----------
    spec : BatchSpec
    chunk : pandas.DataFrame
        Raw cells of the input table; the index holds the labels used in error messages
        (sample ids, or row numbers), unique within the run.
    model : Model, optional
        The model of the spec's overlays (:func:`spec_model`) by default.

    Returns
    -------
    pandas.DataFrame
        One row per input row, in order, columns :func:`output_columns`.
    """
    model = model or spec_model(spec)
    solids = list(model.solids.names)
    n = len(chunk)
    status = ["ok"] * n
    error = [""] * n
    cbal = np.full(n, np.nan)
    balanced = [""] * n
    notes: list[list[str]] = [[] for _ in range(n)]
    brines = read_rows(spec, chunk)
    z = np.array([SPECIES[s].charge for s in model.species], dtype=float)
    m = np.zeros((n, len(model.species)))
    good = np.zeros(n, dtype=bool)
    for i, value in enumerate(brines):
        if not isinstance(value, Brine):
            status[i], error[i] = "error", str(value)
            continue
        cbal[i] = value.charge_balance()
        notes[i].extend(value.warnings)
        try:
            b, note = _balance(value, spec.balance_on)
        except InputError as err:
            status[i], error[i] = "error", (f"row {chunk.index[i]!r}: balance on {spec.balance_on}: got "
                                            f"{err.value!r}; expected "
                                            f"{err.expected.replace(', or pass allow_decrease=True', '')}")
            continue
        balanced[i] = note
        for s, v in b.molalities.items():
            m[i, model.index[s]] = v
        if not _neutral(m[i], z):
            status[i] = "error"
            error[i] = (f"row {chunk.index[i]!r}: charge balance: got {cbal[i]:+.3g} %; expected an electrically "
                        "neutral analysis (balance it: --balance-on auto, or the name of an ion)")
            continue
        if not m[i].any():
            status[i], error[i] = "error", f"row {chunk.index[i]!r}: values: got all zero; expected a brine"
            continue
        good[i] = True
    ion_strength = np.full(n, np.nan)
    si = np.full((n, len(solids)), np.nan)
    first = [""] * n
    cf = np.full(n, np.nan)
    rows = np.flatnonzero(good)
    chunk_warnings: list[str] = []
    if rows.size:
        t = float(spec.temp_c)
        frame = pd.DataFrame(m[rows], columns=model.species)
        for a in range(0, rows.size, EVAL_ROWS):  # for the model's validity warnings
            sat = model.saturation(frame.iloc[a:a + EVAL_ROWS], t)
            chunk_warnings.extend(w for w in sat.attrs.get("warnings", []) if w not in chunk_warnings)
        ion_strength[rows] = 0.5 * (m[rows] * z ** 2).sum(axis=1)  # per row, not through BLAS
        onset = first_onset(model, m[rows], t)
        si[rows] = onset.si
        t_rng = model.solids.t_range
        i_max = model.db.ionic_strength_max
        start = np.flatnonzero(onset.at_start)
        single_ok, single_k = single_solid_equilibrium(model, m[rows[start]], t, onset.si[start])
        single = {int(j): int(k) for j, k, ok in zip(start, single_k, single_ok) if ok}
        for j, i in enumerate(rows):
            label = chunk.index[i]
            if j in single:
                first[i] = solids[single[j]]
                cf[i] = 1.0
                notes[i].append("supersaturated as given: this solid forms at once")
                ks = [single[j]]
            elif onset.at_start[j]:
                try:
                    with warnings.catch_warnings():
                        warnings.simplefilter("ignore")
                        res = model.equilibrate(Brine(dict(zip(model.species, m[i]))), t)
                except ConvergenceError as err:
                    status[i], error[i] = "error", f"row {label!r}: convergence: {err}"
                    continue
                except PhasekitError as err:
                    status[i], error[i] = "error", f"row {label!r}: {err}"
                    continue
                formed = [s for s in solids if res.solids.get(s, 0.0) > 0]
                first[i] = "+".join(formed)
                cf[i] = 1.0
                notes[i].append("supersaturated as given: these solids form at once")
                ks = [model.solids.index[s] for s in formed]
            elif onset.solid[j] >= 0:
                k = int(onset.solid[j])
                first[i] = solids[k]
                cf[i] = float(onset.concentration_factor[j])
                ks = [k]
                ion_at = cf[i] * ion_strength[i]
                if ion_at > i_max:
                    notes[i].append(f"first solid at ionic strength {ion_at:.3g} mol/kg, above the model's "
                                    f"validity limit {i_max:g} mol/kg")
            else:
                notes[i].append("no solid saturates before the brine's total molality reaches "
                                "120 mol/kg (the end of the search)")
                ks = []
            for k in ks:
                if not t_rng[k, 0] <= t <= t_rng[k, 1]:
                    notes[i].append(f"{solids[k]}: {t:g} °C outside the validity range {t_rng[k, 0]:g}–"
                                    f"{t_rng[k, 1]:g} °C of its solubility product")
    with np.errstate(invalid="ignore"):
        removed = 1.0 - 1.0 / cf
    st = np.where(np.isfinite(si), states(np.where(np.isfinite(si), si, 0.0)), "")
    st[~good] = ""
    si_out = np.where(np.isfinite(si), si, np.nan)
    for i in range(n):
        if status[i] == "error":
            first[i], cf[i], removed[i] = "", np.nan, np.nan
    head = spec.id_column or "row"
    ids = chunk[spec.id_column].tolist() if spec.id_column else list(chunk.index)
    data = {head: ids, "status": status, "error": error, "charge_balance_percent": cbal,
            "balanced_on": balanced, "ionic_strength": ion_strength, "first_solid": first,
            "first_solid_concentration_factor": cf, "first_solid_water_removed_fraction": removed,
            "notes": ["; ".join(x) for x in notes]}
    for k, s in enumerate(solids):
        data[f"si_{s}"] = si_out[:, k]
    for k, s in enumerate(solids):
        data[f"state_{s}"] = st[:, k]
    out = pd.DataFrame(data, columns=output_columns(spec, solids))
    out.attrs["warnings"] = chunk_warnings
    out.attrs["database"] = database_fingerprint(model)
    return out

