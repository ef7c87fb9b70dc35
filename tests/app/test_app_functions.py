"""The app's own functions without a browser: parsing of pasted rows and uploads, session files,
the brine built through the library, the sentence naming the first solid."""

from __future__ import annotations

import base64
import json

import pytest

import phasekit as pk
from phasekit.errors import InputError
from webapp import brine_view, path_view, session, uploads
from webapp.demo import demo_analyses, demo_session
from webapp.messages import UserInputProblem

pytestmark = pytest.mark.app


def test_pasted_row_forms():
    assert uploads.parse_pasted("Na\tCl\n100\t154", []) == [{"ion": "Na", "value": "100"}, {"ion": "Cl", "value": "154"}]
    assert uploads.parse_pasted("100, 154", ["Na", "Cl"]) == [{"ion": "Na", "value": "100"}, {"ion": "Cl", "value": "154"}]
    assert uploads.parse_pasted("Na\t100\nCl\t154\n", []) == [{"ion": "Na", "value": "100"}, {"ion": "Cl", "value": "154"}]
    with pytest.raises(UserInputProblem, match="'Br' is unknown"):
        uploads.parse_pasted("Na\tBr\n1\t2", [])
    with pytest.raises(UserInputProblem, match="3 values but the table has 2 ions"):
        uploads.parse_pasted("1,2,3", ["Na", "Cl"])


def test_demo_analyses_are_read_and_plausible():
    tab = demo_analyses()
    assert uploads.sample_labels(tab)[0] == "SF-01 intake seawater"
    assert tab["density_column"] == "density" and set(tab["ignored"]) == {"pond", "sampled"}
    for i in range(len(tab["rows"])):
        s = uploads.sample(tab, i)
        raw, _ = brine_view.build_brine(s["rows"], "mg/kg", s["density"], None)
        assert abs(raw.charge_balance()) < 2.0  # a lab would accept each analysis


def test_upload_size_limit_and_data_only():
    big = base64.b64encode(b"x" * (uploads.MAX_UPLOAD_BYTES + 10)).decode()
    with pytest.raises(UserInputProblem, match="larger than the limit of 2 MB"):
        uploads.decode("data:text/csv;base64," + big, "big.csv")
    with pytest.raises(UserInputProblem, match="not a phasekit session"):
        uploads.read_session("data:application/json;base64," + base64.b64encode(b'{"a": 1}').decode(), "s.json")


def test_session_normalise_keeps_values_and_fills_gaps():
    data = {"format": "phasekit-session", "system": "NaCl-KCl", "temp_c": "warm",
            "brine": {"name": "x", "units": "g/L", "rows": [{"ion": "Na", "value": "abc"}]}, "extra": 1}
    out, notes = session.normalise(data)
    assert out["system"] == "NaCl-KCl" and out["temp_c"] == "warm"  # kept as typed, shown as an error later
    assert out["brine"]["rows"] == [{"ion": "Na", "value": "abc"}] and out["brine"]["units"] == "g/L"
    assert "extra" not in out and out["ponds"] == demo_session()["ponds"]
    again, _ = session.normalise(json.loads(session.to_json(out)))
    assert again == out
    assert session.normalise({"system": "nowhere"})[1]


def test_brine_is_the_librarys_and_balancing_is_explicit():
    b = demo_session()["brine"]
    raw, used = brine_view.build_brine(b["rows"], b["units"], b["density"], None)
    ref = pk.Brine.from_analysis({r["ion"]: float(r["value"]) for r in b["rows"]}, units="mg/kg")
    assert raw.molalities == pytest.approx(ref.molalities) and used is raw
    _, balanced = brine_view.build_brine(b["rows"], b["units"], b["density"], "Cl")
    assert balanced.charge_balance() == pytest.approx(0.0, abs=1e-9)
    assert any("balanced on Cl" in w for w in balanced.warnings)
    with pytest.raises(InputError, match="density"):
        brine_view.build_brine(b["rows"], "mg/kg", "heavy", None)
    with pytest.raises(UserInputProblem, match="given twice"):
        brine_view.build_brine([{"ion": "Na", "value": "1"}, {"ion": "Na", "value": "2"}], "mg/kg", "", None)


def test_first_solid_sentence_uses_the_path_result():
    b = demo_session()["brine"]
    _, brine = brine_view.build_brine(b["rows"], b["units"], b["density"], "Cl")
    res = path_view.run_path(brine.molalities, "evaporation", "fractional", 25.0)
    first = res.first_solid
    text = path_view.first_solid_sentence(res, "evaporation")
    assert text.startswith(first["solid"].capitalize())
    assert f"{first['concentration_factor']:.3g}" in text


def test_xlsx_table_of_analyses():
    import io

    import pandas as pd

    buf = io.BytesIO()
    pd.DataFrame({"sample": ["P1", "P2"], "Na+": [10850, 59800], "Cl-": [19480, 108100], "note": ["a", "b"]}) \
        .to_excel(buf, index=False, engine="openpyxl")
    tab = uploads.read_analyses(buf.getvalue(), "lab.xlsx")
    assert uploads.sample_labels(tab) == ["P1", "P2"]
    assert tab["species"] == {"Na+": "Na", "Cl-": "Cl"} and tab["ignored"] == ["note"]
    assert uploads.sample(tab, 1)["rows"] == [{"ion": "Na+", "value": "59800"}, {"ion": "Cl-", "value": "108100"}]
