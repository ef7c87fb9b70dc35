"""The one validation layer of phasekit: checks of user values shared by every entry point.

The library, the command line, batch runs and the app call these helpers, so that a value is
judged by the same rules and refused with the same words wherever it is typed. Every check raises
:class:`~phasekit.errors.InputError` naming the field as the user wrote it, the value, and what is
accepted. Rules:

- a boolean is not a number (``True`` is not a molality of 1);
- a string is not a list of names (``"halite"`` is not ``["h", "a", ...]``);
- numbers are finite and within the physical range of the field.
"""

from __future__ import annotations

import math
import numbers
import re
from collections.abc import Iterable, Mapping

import numpy as np

from phasekit.errors import InputError, RangeError

#: largest molality accepted from the user, mol/kg water: fifty times the model's validity limit of
#: ionic strength, and more than any salt dissolves (a larger value is a slip of units or digits; it
#: would overflow the activity sums)
MAX_MOLALITY = 1000.0
#: deepest nesting accepted in user documents (session files, JSON from the browser)
MAX_NESTING = 32


def is_number(value) -> bool:
    """A real number that is not a boolean (text is not a number here)."""
    return isinstance(value, numbers.Real) and not isinstance(value, bool | np.bool_)


#: "31,000", "1,234,567.5" and "31 000": digits grouped by threes with commas (or spaces); a comma
#: that does not group three digits ("12,5") is not read as a decimal comma here but refused
_GROUPED = re.compile(r"^[+-]?\d{1,3}(?:(?P<sep>[, \u00a0\u202f])\d{3})(?:(?P=sep)\d{3})*(?:\.\d*)?$")


def decimal_text(text: str) -> float:
    """A float from numeric text, with thousands separators allowed ("31,000" -> 31000.0).

    Raises ValueError for text that is not a number (including a lone decimal comma such as "12,5",
    which is ambiguous in a text field: write 12.5)."""
    t = text.strip()
    if _GROUPED.match(t):
        t = re.sub(r"[, \u00a0\u202f]", "", t)
    return float(t)


def number(field: str, value, expected: str = "a number", *, lo: float | None = None, hi: float | None = None,
           lo_open: bool = False, text: bool = False, range_error: bool = False) -> float:
    """A finite float from ``value``, within ``[lo, hi]`` (``lo`` excluded if ``lo_open``).

    ``text=True`` also accepts numeric text (cells of tables, form fields). Booleans, None, NaN and
    infinities are refused. A value outside the bounds raises :class:`RangeError` when
    ``range_error`` (outside the database's range), else :class:`InputError`.
    """
    if isinstance(value, str) and text:
        try:
            x = decimal_text(value)
        except ValueError:
            raise InputError(field, value, expected) from None
    elif is_number(value):
        x = float(value)
    else:
        raise InputError(field, value, expected)
    if not math.isfinite(x):
        raise InputError(field, value, expected)
    below = lo is not None and (x <= lo if lo_open else x < lo)
    above = hi is not None and x > hi
    if below or above:
        raise (RangeError if range_error else InputError)(field, value, expected)
    return x


def whole_number(field: str, value, lo: int = 1, hi: int | None = None) -> int:
    """An int (not a bool, not a float) from ``lo`` to ``hi``."""
    ok = isinstance(value, int | np.integer) and not isinstance(value, bool | np.bool_)
    expected = f"a whole number >= {lo}" + (f" and <= {hi}" if hi is not None else "")
    if not ok or value < lo or (hi is not None and value > hi):
        raise InputError(field, value, expected)
    return int(value)


def names(field: str, value, what: str = "names", allow_none: bool = True) -> list[str]:
    """A list of names from a list, tuple or set of strings; a lone string is refused.

    ``"halite"`` would otherwise be read one character at a time; write ``["halite"]``.
    """
    if value is None and allow_none:
        return []
    if isinstance(value, str | bytes):
        raise InputError(field, value, f"a list of {what}, not a string (write [{value!r}])")
    if isinstance(value, Mapping) or not isinstance(value, Iterable):
        raise InputError(field, value, f"a list of {what}")
    out = list(value)
    for v in out:
        if not isinstance(v, str) or not v.strip():
            raise InputError(field, v, f"a list of {what} (each a non-empty string)")
    return out


def paths_or_documents(field: str, value, what: str) -> list:
    """A list of file paths or parsed documents; a lone string or path is refused."""
    import os

    if value is None:
        return []
    if isinstance(value, str | bytes | os.PathLike):
        raise InputError(field, str(value), f"a list of {what}, not a single string (write [{str(value)!r}])")
    if isinstance(value, Mapping) or not isinstance(value, Iterable):
        raise InputError(field, type(value).__name__, f"a list of {what}")
    return list(value)


def nesting_depth(obj, limit: int = MAX_NESTING) -> int:
    """Depth of nested lists/dicts of a parsed document, counted without recursion (stops past ``limit``)."""
    depth = 0
    stack = [(obj, 1)]
    while stack:
        item, d = stack.pop()
        if isinstance(item, dict):
            children = item.values()
        elif isinstance(item, list | tuple):
            children = item
        else:
            continue
        depth = max(depth, d)
        if depth > limit:
            return depth
        stack.extend((c, d + 1) for c in children)
    return depth


def scheduler_client(field: str, scheduler, timeout_s: float = 10.0):
    """A Dask client for ``scheduler``: an address (connected within ``timeout_s``) or a client.

    Returns (client, owned): close the client when ``owned``. An address that does not answer is an
    :class:`InputError` naming it.
    """
    if not isinstance(scheduler, str):
        if hasattr(scheduler, "map") and hasattr(scheduler, "gather"):
            return scheduler, False  # a Client, owned by the caller
        raise InputError(field, scheduler, "the address of a Dask scheduler, e.g. tcp://127.0.0.1:8786")
    from dask.distributed import Client

    try:
        return Client(scheduler, timeout=f"{timeout_s:g}s", set_as_default=False), True
    except (OSError, TimeoutError, ValueError, TypeError) as exc:
        raise InputError(field, scheduler, "the address of a running Dask scheduler, e.g. tcp://127.0.0.1:8786 "
                         f"(could not connect: {exc})") from None
