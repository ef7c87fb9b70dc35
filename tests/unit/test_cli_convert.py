"""Command line: the conversion cycle (``phasekit convert``) and the nitrate square (``isotherm --system``)."""

import json

import pytest
from cli_runner import run

FEED = ["--salts", "NaNO3=6.0,KCl=4.0", "--units", "mol/kg"]


def test_convert_json_reports_crops_yields_and_database(capsys):
    code, out, err = run(capsys, "convert", *FEED, "--hot", "75", "--cold", "20", "--format", "json")
    assert code == 0, err
    doc = json.loads(out)
    sc = doc["scalars"] if "scalars" in doc else doc
    assert sc["hot_solid"] == "halite" and sc["cold_solid"] == "niter"
    assert 0 < sc["yield_K"] < 1 and 0 < sc["water_evaporated_kg"] < 1
    assert sc["database"] == "embedded database"


def test_convert_colder_gives_more_kno3(capsys):
    ys = []
    for cold in ("30", "10"):
        code, out, err = run(capsys, "convert", *FEED, "--hot", "75", "--cold", cold, "--format", "json")
        assert code == 0, err
        doc = json.loads(out)
        ys.append((doc["scalars"] if "scalars" in doc else doc)["yield_K"])
    assert ys[1] > ys[0]


@pytest.mark.parametrize("extra,word", [
    (["--hot", "20", "--cold", "30"], "cold_c"),
    (["--dilution", "lots"], "--dilution"),
    (["--cold-solid", "unobtainium"], "solid"),
])
def test_convert_bad_input_is_one_line_exit_2(capsys, extra, word):
    code, out, err = run(capsys, "convert", *FEED, *extra)
    assert code == 2
    assert word in err and "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_isotherm_reciprocal_nitrate(capsys):
    code, out, err = run(capsys, "isotherm", "--system", "reciprocal-nitrate", "--temp", "25", "--format", "json")
    assert code == 0, err
    doc = json.loads(out)
    text = json.dumps(doc)
    assert "jaenecke_NO3" in text and "niter" in text and "halite" in text
