"""Analyses as salts, meq/L, thousands separators, and the one charge-balance rule of library, CLI and app.

Hand conversions use periodictable's molar masses; the demo analysis is the invented one of the README.
"""

import sys
import warnings
from pathlib import Path

import periodictable
import pytest
from cli_runner import run_json

import phasekit as pk
from phasekit.chemistry.brine import BALANCE_RULE
from phasekit.errors import InputError

M = {f: periodictable.formula(f).mass for f in ("NaCl", "KCl", "Na", "Cl", "Mg")}
DEMO = {"Na": 10780, "K": 399, "Mg": 1290, "Ca": 412, "Cl": 19350, "SO4": 2710}   # mg/kg, invented


def test_salts_in_mass_percent_by_hand():
    b = pk.Brine.from_salts({"NaCl": 25.0, "KCl": 3.0}, units="mass %")
    water = 1000 - 250 - 30                       # g of water per kg of solution
    assert b.molalities["Na"] == pytest.approx(250 / M["NaCl"] / water * 1000, rel=1e-9)
    assert b.molalities["K"] == pytest.approx(30 / M["KCl"] / water * 1000, rel=1e-9)
    assert b.charge_balance() == 0.0


@pytest.mark.parametrize("units, scale", [("g/L", 1.0), ("mg/L", 1000.0)])
def test_salts_per_litre_with_a_measured_density(units, scale):
    b = pk.Brine.from_salts({"NaCl": 250.0 * scale, "KCl": 30.0 * scale}, units=units, density=1.2)
    water = 1200 - 280                            # g of water in a litre of 1.2 kg
    assert b.molalities["Na"] == pytest.approx(250 / M["NaCl"] / water * 1000, rel=1e-9)
    assert b.conversion_density == 1.2


def test_salts_mol_per_kg_and_refusals():
    b = pk.Brine.from_salts({"NaCl": 5.0, "MgCl2": 0.5}, units="mol/kg")
    assert b.molalities == pytest.approx({"Na": 5.0, "Mg": 0.5, "Cl": 6.0})
    with pytest.raises(InputError) as err:
        pk.Brine.from_salts({"NaCl": 5.0}, units="meq/L")
    assert err.value.field == "units"


def test_meq_per_litre_by_hand():
    b = pk.Brine.from_analysis({"Na": 100.0, "Mg": 20.0, "Cl": 140.0}, units="meq/L", density=1.01)
    g_per_l = 0.100 * M["Na"] + 0.010 * M["Mg"] + 0.140 * M["Cl"]
    water = 1010 - g_per_l
    assert b.molalities["Mg"] == pytest.approx(0.010 / water * 1000, rel=1e-9)
    assert b.molalities["Na"] == pytest.approx(0.100 / water * 1000, rel=1e-9)
    # and back
    assert b.to_units("meq/L", density=1.01)["Mg"] == pytest.approx(20.0, rel=1e-9)


def test_thousands_separators():
    a = pk.Brine.from_analysis({"Na": "31,000", "Cl": "47,800"}, units="mg/kg")
    b = pk.Brine.from_analysis({"Na": 31000, "Cl": 47800}, units="mg/kg")
    assert a.molalities == b.molalities
    for bad in ("12,5", "31,00", "3,1000"):
        with pytest.raises(InputError) as err:
            pk.Brine.from_analysis({"Na": bad, "Cl": 1.0}, units="mg/kg")
        assert err.value.field == "values['Na']" and "31,000" in err.value.expected


def test_auto_balance_increases_the_major_ion_of_the_short_side():
    raw = pk.Brine.from_analysis({"Na": 10780, "K": 399, "Mg": 1290, "Ca": 412, "Cl": 18000, "SO4": 2710},
                                 units="mg/kg")
    assert raw.charge_balance() > 0           # cations in excess: anions short, Cl is their major ion
    b = raw.balance()
    assert b.balance_change["ion"] == "Cl" and b.balance_change["change_mol_per_kg"] > 0
    assert b.charge_balance() == 0.0
    low = pk.Brine.from_analysis({"Na": 9000, "K": 399, "Mg": 1290, "Ca": 412, "Cl": 19350, "SO4": 2710},
                                 units="mg/kg")
    assert low.charge_balance() < 0           # anions in excess: the major cation (Na) is raised, Cl untouched
    bl = low.balance("auto")
    assert bl.balance_change["ion"] == "Na" and bl.molalities["Cl"] == low.molalities["Cl"]
    with pytest.raises(InputError):
        low.balance(on="Cl")                  # lowering Cl is not the rule
    assert "no ion is lowered" in BALANCE_RULE
    assert "balanced on Na" in bl.balance_note and "mol/kg" in bl.balance_note


def test_library_cli_and_app_give_the_same_numbers(capsys):
    """The same unbalanced analysis through the three entry points: same ion, same change, same onset."""
    sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
    from webapp import brine_view

    analysis = dict(DEMO, Cl=18500)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        lib = pk.Brine.from_analysis(analysis, units="mg/kg").balance()
        path = pk.evaporate(lib, 25, exclude=["anhydrite"])
        _, app = brine_view.build_brine([{"ion": k, "value": str(v)} for k, v in analysis.items()], "mg/kg", "",
                                        "auto")
        text = ",".join(f"{k}={v:,}" for k, v in analysis.items())     # thousands grouped: Na=10,780
        cli = run_json(capsys, "evaporate", "--brine", text, "--units", "mg/kg", "--temp", "25",
                       "--exclude", "anhydrite")
    assert app.molalities == lib.molalities
    assert path.charge_balance_note == lib.balance_note == app.balance_note
    assert cli["charge_balance"] == lib.balance_note
    assert cli["first_solid_concentration_factor"] == pytest.approx(path.first_solid["concentration_factor"],
                                                                    rel=1e-12)
