"""Subcommand ``leach``: how fast the salts of an ore dissolve (film theory, phasekit.kinetics)."""

from __future__ import annotations

from phasekit.cli import common as c
from phasekit.errors import InputError


def _fractions(text: str) -> dict:
    pairs = c.parse_pairs(text, "--ore", "sylvite=0.3,halite=0.65")
    from phasekit.validate import number

    return {k: number(f"--ore {k}", v, "a mass fraction from 0 to 1 (a number)", text=True) for k, v in pairs.items()}


def _leach(args) -> c.Report:
    from phasekit import kinetics as kin
    from phasekit.kinetics.saturation import EquilibriumSaturation

    brine = None
    if args.brine or args.salts or args.input:
        (brine,) = c.read_brines(args)
    if args.d50 is None:
        raise InputError("--d50", None, "the median grain size in µm, e.g. --d50 400")
    sizes = kin.lognormal(args.d50, args.gsd)
    res = kin.leach(args.ore_kg, _fractions(args.ore), sizes, brine, residence_s=args.time, water_kg=args.water_kg,
                    temp_c=args.temp, power_w_kg=args.power, saturation=EquilibriumSaturation(c.model_of(args)))
    scalars = {"temp_c": args.temp, "ore_kg": args.ore_kg, "water_kg": args.water_kg, "d50_um": args.d50,
               "power_w_kg": args.power, "residence_s": args.time}
    for solid in res.summary.index:
        t98 = res.time_to(0.98, solid=solid)
        scalars[f"time_to_98_percent_{solid}_s"] = t98
    rep = c.Report(scalars=scalars, tables={"summary": res.summary, "history": res.history}, main="history",
                   warnings=list(res.warnings), show=["summary"])

    def draw(path):
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt

        fig, ax = plt.subplots(figsize=(6.4, 4.2))
        h = res.history
        for col in [x for x in h.columns if x.endswith("_dissolved_fraction") and not x.startswith("total")]:
            ax.plot(h["time_s"], 100 * h[col], label=col.replace("_dissolved_fraction", ""))
        ax.set_xlabel("time, s")
        ax.set_ylabel("dissolved, % of the charge")
        ax.set_title(f"Leaching at {args.temp:g} °C, d50 {args.d50:g} µm, {args.power:g} W/kg")
        ax.legend()
        fig.tight_layout()
        fig.savefig(path)
        plt.close(fig)

    rep.draw = draw
    return rep


def register(sub) -> None:
    p = c.add_parser(sub, "leach", "dissolution rate of an ore in a stirred tank",
                     "Dissolution of the salts of an ore (e.g. sylvinite) in water or a brine in a stirred batch "
                     "tank: film theory with the driving force to saturation from the equilibrium model, a "
                     "log-normal grain size distribution, and the time to dissolve 98 % of each salt.",
                     ["phasekit leach --ore sylvite=0.3,halite=0.65 --ore-kg 0.4 --water-kg 1 --d50 400 "
                      "--temp 90 --power 0.5 --time 900",
                      "phasekit leach --ore sylvite=0.35,halite=0.6 --ore-kg 0.3 --water-kg 1 --d50 800 "
                      "--brine Na=5.6,Cl=5.6 --units mol/kg --temp 60 --time 600 --plot leach.png"])
    p.add_argument("--ore", required=True, metavar="SOLID=FRACTION,...", help="mass fractions of the ore's solids")
    p.add_argument("--ore-kg", type=float, required=True, help="mass of ore, kg")
    p.add_argument("--water-kg", type=float, required=True, help="water of the leach brine, kg")
    p.add_argument("--d50", type=float, metavar="µm", help="median grain size, µm")
    p.add_argument("--gsd", type=float, default=1.6, help="geometric standard deviation of the sizes (default 1.6)")
    p.add_argument("--power", type=float, default=0.5, metavar="W/kg", help="stirring power per mass (default 0.5)")
    p.add_argument("--time", type=float, required=True, metavar="s", help="residence time, s")
    c.add_temp(p)
    c.add_brine_options(p)
    c.add_overlay_option(p)
    c.add_output_options(p, plot=True, tables=("summary", "history"))
    p.set_defaults(func=_leach)
