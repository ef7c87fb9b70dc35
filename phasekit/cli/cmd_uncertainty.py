"""Subcommand ``onset``: the concentration factor at which a brine first saturates on evaporation,
with its Monte Carlo uncertainty (:mod:`phasekit.uncertainty`)."""

from __future__ import annotations

from phasekit.cli import common as c
from phasekit.errors import InputError


def parse_sd(text: str) -> tuple:
    """(spec, sd) from "psi:Cl:NO3:K=0.002" or "solid:sylvite:a0=0.01"."""
    spec_text, sep, value = str(text).partition("=")
    parts = tuple(p.strip() for p in spec_text.split(":") if p.strip())
    try:
        sd = float(value)
    except ValueError:
        sd = float("nan")
    if not sep or len(parts) < 2 or not sd >= 0:
        raise InputError("--sd", text, "SPEC=STANDARD_DEVIATION, e.g. psi:Cl:NO3:K=0.002, theta:Na:K=0.003 or "
                                       "solid:sylvite:a0=0.01 (a standard deviation >= 0)")
    return parts, sd


def _onset(args) -> c.Report:
    import pandas as pd

    from phasekit.uncertainty import monte_carlo, onset_concentration_factor, onset_predictor

    (brine,) = c.read_brines(args)
    model = c.model_of(args)
    cf = onset_concentration_factor(model, brine, args.temp, args.solid)
    scalars = {"temp_c": args.temp, "solid": args.solid or "first to saturate", "concentration_factor": cf}
    params = [parse_sd(t) for t in (args.sd or [])]
    if args.overlay_stderr:
        params += [(k, v) for k, v in getattr(model, "overlay_stderr", {}).items() if v > 0]
        if not getattr(model, "overlay_stderr", {}):
            raise InputError("--overlay-stderr", "no uncertainties", "--overlay files with stderr entries")
    tables = {}
    if params:
        if args.samples < 2:
            raise InputError("--samples", args.samples, "an integer >= 2")
        res = monte_carlo(onset_predictor(brine, args.temp, args.solid), params, n=args.samples, seed=args.seed,
                          model=model, scheduler=args.scheduler)
        scalars.update({"samples": args.samples, "mean": res.mean, "std": res.std,
                        "p2_5": res.percentiles[2.5], "p50": res.percentiles[50], "p97_5": res.percentiles[97.5],
                        "failed_samples": res.n_failed})
        tables["samples"] = res.samples
        tables["parameters"] = pd.DataFrame({"parameter": [":".join(map(str, s)) for s, _ in params],
                                             "standard_deviation": [sd for _, sd in params]})
    return c.Report(scalars=scalars, tables=tables, main="samples" if tables else None,
                    show=["parameters"] if tables else [])


def register(sub) -> None:
    p = c.add_parser(sub, "onset", "concentration factor of first saturation, with its uncertainty",
                     "The concentration factor (initial water / water left) at which the brine first saturates "
                     "with a solid on isothermal evaporation (or with --solid), and, given parameter standard "
                     "deviations (--sd, repeat; or --overlay-stderr: those stored in the --overlay files), its "
                     "Monte Carlo distribution (mean, standard deviation, 2.5/50/97.5 percentiles); --scheduler "
                     "runs the samples on a Dask cluster.",
                     ["phasekit onset --salts NaNO3=5.2,KCl=4.0 --units mol/kg --temp 25 --solid niter "
                      "--sd psi:Cl:NO3:K=0.002 --sd theta:Cl:NO3=0.005 --samples 200",
                      "phasekit onset --brine Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710 --units mg/kg "
                      "--solid halite --overlay lab_fit.toml --overlay-stderr"])
    c.add_brine_options(p)
    c.add_temp(p)
    p.add_argument("--solid", metavar="SOLID", help="the solid whose onset is wanted (default: the first)")
    p.add_argument("--sd", action="append", metavar="SPEC=SD",
                   help="a parameter and its standard deviation, e.g. psi:Cl:NO3:K=0.002 or solid:sylvite:a0=0.01")
    p.add_argument("--overlay-stderr", action="store_true",
                   help="also sample the uncertainties stored in the --overlay files (their stderr entries)")
    p.add_argument("--samples", type=int, default=200, metavar="N", help="Monte Carlo samples (default 200)")
    p.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    p.add_argument("--scheduler", metavar="ADDRESS", help="run the samples on this Dask scheduler")
    c.add_overlay_option(p)
    c.add_output_options(p, tables=("samples", "parameters"))
    p.set_defaults(func=_onset)
