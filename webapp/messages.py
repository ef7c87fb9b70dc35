"""Messages shown next to the fields: errors, warnings and notes, never a traceback.

Errors raised by the library on purpose (:class:`phasekit.errors.PhasekitError`) already name the
field, the value and what would be accepted; they are shown as they are. Anything else is logged
on the server with its traceback and shown as a short sentence.
"""

from __future__ import annotations

import logging

from dash import html

from phasekit.errors import PhasekitError

log = logging.getLogger("phasekit.webapp")

KEPT = "The previous result is kept, greyed out: it was computed for the previous inputs."


class UserInputProblem(ValueError):
    """A problem with a value typed or uploaded in the browser (not one of the library's)."""


def describe(exc: BaseException, what: str = "this step") -> str:
    """A one-line message for an exception (logged with its traceback if unexpected)."""
    if isinstance(exc, PhasekitError | UserInputProblem):
        return str(exc)
    log.exception("unexpected error in %s", what)
    return (f"Unexpected problem in {what} ({type(exc).__name__}); the details are in the server log. "
            "Please check the input.")


def error(text: str, keep_note: bool = True) -> html.Div:
    """A visible error message (role=alert), with the note that the previous result is kept."""
    body = [html.Span("⚠ ", className="pk-icon"), html.Span(text, className="pk-error-text")]
    if keep_note:
        body.append(html.Span(" " + KEPT, className="pk-kept"))
    return html.Div(body, className="pk-msg pk-error", role="alert")


def warnings_box(items, title: str = "Read before use") -> html.Div | None:
    """A list of validity or analysis warnings (None when there are none)."""
    items = [str(w) for w in dict.fromkeys(items or [])]
    if not items:
        return None
    return html.Div([html.Div(title, className="pk-warn-title"), html.Ul([html.Li(w) for w in items])],
                    className="pk-msg pk-warn")


def note(text) -> html.Div:
    """A neutral note."""
    return html.Div(text, className="pk-msg pk-note")
