"""Subcommands ``solubility`` and ``polytherm`` (single salts in water)."""

from __future__ import annotations

from phasekit.cli import common as c


def _solubility(args) -> c.Report:
    import phasekit as pk

    r = pk.solubility(args.salt, args.temp, model=c.model_of(args))
    scalars = {"salt": r.salt, "solid": r.solid, "temp_c": r.temp_c, "molality": r.molality,
               "grams_per_100g_water": r.grams_per_100g_water, "mass_percent": r.mass_percent,
               "water_activity": r.water_activity}
    return c.Report(scalars=scalars, tables={"candidates": r.candidates}, main="candidates", warnings=list(r.warnings))


def _polytherm(args) -> c.Report:
    import phasekit as pk

    if len(args.salt) > 1:
        from phasekit.cli.cmd_diagrams import system_polytherm

        return system_polytherm(args)
    salt = args.salt[0]
    curve, transitions = pk.polytherm(salt, args.t_from, args.t_to, args.step, model=c.model_of(args))
    rep = c.Report(scalars={"salt": salt, "t_min_c": args.t_from, "t_max_c": args.t_to, "step_c": args.step},
                   tables={"curve": curve, "transitions": transitions}, main="curve",
                   warnings=list(curve.attrs.get("warnings", [])))

    def draw(path):
        from phasekit.cli.plots import polytherm_figure

        polytherm_figure(curve, transitions, salt, path)

    rep.draw = draw
    return rep


def register(sub) -> None:
    p = c.add_parser(sub, "solubility", "solubility of a salt in water",
                     "Solubility of a salt in pure water, with its stable solid (a salt formula such as KCl, or "
                     "the name of one of its solids such as mirabilite).",
                     ["phasekit solubility KCl --temp 40 --format json",
                      "phasekit solubility Na2SO4 --temp 20"])
    p.add_argument("salt", help="salt formula (KCl, Na2SO4, MgSO4) or a solid (thenardite)")
    c.add_temp(p)
    c.add_overlay_option(p)
    c.add_output_options(p)
    p.set_defaults(func=_solubility)

    p = c.add_parser(sub, "polytherm", "solubility of a salt against temperature",
                     "Solubility of a salt from --from to --to °C with its stable solids and the transition "
                     "temperatures between them (found by root-finding, not read off the grid).",
                     ["phasekit polytherm Na2SO4 --from 0 --to 80 --step 2 --plot na2so4.png",
                      "phasekit polytherm NaCl KCl --from 0 --to 100 --step 10 --plot nacl-kcl.svg",
                      "phasekit polytherm MgSO4 --format csv --output mgso4.csv"])
    p.add_argument("salt", nargs="+", help="a salt formula, or two with a common ion for the polytherm of their "
                   "system (e.g. NaCl KCl)")
    p.add_argument("--from", dest="t_from", type=float, default=0.0, metavar="°C", help="lowest temperature "
                   "(default 0)")
    p.add_argument("--to", dest="t_to", type=float, default=100.0, metavar="°C", help="highest temperature "
                   "(default 100)")
    p.add_argument("--step", type=float, default=1.0, metavar="°C", help="grid step (default 1)")
    c.add_overlay_option(p)
    c.add_output_options(p, plot=True, tables=("curve", "transitions", "invariant_points", "curves",
                                               "binary_points"))
    p.set_defaults(func=_polytherm)
