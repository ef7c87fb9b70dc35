"""Subcommand ``isotherm`` and the system polytherm (phase diagrams of :mod:`phasekit.diagrams`).

The diagrams and their report figures come from :mod:`phasekit.diagrams` and
:mod:`phasekit.plotting.publication`; where an installation lacks them the subcommands say so
(exit code 4) instead of failing.
"""

from __future__ import annotations

import importlib

from phasekit.cli import common as c

SYSTEMS = ("ternary", "reciprocal", "reciprocal-nitrate", "seawater")


def diagram_function(name: str):
    """``phasekit.diagrams.<name>``; :class:`~phasekit.cli.common.Unavailable` if it does not exist."""
    try:
        mod = importlib.import_module("phasekit.diagrams")
    except ImportError as exc:
        raise c.Unavailable(f"{name}: phase diagrams are not available in this installation ({exc})") from None
    fn = getattr(mod, name, None)
    if not callable(fn):
        raise c.Unavailable(f"{name}: phase diagrams are not available in this installation "
                            f"(phasekit.diagrams provides no {name!r})")
    return fn


def figure_function(name: str):
    """``phasekit.plotting.publication.<name>``, or :class:`Unavailable`."""
    try:
        mod = importlib.import_module("phasekit.plotting.publication")
    except ImportError as exc:
        raise c.Unavailable(f"--plot: report figures are not available in this installation ({exc})") from None
    fn = getattr(mod, name, None)
    if not callable(fn):
        raise c.Unavailable(f"--plot: phasekit.plotting.publication provides no {name!r}")
    return fn


def diagram_report(res, scalars: dict, main: str, show: list) -> c.Report:
    """Report of a diagram result (its tables by name, its warnings)."""
    import pandas as pd

    tables = {name: df for name, df in res.tables().items() if isinstance(df, pd.DataFrame)}
    return c.Report(scalars=scalars, tables=tables, main=main if main in tables else next(iter(tables), None),
                    warnings=list(getattr(res, "warnings", []) or []), show=[s for s in show if s in tables])


def _split(text: str) -> list:
    return [s.strip() for s in (text or "").split(",") if s.strip()]


def _isotherm(args) -> c.Report:
    exclude = _split(args.exclude)
    model = c.model_of(args)
    if args.system == "ternary":
        if len(args.salts) != 2:
            from phasekit.errors import InputError

            raise InputError("salts", args.salts, "two salts with one ion in common, e.g. NaCl KCl "
                                                  "(or --system reciprocal|reciprocal-nitrate|seawater without salts)")
        res = diagram_function("isotherm")(list(args.salts), temp_c=args.temp, metastable=args.metastable,
                                           exclude=exclude, model=model)
        rep = diagram_report(res, {"salts": list(args.salts), "temp_c": args.temp,
                                   "stable_sequence": res.stable_sequence},
                             "invariant_points", ["invariant_points"])
        figure = "save_rectangular" if args.diagram == "rectangular" else "save_ternary"
    else:
        if args.salts:
            from phasekit.errors import InputError

            raise InputError("salts", args.salts, f"no salts with --system {args.system} (its ions are fixed)")
        if args.system == "seawater":
            res = diagram_function("seawater_isotherm")(args.temp, exclude=exclude, model=model)
        else:
            res = diagram_function("reciprocal_isotherm")(args.temp, exclude=exclude, model=model,
                                                          anion="NO3" if args.system == "reciprocal-nitrate" else "SO4")
        rep = diagram_report(res, {"system": args.system, "temp_c": args.temp}, "invariant_points",
                             ["invariant_points"])
        figure = "save_jaenecke"

    def draw(path):
        figure_function(figure)(res, path, model=model)

    rep.draw = draw
    return rep


def system_polytherm(args) -> c.Report:
    """Polytherm of a salt–salt–water system (``phasekit polytherm NaCl KCl ...``)."""
    model = c.model_of(args)
    res = diagram_function("ternary_polytherm")(list(args.salt), t_min_c=args.t_from, t_max_c=args.t_to,
                                                step_c=args.step, model=model)
    rep = diagram_report(res, {"salts": list(args.salt), "t_min_c": args.t_from, "t_max_c": args.t_to,
                               "step_c": args.step}, "transitions", ["transitions", "binary_points"])

    def draw(path):
        figure_function("save_polytherm")(res, path, model=model)

    rep.draw = draw
    return rep


def register(sub) -> None:
    p = c.add_parser(sub, "isotherm", "isotherm of a salt system (phase diagram)",
                     "Saturation curves, crystallization fields and invariant points of a salt system in water at "
                     "one temperature: a salt–salt–water system with a common ion (two salts), or the Jänecke "
                     "projections of the reciprocal pairs Na, K // Cl, SO4 and Na, K // Cl, NO3 and of the oceanic "
                     "salts at halite saturation (--system).",
                     ["phasekit isotherm NaCl KCl --temp 25 --plot nacl-kcl-25.png",
                      "phasekit isotherm KCl MgCl2 --temp 25 --format csv --table curves -o kcl-mgcl2.csv",
                      "phasekit isotherm --system seawater --temp 25 --plot oceanic-25.pdf",
                      "phasekit isotherm --system reciprocal-nitrate --temp 75 --format json"])
    p.add_argument("salts", nargs="*", help="two salt formulas with a common ion (e.g. NaCl KCl)")
    c.add_temp(p)
    p.add_argument("--system", choices=SYSTEMS, default="ternary",
                   help="ternary (two salts, default), reciprocal (Na, K // Cl, SO4), reciprocal-nitrate "
                   "(Na, K // Cl, NO3) or seawater (oceanic salts at halite saturation)")
    p.add_argument("--metastable", action="store_true", help="also trace metastable extensions (ternary)")
    p.add_argument("--exclude", default="", metavar="SOLID,...", help="solids left out (metastable diagrams)")
    p.add_argument("--diagram", choices=("triangle", "rectangular"), default="triangle",
                   help="figure of a ternary isotherm: triangle (mass %%, default) or rectangular (g per 100 g water)")
    c.add_overlay_option(p)
    c.add_output_options(p, plot=True, tables=("invariant_points", "curves", "fields", "tie_lines", "solid_points",
                                               "side_points"))
    p.set_defaults(func=_isotherm)
