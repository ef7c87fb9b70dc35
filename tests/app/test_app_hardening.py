"""The app's catalogue of bad input at the callback layer and on the server: clear messages, nothing
lost, every request bounded (size, Host header) whatever callback it is for."""

from __future__ import annotations

import base64
import json
import os
import signal
import subprocess
import sys
import urllib.error
import urllib.request
from pathlib import Path

import pytest
from pkapp import free_port, wait_for

from webapp import brine_view, conversion_view, database, leach_view, session, uploads
from webapp.app import MAX_REQUEST_BYTES, allowed_hosts, create_app
from webapp.messages import UserInputProblem

pytestmark = pytest.mark.app
ROOT = Path(__file__).resolve().parents[2]


def _data_url(raw: bytes, kind: str = "text/csv") -> str:
    return f"data:{kind};base64," + base64.b64encode(raw).decode()


def test_an_empty_csv_upload_is_a_message_not_an_internal_error():
    tab, msg = brine_view.take_upload({"contents": _data_url(b""), "filename": "empty.csv"})
    assert "empty" in str(msg) and "Unexpected" not in str(msg)


def test_an_upload_with_a_ragged_row_keeps_the_other_analyses():
    text = "sample;Na;Cl\nA;10780,5;19350\nB;1;2;3\nC;43100;77400\n"
    tab, msg = brine_view.take_upload({"contents": _data_url(text.encode()), "filename": "w.csv"})
    assert len(tab["rows"]) == 3 and "decimal commas" in str(msg)
    options, _, box = brine_view.pick_options(tab, "mg/kg")
    labels = [o["label"] for o in options]
    assert "needs attention" in labels[1] and "charge balance" in labels[0] and "charge balance" in labels[2]
    assert "4 cells" in str(box)


def test_a_deeply_nested_session_file_is_refused_with_a_message():
    deep = ("[" * 50000 + "]" * 50000).encode()
    with pytest.raises(UserInputProblem, match="nested more than"):
        uploads.read_session(_data_url(deep, "application/json"), "deep.json")


def test_a_session_file_cannot_bring_more_rows_than_an_upload():
    cols = ["sample", "Na", "Cl"]
    big = {"format": "phasekit-session", "analyses": {"columns": cols, "rows": [["s", "1", "1"]] * 600,
                                                     "species": {"Na": "Na", "Cl": "Cl"}}}
    out, notes = session.normalise(big)
    assert out["analyses"] is None and any("at most 500 rows" in n for n in notes)
    small = json.loads(json.dumps(big))
    small["analyses"]["rows"] = small["analyses"]["rows"][:3]
    assert session.normalise(small)[0]["analyses"]["rows"] == [["s", "1", "1"]] * 3


def test_conversion_feed_of_a_million_mol_per_kg_is_refused():
    with pytest.raises(Exception) as err:
        conversion_view.parse_amount("1e6", "NaNO3")
    assert "NaNO3" in str(err.value) and "'1e6'" in str(err.value) and "at most 50" in str(err.value)


def test_leach_grain_size_of_a_kilometre_is_refused_next_to_its_field():
    values = {k: default for k, (_, default) in leach_view.FIELDS.items()}
    values["d50"] = "1e9"
    out = leach_view.update_leach(1, True, None, database.initial(), *values.values())
    d50_msg = out[7 + list(leach_view.FIELDS).index("d50")]
    assert d50_msg is not None and "1000000000" in str(d50_msg) and "100000 µm" in str(d50_msg)


def test_an_oversized_overlay_inside_any_callback_is_refused_before_parsing():
    text = '[overlay]\nname = "big"\nsource = "x"\n' + "# padding\n" * 50000
    db = {"choice": database.UPLOAD, "upload": {"filename": "big.toml", "name": "big", "text": text}}
    with pytest.raises(UserInputProblem, match="larger than the limit of 64 kB"):
        database.model_for(db)
    with pytest.raises(UserInputProblem, match="larger than the limit"):
        database.key_of(db)
    choice, note = database.valid_choice(db)
    assert choice["choice"] == database.EMBEDDED and "64 kB" in note


def test_server_refuses_unknown_hosts_and_large_bodies_for_every_callback():
    client = create_app(allowed_hosts("127.0.0.1")).server.test_client()
    assert client.get("/", headers={"Host": "127.0.0.1:8050"}).status_code == 200
    assert client.get("/", headers={"Host": "localhost"}).status_code == 200
    assert client.get("/", headers={"Host": "evil.example"}).status_code == 400
    assert client.get("/", headers={"Host": "127.0.0.1.evil.example:8050"}).status_code == 400
    body = b"{" + b" " * (MAX_REQUEST_BYTES + 10) + b"}"
    r = client.post("/_dash-update-component", data=body, headers={"Host": "127.0.0.1",
                                                                   "Content-Type": "application/json"})
    assert r.status_code == 413


def test_phasekit_app_is_served_by_waitress_with_a_host_allow_list():
    port = free_port()
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.Popen([sys.executable, "-m", "phasekit.cli.main", "app", "--port", str(port)], cwd=ROOT,
                            env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        url = f"http://127.0.0.1:{port}/"
        wait_for(url, timeout=90)
        with urllib.request.urlopen(url, timeout=10) as r:
            assert r.status == 200 and r.headers.get("Server") == "phasekit"  # waitress, named by us
        req = urllib.request.Request(url, headers={"Host": "rebound.example"})
        with pytest.raises(urllib.error.HTTPError) as err:
            urllib.request.urlopen(req, timeout=10)
        assert err.value.code == 400
    finally:
        proc.send_signal(signal.SIGINT)
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
