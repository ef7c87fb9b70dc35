"""Session keeping: the inputs saved in the browser (dcc.Store, local storage), saved to and loaded
from a JSON file, and the demo scenario on first start."""

from __future__ import annotations

from dash import ALL, ClientsideFunction, Input, Output, State, dcc, html, no_update
from dash.exceptions import PreventUpdate

from webapp import brine_view, conversion_view, database, messages, pond_view, uploads
from webapp.demo import demo_session
from webapp.diagram_view import parse_temperature
from webapp.messages import UserInputProblem
from webapp.session import CONVERSION_KEYS, normalise, to_json

STORE_ID = "pk-inputs"


def header_controls() -> html.Div:
    return html.Div([
        html.Button("Save session", id="session-save", className="pk-btn pk-btn-light"),
        dcc.Upload(html.Button("Load session", className="pk-btn pk-btn-light"), id="session-upload",
                   multiple=False, className="pk-upload-inline"),
        html.Button("Demo scenario", id="session-demo", className="pk-btn pk-btn-light",
                    title="load the invented Saltmarsh Flats works again (your inputs are replaced)"),
        dcc.Store(id="session-upload-checked"),
        dcc.Download(id="session-download"),
    ], className="pk-session")


def restore(request):
    """Callback: put saved inputs (browser, file) or the demo into every field."""
    if not request:
        raise PreventUpdate
    source = request.get("source")
    if source == "demo" or not request.get("inputs"):
        inputs, notes = demo_session(), []
        inputs["database"] = {**database.initial(), "upload": None}
        text = "Demo scenario loaded: the Saltmarsh Flats solar salt works (invented works, ponds and analyses)."
    else:
        inputs, notes = normalise(request["inputs"])
        text = ("Your last inputs were restored (kept in this browser)." if source == "browser"
                else f"Session file {request.get('filename', '')!r} loaded.")
    try:
        t = parse_temperature(inputs["temp_c"])
    except Exception:
        t = no_update
    b, p, q = inputs["brine"], inputs["path"], inputs["polytherm"]
    msg = html.Div([messages.note(text), *[messages.note(n) for n in notes]])
    values = [inputs["system"], inputs["temp_c"], t, inputs["coordinates"], inputs["basis"],
              b["name"], b["units"], b["density"], b["rows"], b["balance_on"],
              inputs["analyses"], p["process"], p["mode"], p["start_c"], p["end_c"], p["scale"],
              q["t_min_c"], q["t_max_c"], q["basis"], inputs["ponds"],
              *[inputs["conversion"][k] for k in CONVERSION_KEYS], p.get("exclude", ""),
              inputs.get("ponds_exclude", "")]
    if request.get("boot"):
        # the page was built with the demo inputs: send only what differs (the page renders faster)
        values = [no_update if v == d else v for v, d in zip(values, _fields(demo_session()))]
    if values[8] is not no_update:
        values[8] = brine_view.rows_children(values[8])
    if values[19] is not no_update:
        values[19] = pond_view.rows_children(values[19])
    db = inputs["database"]
    if request.get("boot") and db["choice"] == database.initial()["choice"] and not db.get("upload"):
        chooser = (no_update,) * 3  # as the page was built
    else:
        chooser = (database.options(db.get("upload")), db["choice"], db.get("upload"))
    return (*values, *chooser, inputs, msg)


def _fields(inputs: dict) -> list:
    b, p, q = inputs["brine"], inputs["path"], inputs["polytherm"]
    return [inputs["system"], inputs["temp_c"], parse_temperature(inputs["temp_c"]), inputs["coordinates"],
            inputs["basis"], b["name"], b["units"], b["density"], b["rows"], b["balance_on"], inputs["analyses"],
            p["process"], p["mode"], p["start_c"], p["end_c"], p["scale"], q["t_min_c"], q["t_max_c"], q["basis"],
            inputs["ponds"], *[inputs["conversion"][k] for k in CONVERSION_KEYS], p.get("exclude", ""),
            inputs.get("ponds_exclude", "")]


def load_file(checked):
    """Callback: read a session file (size-checked in the browser first)."""
    if not checked:
        raise PreventUpdate
    if checked.get("error"):
        return no_update, messages.error(checked["error"] + " Your inputs are unchanged.", keep_note=False)
    name = checked.get("filename") or "session.json"
    try:
        data = uploads.read_session(checked.get("contents"), name)
    except UserInputProblem as exc:
        return no_update, messages.error(str(exc) + " Your inputs are unchanged.", keep_note=False)
    except Exception as exc:
        return no_update, messages.error(messages.describe(exc, "the session file"), keep_note=False)
    return {"source": "file", "filename": name, "inputs": data}, no_update


def save(_n, inputs, brine):
    """Callback: the session file."""
    if not _n:
        raise PreventUpdate
    name = "phasekit_session.json"
    if brine and brine.get("name"):
        from webapp.export import safe_name

        name = f"phasekit_session_{safe_name(brine['name'])}.json"
    return dcc.send_string(to_json(inputs or demo_session()), name)


def register(app):
    pond = [Input({"type": t, "row": ALL}, "value") for t in ("pond-name", "pond-temp", "pond-end", "pond-value")]
    app.clientside_callback(
        ClientsideFunction("phasekit", "collectInputs"),
        Output(STORE_ID, "data"),
        Input("system", "value"), Input("temp-text", "value"), Input("coords", "value"), Input("basis", "value"),
        Input("brine-name", "value"), Input("brine-units", "value"), Input("brine-density", "value"),
        Input({"type": "ion", "row": ALL}, "value"), Input({"type": "val", "row": ALL}, "value"),
        Input("balance-on", "data"), Input("analyses", "data"), Input("path-process", "value"),
        Input("path-mode", "value"), Input("cool-start", "value"), Input("cool-end", "value"),
        Input("path-scale", "value"), Input("poly-tmin", "value"), Input("poly-tmax", "value"),
        Input("poly-basis", "value"), Input("db-choice", "value"), Input("db-upload", "data"),
        *[Input(i, "value") for i in conversion_view.IDS], *pond, Input("path-exclude", "value"),
        Input("pond-exclude", "value"),
        prevent_initial_call=True,
    )
    app.callback(
        Output("system", "value"), Output("temp-text", "value", allow_duplicate=True),
        Output("temp-slider", "value", allow_duplicate=True), Output("coords", "value"), Output("basis", "value"),
        Output("brine-name", "value", allow_duplicate=True), Output("brine-units", "value"),
        Output("brine-density", "value", allow_duplicate=True), Output("brine-rows", "children", allow_duplicate=True),
        Output("balance-on", "data"), Output("analyses", "data"), Output("path-process", "value"),
        Output("path-mode", "value"), Output("cool-start", "value"), Output("cool-end", "value"),
        Output("path-scale", "value"), Output("poly-tmin", "value"), Output("poly-tmax", "value"), Output("poly-basis", "value"),
        Output("pond-rows", "children", allow_duplicate=True),
        *[Output(i, "value") for i in conversion_view.IDS], Output("path-exclude", "value"),
        Output("pond-exclude", "value"),
        Output("db-choice", "options", allow_duplicate=True), Output("db-choice", "value", allow_duplicate=True),
        Output("db-upload", "data", allow_duplicate=True), Output(STORE_ID, "data", allow_duplicate=True),
        Output("session-msg", "children"),
        Input("restore-request", "data"), prevent_initial_call=True,
    )(restore)
    app.clientside_callback(ClientsideFunction("phasekit", "readSavedInputs"), Output("restore-request", "data"),
                            Input("boot", "data"), State("boot", "id"))
    app.clientside_callback(ClientsideFunction("phasekit", "demoRequest"),
                            Output("restore-request", "data", allow_duplicate=True),
                            Input("session-demo", "n_clicks"), prevent_initial_call=True)
    app.clientside_callback(ClientsideFunction("phasekit", "checkUpload"), Output("session-upload-checked", "data"),
                            Input("session-upload", "contents"), State("session-upload", "filename"),
                            prevent_initial_call=True)
    app.callback(Output("restore-request", "data", allow_duplicate=True),
                 Output("session-msg", "children", allow_duplicate=True),
                 Input("session-upload-checked", "data"), prevent_initial_call=True)(load_file)
    app.callback(Output("session-download", "data"), Input("session-save", "n_clicks"), State(STORE_ID, "data"),
                 State("brine", "data"), prevent_initial_call=True)(save)
