"""Subcommands ``evaporate``, ``cool``, ``mix``, ``ponds`` and ``convert`` (process paths)."""

from __future__ import annotations

from phasekit.cli import common as c
from phasekit.errors import InputError

PATH_TABLES = ("steps", "events", "summary", "precipitated", "mass_balance", "grades")


def _excl(args) -> list:
    return [x.strip() for x in str(getattr(args, "exclude", "") or "").split(",") if x.strip()]


def _partial(rep: c.Report, complete: bool, reason: str) -> c.Report:
    if not complete:
        rep.exit_code = c.EXIT_PARTIAL
        rep.stop_note = (f"stopped before its end ({reason}, see the warning above); the rows computed up to there "
                         "are written")
    return rep


def _path_report(res, scalars: dict, x: str, title: str) -> c.Report:
    import pandas as pd

    first = res.first_solid
    scalars = dict(scalars)
    scalars.update({"mode": res.mode, "complete": res.complete, "stop_reason": res.stop_reason,
                    "end_point": res.end_point, "exclude": list(res.exclude),
                    "charge_balance": res.charge_balance_note or "neutral as analysed",
                    "beyond_validity": res.allow_beyond_validity,
                    "first_solid": first["solid"] if first else None,
                    "first_solid_concentration_factor": first["concentration_factor"] if first else None,
                    "first_solid_temp_c": first["temp_c"] if first else None})
    prec = res.precipitated.add_prefix("mol_")
    steps = pd.concat([res.steps, prec], axis=1)
    rep = c.Report(scalars=scalars, tables={"steps": steps, "events": res.events, "summary": res.summary(),
                                            "precipitated": res.precipitated, "mass_balance": res.mass_balance,
                                            "grades": res.grades},
                   main="steps", warnings=list(res.warnings), show=["events", "summary", "mass_balance"])

    def draw(path):
        from phasekit.cli.plots import path_figure

        path_figure(res, x, path, title)

    rep.draw = draw
    return _partial(rep, res.complete, res.stop_reason)


def _evaporate(args) -> c.Report:
    import phasekit as pk

    (brine,) = c.read_brines(args)
    res = pk.evaporate(brine, temp_c=args.temp, mode=args.mode, water_removed=args.water_removed,
                       concentration_factor=args.cf, model=c.model_of(args), exclude=_excl(args),
                       allow_beyond_validity=args.beyond_validity)
    return _path_report(res, {"temp_c": args.temp}, "concentration_factor",
                        f"Isothermal evaporation at {args.temp:g} °C ({args.mode})")


def _cool(args) -> c.Report:
    import phasekit as pk

    (brine,) = c.read_brines(args)
    res = pk.cool(brine, start_c=args.start, end_c=args.end, mode=args.mode, model=c.model_of(args),
                  exclude=_excl(args), allow_beyond_validity=args.beyond_validity)
    verb = "Cooling" if args.end < args.start else "Heating"
    return _path_report(res, {"start_c": args.start, "end_c": args.end}, "temp_c",
                        f"{verb} from {args.start:g} to {args.end:g} °C ({args.mode})")


def _mix(args) -> c.Report:
    import phasekit as pk
    from phasekit.cli.cmd_brine import equilibrium_report

    a, b = c.read_brines(args, count=2)
    model = c.model_of(args)
    res = pk.mix(a, b, ratio=args.ratio, temp_c=args.temp, model=model)
    return equilibrium_report(model, res, {"temp_c": args.temp, "mass_fraction_a": args.ratio},
                              extra={"mixture": c.brine_table(res.mixture)})


# ------------------------------------------------------------------------------ ponds
_POND_KEYS = {"name": "name", "temp": "temp_c", "temp_c": "temp_c", "water_removed": "water_removed",
              "cf": "concentration_factor", "concentration_factor": "concentration_factor",
              "until": "until_saturated", "until_saturated": "until_saturated", "mode": "mode",
              "area": "area_m2", "area_m2": "area_m2", "evap": "net_evaporation_mm_per_day",
              "net_evaporation_mm_per_day": "net_evaporation_mm_per_day", "seepage": "seepage_fraction",
              "seepage_fraction": "seepage_fraction", "rain": "rain_mm_per_year", "rain_mm_per_year": "rain_mm_per_year",
              "depth": "depth_m", "depth_m": "depth_m"}
_POND_NUMBERS = ("temp_c", "water_removed", "concentration_factor", "area_m2", "net_evaporation_mm_per_day",
                 "seepage_fraction", "rain_mm_per_year", "depth_m")
_POND_EXAMPLE = "name=Heron 1;temp=30;cf=3.5"


def _pond_value(key: str, value, field: str):
    if key in _POND_NUMBERS:
        try:
            return float(str(value).replace(",", "")) if isinstance(value, str) else float(value)
        except (TypeError, ValueError):
            raise InputError(field, value, "a number") from None
    if key == "until_saturated":
        names = [s.strip() for s in str(value).split("+") if s.strip()]
        return names[0] if len(names) == 1 else names
    return str(value).strip()


def parse_pond(text: str, i: int) -> dict:
    """A pond mapping from "name=...;temp=...;cf=...|water_removed=...|until=solid[;mode=...]"."""
    field = f"--pond {i + 1}"
    out: dict = {}
    for item in str(text).split(";"):
        if not item.strip():
            continue
        key, eq, value = item.partition("=")
        key = key.strip().lower()
        if not eq or key not in _POND_KEYS:
            raise InputError(field, item.strip(), f"KEY=VALUE items separated by ';' with keys name, temp, and one of "
                                                  f"cf, water_removed, until (optionally mode, area, evap, seepage, "
                                                  f"rain, depth), e.g. '{_POND_EXAMPLE}'")
        out[_POND_KEYS[key]] = _pond_value(_POND_KEYS[key], value.strip(), f"{field} {key}")
    for need in ("name", "temp_c"):
        if need not in out:
            raise InputError(field, text, f"a {need.replace('_c', '')} for the pond, e.g. '{_POND_EXAMPLE}'")
    return out


def read_ponds_file(path: str) -> list[dict]:
    """Ponds from a CSV: columns name, temp_c, and one of water_removed, concentration_factor,
    until_saturated (solids joined by '+'), optionally mode."""
    from phasekit.batch.source import read_source
    from phasekit.chemistry.tables import PROBLEM_COLUMN

    df = read_source(path)
    if PROBLEM_COLUMN in df.columns:
        bad = next((i, p) for i, p in enumerate(df[PROBLEM_COLUMN]) if p)
        raise InputError(f"--ponds row {bad[0] + 1}", path, f"rows that can be read ({bad[1]})")
    unknown = [col for col in df.columns if col not in _POND_KEYS]
    if unknown:
        raise InputError("--ponds column", unknown[0], "name, temp_c, water_removed, concentration_factor, "
                                                      "until_saturated, mode, area_m2, net_evaporation_mm_per_day, "
                                                      "seepage_fraction, rain_mm_per_year, depth_m")
    ponds = []
    for i, row in enumerate(df.to_dict("records")):
        p = {}
        for k, v in row.items():
            if v is None or (isinstance(v, float) and v != v) or (isinstance(v, str) and not v.strip()):
                continue
            p[_POND_KEYS[k]] = _pond_value(_POND_KEYS[k], v, f"--ponds row {i + 1} {k}")
        for need in ("name", "temp_c"):
            if need not in p:
                raise InputError(f"--ponds row {i + 1}", need, "a name and a temp_c for every pond")
        ponds.append(p)
    return ponds


def _ponds(args) -> c.Report:
    import phasekit as pk

    (brine,) = c.read_brines(args)
    if bool(args.pond) == bool(args.ponds):
        raise InputError("--pond", None, "the ponds: --pond '...' once per pond, or --ponds FILE.csv (not both)")
    ponds = [parse_pond(t, i) for i, t in enumerate(args.pond)] if args.pond else read_ponds_file(args.ponds)
    res = pk.pond_train(brine, [pk.Pond(**p) for p in ponds], model=c.model_of(args), exclude=_excl(args),
                        allow_beyond_validity=args.beyond_validity, intake_m3_per_h=args.intake_m3_per_h,
                        intake_t_per_year=args.intake_t_per_year, intake_density_kg_per_l=args.intake_density)
    scalars = {"ponds": [p["name"] for p in ponds], "complete": res.complete, "stop_reason": res.stop_reason,
               "exclude": list(res.exclude), "beyond_validity": bool(args.beyond_validity),
               "outflow_charge_balance_percent": res.outflow.charge_balance(),
               "charge_balance": res.charge_balance_note or "neutral as analysed",
               "intake_m3_per_h": res.intake["m3_per_h"], "intake_t_per_year": res.intake["t_per_year"],
               "intake_density_kg_per_l": res.intake["density_kg_per_l"],
               "intake_density_from": res.intake["density_from"]}
    rep = c.Report(scalars=scalars, tables={"ponds": res.ponds, "harvest": res.harvest,
                                            "outflow": c.brine_table(res.outflow), "design": res.design,
                                            "mass_balance": res.mass_balance, "grades": res.grades}, main="ponds",
                   warnings=list(res.warnings), show=["ponds", "design", "mass_balance"])
    return _partial(rep, res.complete, res.stop_reason)


def _dilution(text: str):
    if str(text).strip().lower() == "auto":
        return "auto"
    try:
        return float(text)
    except ValueError:
        raise InputError("--dilution", text, "'auto' or kg of water per kg of feed water (>= 0)") from None


def _convert(args) -> c.Report:
    import pandas as pd

    import phasekit as pk

    (feed,) = c.read_brines(args)
    res = pk.hot_cold_cycle(feed, hot_c=args.hot, cold_c=args.cold, hot_solid=args.hot_solid,
                            cold_solid=args.cold_solid, dilution=_dilution(args.dilution), model=c.model_of(args),
                            exclude=_excl(args), allow_beyond_validity=args.beyond_validity)
    st = res.stages.set_index("stage")
    scalars = {"hot_c": args.hot, "cold_c": args.cold,
               "water_evaporated_kg": float(st.loc["hot", "water_kg"]),
               "water_added_kg": float(-st.loc["dilution", "water_kg"]),
               "hot_solid": st.loc["hot", "main_solid"], "hot_purity": float(st.loc["hot", "purity"]),
               "cold_solid": st.loc["cold", "main_solid"], "cold_purity": float(st.loc["cold", "purity"]),
               "exclude": list(res.exclude), "beyond_validity": bool(args.beyond_validity),
               **{f"yield_{ion}": v for ion, v in res.yields.items()}}
    crops = pd.DataFrame([{"stage": stage, "solid": s, "grams": g}
                          for stage, crop in (("hot", res.hot_solids), ("cold", res.cold_solids))
                          for s, g in crop.items()])
    liquors = pd.DataFrame([{"liquor": "hot (before dilution)", "water_kg": res.hot_water_kg, **res.hot_liquor},
                            {"liquor": "cold (recycle)", "water_kg": res.recycle_water_kg, **res.recycle}])
    return c.Report(scalars=scalars, tables={"stages": res.stages, "crops": crops, "liquors": liquors,
                                             "mass_balance": res.mass_balance, "grades": res.grades},
                    main="stages", warnings=list(res.warnings), show=["stages", "crops", "liquors", "mass_balance"])


def register(sub) -> None:
    brine_ex = "--brine Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710 --units mg/kg"
    p = c.add_parser(sub, "evaporate", "isothermal evaporation path",
                     "Isothermal evaporation of a brine: the solids in the order they form, at which concentration "
                     "factor, how much of each, and the brine left. Concentration factor = initial water / water now.",
                     [f"phasekit evaporate {brine_ex} --temp 25 --plot evaporation.png",
                      "phasekit evaporate --input ponds.csv --row Heron-2 --units g/L --temp 35 --mode equilibrium "
                      "--format csv --table steps -o steps.csv"])
    c.add_brine_options(p)
    c.add_temp(p)
    p.add_argument("--mode", choices=("fractional", "equilibrium"), default="fractional",
                   help="fractional (solids harvested as they form, default) or equilibrium (they stay and react)")
    p.add_argument("--water-removed", type=float, default=1.0, metavar="FRACTION",
                   help="largest fraction of the initial water to evaporate (default 1: to the end point)")
    p.add_argument("--cf", type=float, metavar="CF", help="stop at this concentration factor")
    c.add_path_options(p)
    c.add_overlay_option(p)
    c.add_output_options(p, plot=True, tables=PATH_TABLES)
    p.set_defaults(func=_evaporate)

    p = c.add_parser(sub, "cool", "cooling (or heating) path at fixed water",
                     "Cooling of a brine from --start to --end °C (heating when --end is higher), with the solids "
                     "that form and the brine left.",
                     ["phasekit cool --salts NaCl=10,KCl=25 --units mass% --start 90 --end 20 --plot cooling.svg",
                      "phasekit cool --brine K=2.5,Na=3.0,Cl=5.5 --units mol/kg --start 80 --end 25 --format json"])
    c.add_brine_options(p)
    c.add_temp(p, None, "--start", "starting temperature, °C")
    c.add_temp(p, None, "--end", "final temperature, °C")
    p.add_argument("--mode", choices=("equilibrium", "fractional"), default="equilibrium",
                   help="equilibrium (solids stay, default) or fractional (harvested as they form)")
    c.add_path_options(p)
    c.add_overlay_option(p)
    c.add_output_options(p, plot=True, tables=PATH_TABLES)
    p.set_defaults(func=_cool)

    p = c.add_parser(sub, "mix", "mix two brines and equilibrate",
                     "Mix brine A and brine B (give --brine, --salts or --row twice, A first) in the mass ratio "
                     "--ratio (mass fraction of A) and equilibrate the mixture.",
                     ["phasekit mix --brine Mg=1.8,K=0.4,Cl=4.0 --brine Na=5.0,Cl=5.0 --units mol/kg --ratio 0.3 "
                      "--temp 25",
                      "phasekit mix --input ponds.csv --row Heron-4 --row Inflow --units g/L --ratio 0.5"])
    c.add_brine_options(p, many=True)
    c.add_temp(p)
    p.add_argument("--ratio", type=float, required=True, metavar="FRACTION",
                   help="mass fraction of brine A in the mixture, 0..1")
    c.add_overlay_option(p)
    c.add_output_options(p, tables=("solids", "mixture", "liquid", "saturation"))
    p.set_defaults(func=_mix)

    p = c.add_parser(sub, "ponds", "a train of evaporation ponds",
                     "Run a brine through a train of ponds, each with a temperature and one end condition (a "
                     "concentration factor, a fraction of its inflow's water, or until a solid saturates); give "
                     "--pond once per pond, in order, or --ponds FILE.csv (columns name, temp_c, and one of "
                     "concentration_factor, water_removed, until_saturated; optionally mode).",
                     [f"phasekit ponds {brine_ex} --pond 'name=Heron 1;temp=30;cf=3.5' "
                      "--pond 'name=Heron 2;temp=30;until=carnallite' --pond 'name=Heron 3;temp=30;water_removed=0.5'",
                      f"phasekit ponds {brine_ex} --ponds train.csv --format xlsx -o harvest.xlsx"])
    c.add_brine_options(p)
    p.add_argument("--pond", action="append", metavar="SPEC",
                   help="one pond: 'name=...;temp=°C;cf=...|water_removed=...|until=SOLID[+SOLID][;mode=...]'")
    p.add_argument("--ponds", metavar="FILE", help="a CSV of ponds, one per row, in order")
    c.add_path_options(p)
    c.add_overlay_option(p)
    g = p.add_argument_group("design")
    g.add_argument("--intake-m3-per-h", type=c.flow_number, metavar="M3_PER_H",
                   help="intake flow of brine, m³/h (areas, flows, residence times and tonnage per year follow; "
                   "ponds take area=, evap= (net evaporation, mm/day), rain= (mm/year), seepage=, depth= (m))")
    g.add_argument("--intake-t-per-year", type=c.flow_number, metavar="T_PER_YEAR", help="or the intake in t/year")
    g.add_argument("--intake-density", type=c.flow_number, metavar="KG_PER_L",
                   help="measured density of the intake (default: the density model)")
    c.add_output_options(p, tables=("ponds", "harvest", "outflow", "design", "mass_balance", "grades"))
    p.set_defaults(func=_ponds)

    p = c.add_parser(sub, "convert", "hot/cold conversion cycle (e.g. KNO3 from NaNO3 + KCl)",
                     "One cycle of a conversion process, per kg of the feed's water: evaporate at --hot °C until "
                     "the cold solid is about to saturate (the hot solid crystallizes and is separated hot), add "
                     "the water that keeps the hot solid dissolved on cooling (--dilution auto) or a given amount, "
                     "cool to --cold °C (the cold solid crystallizes). Reports water evaporated and added, crops "
                     "with purities, yields and the recycle liquor.",
                     ["phasekit convert --salts NaNO3=6.0,KCl=4.0 --units mol/kg --hot 75 --cold 20",
                      "phasekit convert --salts NaNO3=6.0,KCl=4.0 --units mol/kg --hot 90 --cold 15 --dilution 0.1 "
                      "--beyond-validity --format json"])
    c.add_brine_options(p)
    c.add_temp(p, 75.0, "--hot", "temperature of the evaporating crystallizer, °C")
    c.add_temp(p, 20.0, "--cold", "temperature of the cooling crystallizer, °C")
    p.add_argument("--hot-solid", default="halite", metavar="SOLID", help="solid harvested hot (default halite)")
    p.add_argument("--cold-solid", default="niter", metavar="SOLID", help="solid harvested cold (default niter)")
    p.add_argument("--dilution", default="auto", metavar="auto|KG",
                   help="water added before cooling, kg per kg of feed water (default auto: the least that keeps "
                   "the hot solid dissolved)")
    c.add_path_options(p)
    c.add_overlay_option(p)
    c.add_output_options(p, tables=("stages", "crops", "liquors"))
    p.set_defaults(func=_convert)
