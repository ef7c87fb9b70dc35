"""The database chooser in the working conditions: a menu (embedded database, the overlays given at
start, an uploaded overlay) and the upload of an overlay file (TOML). The choice goes to the
``database`` store, which every view reads (see :mod:`webapp.database`)."""

from __future__ import annotations

from dash import ClientsideFunction, Input, Output, State, ctx, dcc, html, no_update
from dash.exceptions import PreventUpdate

from webapp import database, messages, uploads
from webapp.messages import UserInputProblem

UNCHANGED = "The database in use and your inputs are unchanged."


def _refused(text: str):
    """An error message that says nothing was changed."""
    text = text.rstrip()
    return messages.error(f"{text}{'' if text.endswith('.') else '.'} {UNCHANGED}", keep_note=False)


def controls(inputs: dict) -> html.Div:
    """The chooser and the upload (filled from the inputs' ``database`` entry, or the start-up choice)."""
    db = inputs.get("database") or database.initial()
    upload = db.get("upload") if db.get("choice") == database.UPLOAD else None
    return html.Div([
        html.Label("Database", htmlFor="db-choice"),
        html.Div([
            dcc.Dropdown(id="db-choice", options=database.options(upload), value=db.get("choice"), clearable=False,
                         searchable=False, className="pk-dropdown pk-dropdown-wide"),
            dcc.Upload(html.Button("Upload overlay (TOML)", className="pk-btn pk-btn-small",
                                   title="your own fitted values, in phasekit's overlay layout (see the README)"),
                       id="db-upload-file", multiple=False, className="pk-upload-inline", accept=".toml,text/plain"),
        ], className="pk-db-row"),
        dcc.Store(id="db-upload", data=upload),
        dcc.Store(id="db-upload-checked"),
        dcc.Store(id="database", data={"choice": db.get("choice"), "upload": upload}),
    ], className="pk-cond pk-cond-db")


def take_overlay(checked):
    """Callback: read an uploaded overlay; on success offer it and choose it, else say why (nothing changes)."""
    if not checked:
        raise PreventUpdate
    keep = (no_update,) * 3
    if checked.get("error"):
        return (*keep, _refused(checked["error"]))
    name = checked.get("filename") or "overlay.toml"
    try:
        raw = uploads.decode(checked.get("contents"), name)
        upload = database.read_upload(raw, name)
    except UserInputProblem as exc:
        return (*keep, _refused(str(exc)))
    except Exception as exc:
        return (*keep, _refused(messages.describe(exc, "the overlay upload")))
    note = messages.note(f"Overlay {upload['name']!r} read from {upload['filename']}; every view now computes "
                         "with it (choose 'embedded database' to go back).")
    return upload, database.options(upload), database.UPLOAD, note


def choose(choice, upload):
    """Callback: the database every view computes with (the previous one is kept if this one cannot be used)."""
    db = {"choice": choice or database.EMBEDDED, "upload": upload if choice == database.UPLOAD else None}
    try:
        database.model_for(db)
    except Exception as exc:
        return no_update, _refused(messages.describe(exc, "the database"))
    # a new upload comes with its own note (take_overlay): keep it; any other choice clears old messages
    try:
        uploaded = "db-upload.data" in ctx.triggered_prop_ids
    except Exception:  # called outside a request (tests of the function itself)
        uploaded = False
    return db, (no_update if uploaded else None)


def register(app):
    app.clientside_callback(ClientsideFunction("phasekit", "checkUpload"), Output("db-upload-checked", "data"),
                            Input("db-upload-file", "contents"), State("db-upload-file", "filename"),
                            prevent_initial_call=True)
    app.callback(Output("db-upload", "data"), Output("db-choice", "options"), Output("db-choice", "value"),
                 Output("db-msg", "children"), Input("db-upload-checked", "data"),
                 prevent_initial_call=True)(take_overlay)
    app.callback(Output("database", "data"), Output("db-msg", "children", allow_duplicate=True),
                 Input("db-choice", "value"), Input("db-upload", "data"), prevent_initial_call=True)(choose)
