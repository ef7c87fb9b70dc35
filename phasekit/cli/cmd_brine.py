"""Subcommands ``saturation`` and ``equilibrate`` (one brine at one temperature)."""

from __future__ import annotations

from typing import TYPE_CHECKING

from phasekit.cli import common as c

if TYPE_CHECKING:
    import pandas as pd


def _head(brine, temp_c) -> dict:
    return {"temp_c": temp_c, "charge_balance_percent": brine.charge_balance(), "ionic_strength": brine.ionic_strength}


def _saturation(args) -> c.Report:
    (brine,) = c.read_brines(args)
    excl = [x.strip() for x in str(args.exclude or "").split(",") if x.strip()]
    table = c.model_of(args).saturation(brine, args.temp, exclude=excl)
    order = {"supersaturated": 0, "saturated": 1, "undersaturated": 2}
    if args.sort:
        table = table.sort_values("saturation_index", ascending=False)
    scalars = _head(brine, args.temp)
    scalars["supersaturated"] = [s for s, st in table["state"].items() if order[st] == 0]
    scalars["saturated"] = [s for s, st in table["state"].items() if order[st] == 1]
    scalars["exclude"] = list(table.attrs.get("exclude", []))
    return c.Report(scalars=scalars, tables={"saturation": table, "brine": c.brine_table(brine)}, main="saturation",
                    warnings=list(table.attrs.get("warnings", [])))


def _solids_table(model, res) -> pd.DataFrame:
    import pandas as pd

    grams = res.solids_mass_g(model)
    return pd.DataFrame({"mol_per_kg_water": [res.solids[s] for s in res.solids],
                         "g_per_kg_water": [grams[s] for s in res.solids]},
                        index=pd.Index(list(res.solids), name="solid"))


def equilibrium_report(model, res, scalars: dict, extra: dict | None = None) -> c.Report:
    """Report of an EquilibriumResult: solids, liquid and saturation tables."""
    scalars = dict(scalars)
    scalars["solids"] = list(res.solids)
    scalars["liquid_water_kg"] = res.water_kg
    scalars["iterations"] = res.converged.get("iterations")
    tables = dict(extra or {})
    tables.update({"solids": _solids_table(model, res), "liquid": c.brine_table(res.liquid),
                   "saturation": res.saturation})
    return c.Report(scalars=scalars, tables=tables, main="solids", warnings=list(res.warnings))


def _equilibrate(args) -> c.Report:
    (brine,) = c.read_brines(args)
    model = c.model_of(args)
    excl = [x.strip() for x in str(args.exclude or "").split(",") if x.strip()]
    res = model.equilibrate(brine, args.temp, exclude=excl, allow_beyond_validity=args.beyond_validity)
    head = _head(brine, args.temp)
    head.update({"exclude": list(res.exclude), "beyond_validity": bool(args.beyond_validity)})
    return equilibrium_report(model, res, head)


def register(sub) -> None:
    p = c.add_parser(sub, "saturation", "saturation index and state of every solid",
                     "Saturation index (log10 IAP/K) and state of every solid in one brine, with the amount of each "
                     "that could still dissolve (positive) or must crystallize (negative) to reach saturation.",
                     ["phasekit saturation --brine Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710 --units mg/kg "
                      "--temp 25",
                      "phasekit saturation --input ponds.csv --row 'Heron-2' --units g/L --format json"])
    c.add_brine_options(p)
    c.add_temp(p)
    c.add_overlay_option(p)
    c.add_path_options(p, beyond=False)
    p.add_argument("--sort", action="store_true", help="sort by saturation index, highest first")
    c.add_output_options(p, tables=("saturation", "brine"))
    p.set_defaults(func=_saturation)

    p = c.add_parser(sub, "equilibrate", "stable assemblage of a brine",
                     "Solid–liquid equilibrium of one brine: the solids that form (mol and g per kg of the brine's "
                     "water), the liquid left and its saturation states.",
                     ["phasekit equilibrate --brine Na=6.5,Cl=6.5 --units mol/kg --temp 25",
                      "phasekit equilibrate --salts NaCl=22,KCl=12 --units mass% --temp 20 --format json"])
    c.add_brine_options(p)
    c.add_temp(p)
    c.add_overlay_option(p)
    c.add_path_options(p)
    c.add_output_options(p, tables=("solids", "liquid", "saturation"))
    p.set_defaults(func=_equilibrate)
