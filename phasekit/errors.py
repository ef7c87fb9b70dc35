"""The exception family of phasekit.

Every error raised on bad input names the field, the value and what would be
accepted, so that a user (or the app and the CLI, which show the message as it
is) can correct the input without reading a traceback.
"""

from __future__ import annotations

import warnings


class PhasekitError(Exception):
    """Base class of every error phasekit raises on purpose."""


class InputError(PhasekitError, ValueError):
    """A value given by the user cannot be used.

    Parameters
    ----------
    field : str
        Name of the argument, column or key that holds the bad value.
    value : object
        The value as given.
    expected : str
        What would be accepted.
    """

    def __init__(self, field: str, value, expected: str):
        self.field = field
        self.value = value
        self.expected = expected
        super().__init__(f"{field}: got {value!r}; expected {expected}")


class RangeError(InputError):
    """A value lies outside the range in which the database holds parameters."""


class ConvergenceError(PhasekitError, RuntimeError):
    """A solver did not converge; ``state`` holds what it had reached."""

    def __init__(self, message: str, state: dict | None = None):
        self.state = state or {}
        super().__init__(message)


class ValidityWarning(UserWarning):
    """A result lies outside the validity range of a parameter it used."""


class AnalysisWarning(UserWarning):
    """An analysis is doubtful (charge imbalance, a density far from the model's)."""


def warn_validity(message: str) -> None:
    """Emit a :class:`ValidityWarning` (shown once per message by Python)."""
    warnings.warn(message, ValidityWarning, stacklevel=3)
