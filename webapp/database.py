"""The database chooser: which parameter database every view computes with.

A choice is a small JSON-ready dictionary, kept in the ``database`` store, in the browser and in
the session file::

    {"choice": "embedded"}                          # the embedded database
    {"choice": "overlay:NAME"}                      # an overlay given at start (phasekit app --overlay)
    {"choice": "startup-all"}                       # all of them at once (when they do not conflict)
    {"choice": "upload", "upload": {"filename": "lab.toml", "text": "..."}}   # an uploaded overlay

Every view gets its model from :func:`model_for` (no ``pk.default_model()`` anywhere else in the
app) and names it with :func:`label_line`; caches of results are keyed by :func:`key_of`. The
overlay files themselves are read by the library (:mod:`phasekit.overlay`).
"""

from __future__ import annotations

import hashlib
import re
import tempfile
from collections import OrderedDict
from functools import lru_cache
from pathlib import Path

from dash import html

from phasekit.errors import InputError
from webapp.messages import UserInputProblem

EMBEDDED = "embedded"
UPLOAD = "upload"
ALL_STARTUP = "startup-all"
#: an uploaded overlay larger than this is refused (overlays are a few kB; the text is kept in the
#: browser and in the session file)
MAX_OVERLAY_BYTES = 64 * 1024

#: overlays given at start: name -> parsed content (phasekit.overlay.read_overlay)
_STARTUP: dict = {}
#: the choice of a new browser, and whether the overlays given at start can be combined
_STATE = {"initial": EMBEDDED, "combined": False}
#: uploaded overlays seen by this process: key -> parsed content (the most recent few)
_UPLOADED: OrderedDict = OrderedDict()
_UPLOADED_MAX = 16


# ----------------------------------------------------------------------------- start
def configure(paths=(), use: bool = True) -> list[str]:
    """Read the overlays given at start; each must apply on the embedded database.

    Parameters
    ----------
    paths : sequence of path
        Overlay files (``phasekit app --overlay FILE ...``).
    use : bool
        Whether the first page computes with them (else with the embedded database).

    Returns
    -------
    list of str
        Notes for the console (e.g. overlays that cannot be combined).

    Raises
    ------
    InputError
        A missing or invalid file, an overlay that does not apply, or two overlays of one name.
    """
    import phasekit as pk
    from phasekit.overlay import read_overlay

    parsed = {}
    for p in paths:
        ov = read_overlay(p)
        if ov["name"] in parsed:
            raise InputError("--overlay", str(p), f"overlays of different names ({ov['name']!r} is given twice)")
        pk.default_model().with_overlays(ov)
        parsed[ov["name"]] = ov
    _STARTUP.clear()
    _STARTUP.update(parsed)
    _model.cache_clear()
    notes = []
    combined = len(parsed) > 1
    _STATE["combined"] = combined
    if combined:
        try:
            _model((ALL_STARTUP,))
        except InputError as exc:
            combined = False
            notes.append(f"the overlays cannot be used together ({exc}); each can be chosen alone")
    _STATE["combined"] = combined
    _STATE["initial"] = EMBEDDED
    if use and parsed:
        _STATE["initial"] = ALL_STARTUP if combined else f"overlay:{next(iter(parsed))}"
    return notes


def initial() -> dict:
    """The choice of a browser without saved inputs."""
    return {"choice": _STATE["initial"]}


def options(upload: dict | None = None) -> list[dict]:
    """The entries of the chooser."""
    out = [("embedded database", EMBEDDED)]
    out += [(f"embedded database + overlay {name}", f"overlay:{name}") for name in _STARTUP]
    if _STATE["combined"]:
        out.append(("embedded database + overlay " + ", ".join(_STARTUP), ALL_STARTUP))
    if upload and upload.get("name"):
        out.append((f"embedded database + overlay {upload['name']} (uploaded)", UPLOAD))
    return [{"label": label, "value": value, "title": label} for label, value in out]


# ----------------------------------------------------------------------------- uploads
def read_upload(raw: bytes, filename: str) -> dict:
    """An uploaded overlay, checked by the library and applied once: ``{"filename", "name", "text"}``.

    Raises
    ------
    UserInputProblem
        Too large, not UTF-8, not a valid overlay, or an overlay that does not apply (a solid or
        species that does not exist, ...); the message names the file.
    """
    name = Path(str(filename or "overlay.toml")).name
    if len(raw) > MAX_OVERLAY_BYTES:
        raise UserInputProblem(f"overlay {name!r}: {len(raw) / 1024:.0f} kB, larger than the limit of "
                               f"{MAX_OVERLAY_BYTES // 1024} kB for an overlay")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise UserInputProblem(f"overlay {name!r}: not a text file (expected a TOML overlay, UTF-8)") from None
    ov = _parse(text, name)
    try:
        _apply([ov])
    except InputError as exc:
        raise UserInputProblem(f"overlay {name!r}: {exc}") from None
    return {"filename": name, "name": ov["name"], "text": text}


def _parse(text: str, filename: str) -> dict:
    """The overlay's content, read by the library from a private temporary file named as the upload."""
    from phasekit.overlay import read_overlay

    safe = re.sub(r"[^A-Za-z0-9._-]+", "_", filename).strip("._") or "overlay.toml"
    with tempfile.TemporaryDirectory(prefix="pk-overlay-") as tmp:
        path = Path(tmp) / safe
        path.write_text(text, encoding="utf-8")
        try:
            ov = read_overlay(path)
        except InputError as exc:
            value = filename if exc.value == str(path) else exc.value
            raise UserInputProblem(f"overlay {filename!r}: {InputError(exc.field, value, exc.expected)}") from None
    ov["file"] = filename
    return ov


# ----------------------------------------------------------------------------- models
def key_of(db) -> tuple:
    """A short hashable key of a choice, for caches of results (the uploaded text is hashed)."""
    if db is not None and not isinstance(db, dict):
        raise UserInputProblem("database: the choice sent by the browser is not readable; choose a database again")
    choice = (db or {}).get("choice") or EMBEDDED
    if not isinstance(choice, str) or len(choice) > 300:
        raise UserInputProblem("database: the choice sent by the browser is not readable; choose a database again")
    if choice == UPLOAD:
        up = (db or {}).get("upload") or {}
        text = up.get("text") if isinstance(up, dict) else None
        text = text if isinstance(text, str) else ""
        if len(text) > MAX_OVERLAY_BYTES:  # characters: at least as many bytes
            raise UserInputProblem(f"database: the uploaded overlay is {len(text) / 1024:.0f} kB, larger than the "
                                   f"limit of {MAX_OVERLAY_BYTES // 1024} kB for an overlay; upload a smaller one")
        return (UPLOAD, hashlib.sha256(text.encode("utf-8", "replace")).hexdigest()[:20])
    return (choice,)


def model_for(db):
    """The model of a choice (built once per choice, kept in a small cache).

    Raises
    ------
    PhasekitError, UserInputProblem
        An overlay that is no longer available, or an uploaded text that is not a valid overlay.
    """
    key = key_of(db)
    if key[0] == UPLOAD and key not in _UPLOADED:
        up = (db or {}).get("upload") or {}
        if not isinstance(up, dict) or not isinstance(up.get("text"), str) or not up.get("text"):
            raise UserInputProblem("database: no overlay uploaded; upload one or choose another database")
        _UPLOADED[key] = _parse(up["text"], up.get("filename") or "overlay.toml")
        while len(_UPLOADED) > _UPLOADED_MAX:
            _UPLOADED.popitem(last=False)
    return _model(key)


def model_by_key(key: tuple):
    """The model of a key made by :func:`key_of` (after :func:`model_for` has seen its choice)."""
    if key[0] == UPLOAD and key not in _UPLOADED:
        raise UserInputProblem("database: the uploaded overlay is no longer known; upload it again")
    return _model(key)


@lru_cache(maxsize=8)
def _model(key: tuple):
    import phasekit as pk

    choice = key[0]
    if choice == EMBEDDED:
        return pk.default_model()
    if choice == ALL_STARTUP:
        return _apply(list(_STARTUP.values()))
    if choice.startswith("overlay:") and choice[len("overlay:"):] in _STARTUP:
        return _apply([_STARTUP[choice[len("overlay:"):]]])
    if choice == UPLOAD:
        return _apply([_UPLOADED[key]])
    raise UserInputProblem(f"database {choice!r} is not available in this app (overlays are given at start with "
                           "'phasekit app --overlay FILE'); choose another database")


def _apply(overlays: list):
    import phasekit as pk

    return pk.load_model(overlays=overlays)


def valid_choice(db) -> tuple[dict, str | None]:
    """A choice that can be used now, and a note when the given one could not (e.g. from an old session)."""
    if not isinstance(db, dict):
        return {**initial(), "upload": None}, None
    choice = db.get("choice")
    if choice == UPLOAD:
        up = db.get("upload")
        if isinstance(up, dict) and isinstance(up.get("text"), str):
            if len(up["text"]) > MAX_OVERLAY_BYTES:
                return ({"choice": EMBEDDED, "upload": None},
                        f"the saved overlay is larger than {MAX_OVERLAY_BYTES // 1024} kB; the embedded database is used")
            try:
                checked = read_upload(up["text"].encode("utf-8"), up.get("filename") or "overlay.toml")
            except UserInputProblem as exc:
                return {"choice": EMBEDDED, "upload": None}, f"{exc}; the embedded database is used"
            return {"choice": UPLOAD, "upload": checked}, None
        return ({"choice": EMBEDDED, "upload": None},
                "the saved inputs name an uploaded overlay without its text; the embedded database is used")
    if choice in {o["value"] for o in options()}:
        return {"choice": choice, "upload": None}, None
    return {"choice": EMBEDDED, "upload": None}, (
        f"database {choice!r} of the saved inputs is not available (start the app with 'phasekit app --overlay "
        "FILE' to offer it); the embedded database is used")


# ----------------------------------------------------------------------------- labels
def label_line(model, id=None) -> html.P:
    """The line under a result naming its database."""
    kwargs = {"id": id} if id else {}
    return html.P(["Database: ", html.Span(model.label, className="pk-db-name")], className="pk-db-label", **kwargs)
