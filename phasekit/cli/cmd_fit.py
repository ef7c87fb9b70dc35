"""Subcommand ``fit``: regression of ln K or Pitzer parameters on solubility measurements."""

from __future__ import annotations

import pandas as pd

from phasekit.chemistry.species import is_species
from phasekit.cli import common as c
from phasekit.errors import InputError

_NUMERIC = ("temp_c", "molality", "mass_percent", "grams_per_100g_water")


def _read_data(path: str) -> pd.DataFrame:
    from phasekit.batch.source import read_source

    df = read_source(path)
    out = df.copy()
    for col in out.columns:
        if col not in _NUMERIC and not is_species(col):
            continue  # text columns (salt, solids, source ...) are passed as they are
        conv = pd.to_numeric(out[col], errors="coerce")
        bad = conv.isna() & out[col].notna()
        if bad.any():
            r = int(bad.to_numpy().nonzero()[0][0])
            raise InputError(f"--data row {r + 1} column[{col!r}]", out[col].iloc[r], "a number")
        out[col] = conv
    return out


def parse_param(text: str) -> tuple:
    """("theta", "Na", "K") from "theta:Na:K" (a coefficient a0..a4 may end it)."""
    parts = tuple(p.strip() for p in str(text).split(":") if p.strip())
    if len(parts) < 2:
        raise InputError("--param", text, "KIND:SPECIES...[:COEFFICIENT], e.g. theta:Na:K, psi:Na:K:Cl, "
                                          "beta0:K:NO3:a1, lnk:niter")
    return parts


def _fit(args) -> c.Report:
    from phasekit import fitting

    data = _read_data(args.data)
    if bool(args.solid) == bool(args.param):
        raise InputError("--solid", args.solid, "either --solid NAME (fit its ln K) or --param SPEC ... (not both)")
    if args.solid:
        terms = tuple(t.strip() for t in args.terms.split(",") if t.strip())
        res = fitting.fit_ln_k(args.solid, data, terms=terms)
        head = {"fitted": f"ln K of {args.solid}", "terms": list(terms)}
    else:
        res = fitting.fit_parameters([parse_param(p) for p in args.param], data, residual=args.residual)
        head = {"fitted": "parameters", "residual": args.residual}
    head.update({"rms": res.rms, "n_points": res.n_points, "dof": res.dof})
    table = pd.DataFrame({"value": list(res.parameters.values()),
                          "stderr": [res.stderr.get(k) for k in res.parameters]},
                         index=pd.Index(list(res.parameters), name="parameter"))
    resid = pd.DataFrame({"residual": list(res.residuals)})
    return c.Report(scalars=head, tables={"parameters": table, "residuals": resid, "covariance": res.covariance},
                    main="parameters", warnings=list(res.notes), show=["parameters"])


def register(sub) -> None:
    p = c.add_parser(sub, "fit", "fit ln K(T) or Pitzer parameters to solubility data",
                     "Least-squares fit on measured saturated compositions (CSV/XLSX). --solid fits the ln K(T) "
                     "coefficients of one solid to compositions saturated with it; --param fits Pitzer parameters "
                     "(and ln K coefficients) to compositions saturated with the solids named in a 'solids' column. "
                     "Data columns: temp_c and species molalities (Na, Cl ...), or salt with molality, mass_percent "
                     "or grams_per_100g_water.",
                     ["phasekit fit --solid sylvite --data kcl_solubility.csv --terms a0,a3,a4",
                      "phasekit fit --param theta:Na:K --param psi:Na:K:Cl --data nacl_kcl_25.csv --residual ln_m "
                      "--format json"])
    p.add_argument("--data", required=True, metavar="FILE", help="measurements, one saturated solution per row")
    p.add_argument("--solid", metavar="NAME", help="fit the ln K coefficients of this solid")
    p.add_argument("--terms", default="a0,a3,a4", metavar="a0,a3,a4",
                   help="coefficients of ln K(T) to fit with --solid (default a0,a3,a4)")
    p.add_argument("--param", action="append", metavar="SPEC", help="a parameter to fit, e.g. theta:Na:K (repeat)")
    p.add_argument("--residual", choices=("ln_k", "ln_m"), default="ln_k",
                   help="residual of --param fits: ln IAP - ln K (default) or its ln-molality equivalent")
    c.add_output_options(p, tables=("parameters", "residuals", "covariance"))
    p.set_defaults(func=_fit)
