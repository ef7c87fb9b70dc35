"""Propagation of parameter uncertainties to a prediction by Monte Carlo.

Parameters are given as a list of (spec, standard deviation) — independent normal — or as a
:class:`phasekit.fitting.FitResult`, whose covariance gives correlated normal samples. A spec
is ``("solid", name, coefficient)`` for a ln K(T) coefficient, or a Pitzer parameter spec as in
:func:`phasekit.fitting.fit_parameters` (``("theta", "Na", "K")``, ``("beta0", "K", "NO3",
"a1")``). For each sample a model is built with the parameters moved by the sampled deviations
and the prediction ``predict(model) -> float`` is evaluated; samples are independent, so they
can run on a Dask cluster (``scheduler=`` address or a dask.distributed Client), split in
chunks with their own seeds, giving the same numbers as a local run.
"""

from __future__ import annotations

import warnings
import weakref
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.optimize import brentq

from phasekit.errors import InputError, PhasekitError, ValidityWarning
from phasekit.thermo.tempfn import COEFFS


@dataclass
class UncertaintyResult:
    """Monte Carlo result: ``samples`` (DataFrame of parameter deviations and the prediction),
    ``mean``, ``std``, ``percentiles`` (2.5, 50, 97.5), ``n_failed`` (samples whose prediction
    raised a phasekit error), ``nominal`` (prediction with the parameters unchanged)."""

    samples: pd.DataFrame
    mean: float
    std: float
    percentiles: dict
    n_failed: int
    nominal: float


def _specs_and_cov(parameters):
    from phasekit.fitting import FitResult

    if isinstance(parameters, FitResult):
        names = list(parameters.parameters)
        specs = []
        for n in names:
            parts = tuple(n.split("/"))
            specs.append(parts)
        cov = parameters.covariance.loc[names, names].to_numpy(float)
        if not np.all(np.isfinite(cov)):
            raise InputError("parameters", "fit without covariance", "a fit with degrees of freedom > 0")
        return specs, cov
    specs, sds = [], []
    for i, item in enumerate(parameters):
        try:
            spec, sd = item
            sd = float(sd)
        except (TypeError, ValueError):
            raise InputError(f"parameters[{i}]", item, "a pair (spec, standard deviation)") from None
        if not np.isfinite(sd) or sd < 0:
            raise InputError(f"parameters[{i}] standard deviation", sd, "a number >= 0")
        specs.append(tuple(spec))
        sds.append(sd)
    if not specs:
        raise InputError("parameters", parameters, "at least one (spec, standard deviation)")
    return specs, np.diag(np.square(sds))


#: (parameter specs of phasekit.fitting.with_parameters, their database values) per model and specs
_BASE: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _base_values(model, specs):
    """The specs as :func:`phasekit.fitting.with_parameters` specs, and their values in the model's
    database (checked once per model and list of specs)."""
    from phasekit.fitting import _select, _split

    key = tuple(tuple(s) for s in specs)
    known = _BASE.get(model)
    if known is not None and key in known:
        return known[key]
    fit_specs, values = [], []
    for spec in specs:
        if spec[0] == "solid":
            if len(spec) != 3 or spec[2] not in COEFFS:
                raise InputError("parameter", spec, "('solid', name, 'a0'..'a4')")
            name = model.solids.resolve(spec[1])
            solids = model.db.solids
            fit_specs.append(("lnk", name, spec[2]))
            values.append(float(solids.loc[solids["solid"] == name, spec[2]].iloc[0]))
        else:
            base, coef = _split(spec)
            _, table, sel = _select(model.db, base)
            fit_specs.append(tuple(spec))
            values.append(float(table.loc[sel, coef].iloc[0]))
    out = (fit_specs, np.array(values))
    _BASE.setdefault(model, {})[key] = out
    return out


def perturbed_model(model, specs, deltas):
    """A model with each parameter spec moved by ``delta`` from its database value.

    The model is a copy of ``model`` with its coefficient arrays changed
    (:func:`phasekit.fitting.with_parameters`), not a database rebuilt from its tables.
    """
    from phasekit.fitting import with_parameters

    fit_specs, base = _base_values(model, specs)
    values, moved = [], {}
    for spec, b, d in zip(fit_specs, base, deltas):
        if spec[0] == "lnk":  # a solid named twice moves by both deltas
            moved[spec] = moved.get(spec, float(b)) + d
            values.append(moved[spec])
        else:
            values.append(float(b) + d)
    new = with_parameters(model, fit_specs, values)
    new.overlays = list(getattr(model, "overlays", []))
    return new


def _run_chunk(args):
    model, specs, deltas, predict = args
    out = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for d in deltas:
            try:
                out.append(float(predict(perturbed_model(model, specs, d))))
            except PhasekitError:
                out.append(np.nan)
    return out


def monte_carlo(predict, parameters, n: int = 200, seed: int = 0, model=None, scheduler=None,
                chunk: int = 25) -> UncertaintyResult:
    """Monte Carlo propagation of parameter uncertainty to ``predict(model)``.

    Parameters
    ----------
    predict : callable
        ``predict(model) -> float`` (must be picklable for a Dask run: a module-level function
        or a functools.partial of one).
    parameters : list of (spec, sd) or FitResult
    n : int
        Number of samples.
    scheduler : str or dask.distributed.Client, optional
        Run the samples on a Dask cluster.
    """
    from phasekit.model import default_model

    model = model or default_model()
    if not isinstance(n, int) or n < 2:
        raise InputError("n", n, "an integer number of samples >= 2")
    specs, cov = _specs_and_cov(parameters)
    # a spec naming an unknown solid, ion or parameter fails here, with its own message, rather than
    # in every sample
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        perturbed_model(model, specs, np.zeros(len(specs)))
        nominal = float(predict(model))
    rng = np.random.default_rng(seed)
    deltas = rng.multivariate_normal(np.zeros(len(specs)), cov, size=n, method="eigh")
    chunks = [(model, specs, deltas[i:i + chunk], predict) for i in range(0, n, chunk)]
    if scheduler is None:
        values = [v for c in chunks for v in _run_chunk(c)]
    else:
        from phasekit.validate import scheduler_client

        client, owned = scheduler_client("scheduler", scheduler)
        try:
            futures = client.map(_run_chunk, chunks, pure=False)
            values = [v for part in client.gather(futures) for v in part]
        finally:
            if owned:
                client.close()
    values = np.array(values)
    ok = values[np.isfinite(values)]
    if len(ok) < 2:
        raise InputError("prediction", f"defined for {len(ok)} of {n} samples",
                         "a prediction defined near the parameters (smaller standard deviations?)")
    samples = pd.DataFrame(deltas, columns=["/".join(map(str, s)) for s in specs])
    samples["prediction"] = values
    return UncertaintyResult(samples, float(ok.mean()), float(ok.std(ddof=1)),
                             {p: float(np.percentile(ok, p)) for p in (2.5, 50, 97.5)},
                             int(np.sum(~np.isfinite(values))), nominal)


def onset_concentration_factor(model, brine, temp_c: float, solid: str | None = None, cf_max: float = 1e3):
    """Concentration factor at which the first solid (or ``solid``) saturates on evaporation.

    Before the first solid forms the brine only concentrates (molalities × CF), so the onset is
    the root of SI(CF) = 0, found with scipy.optimize.brentq. With ``solid`` given, the result is
    that solid's onset provided no other solid comes first (an error says which one does).
    """
    from phasekit.equilibrium.common import composition_array
    from phasekit.equilibrium.saturation import saturation_indices

    m0 = composition_array(model, brine)
    k_sel = None if solid is None else model.solids.index[model.solids.resolve(solid)]

    def si(cf):
        s = saturation_indices(model, (m0 * cf)[None, :], float(temp_c))[0]
        s = np.where(np.isfinite(s), s, -np.inf)
        return float(s.max() if k_sel is None else s[k_sel])

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        if si(1.0) >= 0:
            return 1.0
        grid = np.geomspace(1.0, cf_max, 60)
        # the grid in one call of the model; values within 1e-9 of saturation are evaluated again one
        # by one, as the root-finding below does, so that the bracket is the one a row-by-row scan finds
        s_grid = saturation_indices(model, m0[None, :] * grid[:, None], float(temp_c))
        s_grid = np.where(np.isfinite(s_grid), s_grid, -np.inf)
        vals = s_grid.max(axis=1) if k_sel is None else s_grid[:, k_sel]
        for i in np.flatnonzero(np.abs(vals) < 1e-9):
            vals[i] = si(grid[i])
        hit = next((i for i, v in enumerate(vals) if v >= 0), None)
        if hit is None:
            raise InputError("brine", "does not reach saturation", f"a brine that saturates below CF {cf_max:g}")
        cf = brentq(si, grid[hit - 1], grid[hit], xtol=1e-12, rtol=1e-12)
        if k_sel is not None:
            s_all = saturation_indices(model, (m0 * cf)[None, :], float(temp_c))[0]
            first = int(np.nanargmax(np.where(np.isfinite(s_all), s_all, -np.inf)))
            if s_all[first] > 1e-9:
                raise InputError("solid", solid, f"the first solid to saturate ({model.solids.names[first]} "
                                 "comes first)")
    return float(cf)


def _onset(model, brine, temp_c, solid):
    return onset_concentration_factor(model, brine, temp_c, solid)


def onset_predictor(brine, temp_c: float, solid: str | None = None):
    """``predict(model)`` for :func:`monte_carlo`: the onset concentration factor of ``brine`` at
    ``temp_c`` (of ``solid``, or of the first solid); picklable, so it runs on a Dask cluster."""
    from functools import partial

    return partial(_onset, brine=brine, temp_c=float(temp_c), solid=solid)
