"""Temperature functions of the double salts' ln K: an additivity estimate, refined where measurements exist.

Configured by ``data/reference/regression.toml`` (its header explains the method); run by
``scripts/regress_database.py`` after ``scripts/calibrate_solids.py``, which owns the single salts whose
coefficients the estimate adds up.

References
----------
Harvie, C. E., Møller, N. & Weare, J. H. (1984). Geochim. Cosmochim. Acta 48, 723 (the 25 °C ln K of the double
salts, kept as a0). Kopp, H. (1865). Phil. Trans. R. Soc. Lond. 155, 71 (additivity of the heat capacities of
solids).
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from phasekit.calibration.measurements import measurement_files, read_measurements
from phasekit.calibration.regress import RegressionResult, regress
from phasekit.data_files import data_dir
from phasekit.errors import InputError
from phasekit.fitting import with_parameters

COEFS = ("a1", "a2", "a3", "a4")


@dataclass
class DoubleSaltFit:
    """Result of :func:`fit_double_salts`.

    Attributes
    ----------
    estimate : dict
        ``{solid: array(a1..a4)}`` from additivity.
    coeffs : dict
        ``{solid: array(a0..a4)}`` written (estimate, refined where fitted).
    ranges : dict
        ``{solid: (t_min_c, t_max_c)}``.
    regression : RegressionResult or None
    sources : dict
        ``{solid: text}`` for the ``source`` column.
    model : Model
        The model with the new coefficients.
    notes : list of str
    """

    estimate: dict
    coeffs: dict
    ranges: dict
    regression: RegressionResult | None
    sources: dict
    model: object
    notes: list = field(default_factory=list)


def load_settings(directory: Path | None = None) -> dict:
    """``data/reference/regression.toml`` as a mapping."""
    path = (Path(directory) if directory else data_dir()) / "reference" / "regression.toml"
    with open(path, "rb") as fh:
        return tomllib.load(fh)


def _part_coeffs(model, name: str, hydrates: dict) -> tuple[np.ndarray, dict]:
    """(a1..a4, stoichiometry) of a part: a solid of the model or an interpolated hydrate."""
    if name in hydrates:
        h = hydrates[name]
        lo, hi = h["between"]
        (w_lo, w_hi), n = h["water"], float(h["n"])
        f = (n - w_lo) / (w_hi - w_lo)
        c_lo, st_lo = _part_coeffs(model, lo, {})
        c_hi, st_hi = _part_coeffs(model, hi, {})
        st = {k: v for k, v in st_lo.items() if k != "H2O"}
        st["H2O"] = n
        return c_lo + f * (c_hi - c_lo), st
    k = model.solids.index[model.solids.resolve(name)]
    return model.solids.coeffs[k, 1:].copy(), dict(model.solids.solids[k].stoichiometry)


def additivity_estimate(model, solid: str, parts: dict, hydrates: dict) -> np.ndarray:
    """Coefficients a1..a4 of ``solid``'s ln K as the sum of its parts' (see the module docstring).

    Raises
    ------
    InputError
        When the parts do not add up to the solid's ions and hydrate water.
    """
    total = np.zeros(4)
    st: dict = {}
    for name, n in parts.items():
        c, s = _part_coeffs(model, name, hydrates)
        total += float(n) * c
        for k, v in s.items():
            st[k] = st.get(k, 0.0) + float(n) * float(v)
    want = {k: float(v) for k, v in model.solids[solid].stoichiometry.items()}
    if set(st) != set(want) or any(not math.isclose(st[k], want[k], abs_tol=1e-9) for k in want):
        raise InputError(f"regression.toml double_salts.{solid}.parts", parts,
                         f"parts adding up to {want} (they give {st})")
    return total


def fit_double_salts(model, settings: dict | None = None, measurements: pd.DataFrame | None = None) -> DoubleSaltFit:
    """Estimate and refine the double salts' temperature functions.

    Parameters
    ----------
    model : Model
        The database after the single-salt calibration.
    settings : dict, optional
        ``regression.toml`` (read from the embedded data by default).
    measurements : pandas.DataFrame, optional
        The reference set (:func:`read_measurements` by default).

    Returns
    -------
    DoubleSaltFit
    """
    settings = settings or load_settings()
    meas = read_measurements(measurement_files()) if measurements is None else measurements
    hydrates = settings.get("hydrates", {})
    salts = settings["double_salts"]
    estimate, specs, values = {}, [], []
    for solid, cfg in salts.items():
        est = additivity_estimate(model, solid, cfg["parts"], hydrates)
        estimate[solid] = est
        for c, v in zip(COEFS, est):
            specs.append(("lnk", solid, c))
            values.append(float(v))
    model = with_parameters(model, specs, values)
    named = meas[meas["solid_list"].map(lambda s: any(x in salts for x in s))]
    fit_rows = named[named["role"] == "fit"]
    wanted = [f"lnk:{solid}:{c}" for solid, cfg in salts.items() for c in cfg.get("fit", [])
              if (fit_rows["solid_list"].map(lambda s, solid=solid: solid in s)).any()]
    notes = [f"{solid}: no fit row, additivity estimate only" for solid, cfg in salts.items()
             if cfg.get("fit") and not (fit_rows["solid_list"].map(lambda s, solid=solid: solid in s)).any()]
    reg = None
    if wanted:
        # only the double salts' conditions: the single salts were calibrated before and are not refitted
        rows = fit_rows.copy()
        rows["solid_list"] = rows["solid_list"].map(lambda s: tuple(x for x in s if x in salts))
        reg = regress(model, rows, wanted, settings["priors"])
        model = reg.model
        notes += reg.notes
    coeffs, ranges, sources = {}, {}, {}
    for solid, cfg in salts.items():
        k = model.solids.index[solid]
        coeffs[solid] = model.solids.coeffs[k].copy()
        temps = named.loc[named["solid_list"].map(lambda s, solid=solid: solid in s), "temp_c"]
        lo = min([25.0 - 15.0] + [float(t) for t in temps])
        hi = max([25.0 + 15.0] + [float(t) for t in temps])
        ranges[solid] = (float(math.floor(lo)), float(math.ceil(hi)))
        parts = " + ".join(f"{n:g} {p}" if n != 1 else p for p, n in cfg["parts"].items())
        text = (f"temperature function (a1-a4) estimated in this project by additivity from {parts} "
                "(data/reference/regression.toml: no enthalpy or heat capacity of formation from the parts)")
        if reg is not None:
            mine = [i for i, n in enumerate(reg.names) if n.split(":")[1] == solid]
            if mine:
                res = reg.residuals[reg.residuals["solid"] == solid]
                refs = ", ".join(sorted(set(res["reference"])))
                fitted = ", ".join(f"{reg.names[i].split(':')[2]} {reg.after[i]:+.5g} ± {reg.stderr[i]:.2g} "
                                   f"(estimate {reg.before[i]:+.5g})" for i in mine)
                text += (f"; {fitted} fitted in this project to {len(res)} role=fit measurement(s) of "
                         f"data/reference/measured_*.csv ({refs}; {res['temp_c'].min():g}–{res['temp_c'].max():g} °C), "
                         "prior centred on the estimate")
        sources[solid] = text
    return DoubleSaltFit(estimate, coeffs, ranges, reg, sources, model, notes)

