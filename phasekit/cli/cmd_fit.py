"""Subcommand ``fit``: regression of ln K or Pitzer parameters on solubility measurements."""

from __future__ import annotations

import os
from pathlib import Path
from typing import TYPE_CHECKING

from phasekit.cli import common as c
from phasekit.errors import InputError

if TYPE_CHECKING:
    import pandas as pd

_NUMERIC = ("temp_c", "molality", "mass_percent", "grams_per_100g_water")


def _read_data(path: str) -> pd.DataFrame:
    import pandas as pd

    from phasekit.batch.source import read_source
    from phasekit.chemistry.species import is_species
    from phasekit.chemistry.tables import PROBLEM_COLUMN

    df = read_source(path)
    out = df.drop(columns=[PROBLEM_COLUMN], errors="ignore")
    if PROBLEM_COLUMN in df.columns:
        bad = [(i, p) for i, p in enumerate(df[PROBLEM_COLUMN]) if p]
        if bad:
            raise InputError(f"--data row {bad[0][0] + 1}", path, f"rows that can be read ({bad[0][1]})")
    for col in out.columns:
        if col not in _NUMERIC and not is_species(col):
            continue  # text columns (salt, solids, source ...) are passed as they are
        conv = pd.to_numeric(out[col], errors="coerce")
        blank = out[col].isna() | (out[col].astype(str).str.strip() == "")
        bad = conv.isna() & ~blank
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


def _check_save_path(args) -> Path | None:
    """The --save-overlay file, refused before any work if it cannot be written or is an input."""
    if not args.save_overlay:
        if args.overlay_name or args.overlay_source:
            raise InputError("--overlay-name", args.overlay_name or args.overlay_source,
                             "--save-overlay FILE.toml with it (the file the fit is saved to)")
        return None
    target = Path(args.save_overlay)
    if target.suffix.lower() != ".toml":
        raise InputError("--save-overlay", args.save_overlay, "a file name ending in .toml")
    if not target.resolve().parent.is_dir():
        raise InputError("--save-overlay", args.save_overlay,
                         f"a file in an existing directory ({target.resolve().parent} does not exist)")
    inputs = [Path(f).resolve() for f in (args.overlay or [])] + [Path(args.data).resolve()]
    if target.resolve() in inputs:
        raise InputError("--save-overlay", args.save_overlay, "a file other than the inputs of the fit")
    return target


def _savable(specs) -> None:
    """Only what an overlay file can hold: theta, psi and binary parameters with a coefficient a0..a4."""
    from phasekit.overlay import PARAM_KINDS

    for spec in specs:
        if spec[0] not in PARAM_KINDS or spec[-1] == "cp":
            raise InputError("--save-overlay", ":".join(spec), "a fit of theta, psi, beta0, beta1, beta2 or cphi "
                             "coefficients a0..a4 (ln K terms are saved from a --solid fit)")


def save_overlay(res, args, target: Path, data: pd.DataFrame) -> str:
    """Write the fit as an overlay (checked by applying it before it replaces ``target``); its name."""
    import pandas as pd

    from phasekit.model import default_model
    from phasekit.overlay import overlay_from_fit

    name = (args.overlay_name or target.stem).strip()
    source = args.overlay_source or f"fitted in this project to {Path(args.data).name}"
    temps = pd.to_numeric(data.get("temp_c"), errors="coerce") if "temp_c" in data else pd.Series(dtype=float)
    t_range = (float(temps.min()), float(temps.max())) if temps.notna().any() else None
    tmp = target.with_name(f".{target.name}.part")
    try:
        overlay_from_fit(res, tmp, name, source, solid=args.solid or None, t_range=t_range)
        default_model().with_overlays(tmp)  # what is saved must apply
        os.replace(tmp, target)
    except OSError as exc:
        raise InputError("--save-overlay", args.save_overlay, f"a file that can be written ({exc.strerror})") from None
    finally:
        tmp.unlink(missing_ok=True)
    return name


def _fit(args) -> c.Report:
    import pandas as pd

    from phasekit import fitting

    target = _check_save_path(args)
    data = _read_data(args.data)
    if bool(args.solid) == bool(args.param):
        raise InputError("--solid", args.solid, "either --solid NAME (fit its ln K) or --param SPEC ... (not both)")
    model = c.model_of(args)
    if args.solid:
        terms = tuple(t.strip() for t in args.terms.split(",") if t.strip())
        res = fitting.fit_ln_k(args.solid, data, terms=terms, model=model)
        head = {"fitted": f"ln K of {args.solid}", "terms": list(terms)}
    else:
        specs = [parse_param(p) for p in args.param]
        if target is not None:
            _savable(specs)
        res = fitting.fit_parameters(specs, data, model=model, residual=args.residual)
        head = {"fitted": "parameters", "residual": args.residual}
    head.update({"rms": res.rms, "n_points": res.n_points, "dof": res.dof})
    if target is not None:
        head["overlay_saved"] = str(target)
        head["overlay_name"] = save_overlay(res, args, target, data)
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
                      "--format json",
                      "phasekit fit --solid sylvite --data works_kcl.csv --save-overlay works_kcl.toml "
                      "--overlay-name 'works KCl 2026'"])
    p.add_argument("--data", required=True, metavar="FILE", help="measurements, one saturated solution per row")
    p.add_argument("--solid", metavar="NAME", help="fit the ln K coefficients of this solid")
    p.add_argument("--terms", default="a0,a3,a4", metavar="a0,a3,a4",
                   help="coefficients of ln K(T) to fit with --solid (default a0,a3,a4)")
    p.add_argument("--param", action="append", metavar="SPEC", help="a parameter to fit, e.g. theta:Na:K (repeat)")
    p.add_argument("--residual", choices=("ln_k", "ln_m"), default="ln_k",
                   help="residual of --param fits: ln IAP - ln K (default) or its ln-molality equivalent")
    c.add_overlay_option(p)
    g = p.add_argument_group("saving the fit")
    g.add_argument("--save-overlay", metavar="FILE.toml", help="save the fitted values as a database overlay, "
                   "to use with --overlay in any command")
    g.add_argument("--overlay-name", metavar="NAME", help="name of the saved overlay (default: the file name "
                   "without .toml); it names the database on every result")
    g.add_argument("--overlay-source", metavar="TEXT", help="source written with the values (default: 'fitted in "
                   "this project to DATA-FILE')")
    c.add_output_options(p, tables=("parameters", "residuals", "covariance"))
    p.set_defaults(func=_fit)
