"""Subcommand ``colligative``: freezing point, boiling point and water vapour pressure of one brine."""

from __future__ import annotations

from phasekit.cli import common as c

PROPERTIES = ("freezing", "boiling", "vapour")


def _colligative(args) -> c.Report:
    import pandas as pd

    import phasekit as pk

    (brine,) = c.read_brines(args)
    model = c.model_of(args)
    wanted = list(dict.fromkeys(args.only or PROPERTIES))
    scalars = {"charge_balance_percent": brine.charge_balance(), "ionic_strength": brine.ionic_strength}
    rows, warnings = [], []
    if "freezing" in wanted:
        r = pk.freezing_point(brine, model=model)
        scalars.update(freezing_point_c=r.temp_c, freezing_point_depression_k=r.depression_c)
        rows.append({"property": "freezing point", "value": r.temp_c, "units": "°C", "temp_c": r.temp_c,
                     "pressure_kpa": None, "water_activity": r.water_activity})
        warnings += r.warnings
    if "boiling" in wanted:
        r = pk.boiling_point(brine, pressure_kpa=args.pressure, model=model)
        scalars.update(pressure_kpa=r.pressure_kpa, boiling_point_c=r.temp_c, boiling_point_elevation_k=r.elevation_c)
        rows.append({"property": "boiling point", "value": r.temp_c, "units": "°C", "temp_c": r.temp_c,
                     "pressure_kpa": r.pressure_kpa, "water_activity": r.water_activity})
        warnings += r.warnings
    if "vapour" in wanted:
        r = model.vapour_pressure(brine, args.temp)
        scalars.update(temp_c=r.temp_c, vapour_pressure_kpa=r.pressure_kpa, pure_water_vapour_pressure_kpa=r.pure_water_kpa)
        rows.append({"property": "vapour pressure", "value": r.pressure_kpa, "units": "kPa", "temp_c": r.temp_c,
                     "pressure_kpa": r.pressure_kpa, "water_activity": r.water_activity})
        warnings += r.warnings
    table = pd.DataFrame(rows, columns=["property", "value", "units", "temp_c", "pressure_kpa", "water_activity"])
    return c.Report(scalars=scalars, tables={"properties": table.set_index("property"), "brine": c.brine_table(brine)},
                    main="properties", warnings=warnings)


def register(sub) -> None:
    p = c.add_parser(sub, "colligative", "freezing point, boiling point and vapour pressure of a brine",
                     "Freezing point (where ice saturates), boiling point at --pressure and water vapour pressure at "
                     "--temp of one brine, its composition held as given. Freezing points below 0 °C use Pitzer "
                     "parameters extrapolated below their validity range and carry a warning; boiling points are "
                     "answered from 0 to 150 °C (above 100 °C with warnings).",
                     ["phasekit colligative --brine Na=10780,K=399,Mg=1290,Ca=412,Cl=19350,SO4=2710 --units mg/kg",
                      "phasekit colligative --salts NaCl=20 --units mass% --only boiling --pressure 50",
                      "phasekit colligative --salts NaCl=1.0,KCl=0.5 --units mol/kg --only vapour --temp 60 "
                      "--format json"])
    c.add_brine_options(p)
    c.add_temp(p, help_text="temperature of the vapour pressure, °C")
    p.add_argument("--pressure", type=float, default=101.325, metavar="KPA",
                   help="absolute pressure of the boiling point, kPa (default 101.325)")
    p.add_argument("--only", action="append", choices=PROPERTIES,
                   help="compute only this property (repeat for several; default: all three)")
    c.add_overlay_option(p)
    c.add_output_options(p, tables=("properties", "brine"))
    p.set_defaults(func=_colligative)
