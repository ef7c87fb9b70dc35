"""The ``leach`` subcommand (dissolution rate) checked against the library's own result."""

import json

from phasekit import kinetics as kin
from phasekit.cli.main import main


def test_leach_json_matches_library(tmp_path, capsys):
    out = tmp_path / "leach.json"
    args = ["leach", "--ore", "sylvite=0.35,halite=0.6", "--ore-kg", "0.3", "--water-kg", "1", "--d50", "600",
            "--brine", "Na=5.8,Cl=5.8", "--units", "mol/kg", "--temp", "40", "--power", "0.5", "--time", "300",
            "--format", "json", "--output", str(out), "--plot", str(tmp_path / "leach.png")]
    assert main(args) == 0
    data = json.loads(out.read_text())
    lib = kin.leach(0.3, {"sylvite": 0.35, "halite": 0.6}, kin.lognormal(600, 1.6), {"Na": 5.8, "Cl": 5.8},
                    residence_s=300, water_kg=1.0, temp_c=40, power_w_kg=0.5)
    got = {r["solid"]: r for r in data["summary"]}
    assert abs(got["sylvite"]["dissolved_kg"] - lib.summary.loc["sylvite", "dissolved_kg"]) < 1e-9
    # in a brine near halite saturation KCl dissolves, NaCl hardly does (selective leaching)
    assert got["sylvite"]["dissolved_fraction"] > 10 * got["halite"]["dissolved_fraction"]
    assert (tmp_path / "leach.png").stat().st_size > 1000


def test_leach_bad_input(capsys):
    assert main(["leach", "--ore", "sylvite=1.4", "--ore-kg", "0.3", "--water-kg", "1", "--d50", "600",
                 "--time", "60"]) == 2
    assert "composition" in capsys.readouterr().err
