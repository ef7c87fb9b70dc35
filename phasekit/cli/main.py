"""Entry point of the ``phasekit`` command.

Each group of subcommands lives in its own module (``cmd_*.py``) with a ``register(sub)``
function; a subcommand returns a :class:`~phasekit.cli.common.Report` (written by
:func:`~phasekit.cli.common.emit`) or, for ``batch`` and ``app``, an exit code. Errors the user
can fix print one line, ``phasekit <command>: error: <message>``, and give a non-zero exit code
(see :data:`~phasekit.cli.common.EXIT_CODES_TEXT`); no traceback unless PHASEKIT_DEBUG=1.
"""

from __future__ import annotations

import argparse
import os
import re
import sys
import textwrap
import warnings

from phasekit import __version__
from phasekit.cli import common as c

_GROUPS = ("cmd_solubility", "cmd_brine", "cmd_colligative", "cmd_paths", "cmd_diagrams", "cmd_fit", "cmd_uncertainty", "cmd_kinetics",
           "cmd_batch", "cmd_app")
#: order of the subcommands in --help
ORDER = ("solubility", "polytherm", "saturation", "equilibrate", "colligative", "isotherm", "evaporate", "cool", "mix", "ponds",
         "convert", "leach", "fit", "onset", "batch", "app")
#: warnings of third-party packages that say nothing to a user of phasekit (only warnings raised
#: from phasekit's own code are shown; these are dropped even then)
_NOISE = ("Using extrapolated values",)
_PACKAGE_DIR = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def build_parser() -> argparse.ArgumentParser:
    import importlib

    parser = argparse.ArgumentParser(
        prog="phasekit",
        description=textwrap.fill("Solid–liquid equilibria of salt brines with the Pitzer model: solubilities, "
                                  "saturation states, equilibria, phase diagrams, evaporation and cooling paths, conversion "
                                  "cycles, pond trains, fits, uncertainties and batch runs.", 100),
        epilog="Run 'phasekit COMMAND --help' for the options and an example of each command.\n"
               "Temperatures are in °C; the units of an analysis are always named (--units).\n"
               "Predictions are estimates to be confirmed by laboratory tests.\n\n" + c.exit_codes_text(),
        formatter_class=c.HelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"phasekit {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in _GROUPS:
        importlib.import_module(f"phasekit.cli.{name}").register(sub)
    # list the subcommands in a reading order
    actions = {a.dest: a for a in sub._choices_actions}
    sub._choices_actions[:] = [actions[n] for n in ORDER if n in actions] + \
        [a for n, a in actions.items() if n not in ORDER]
    return parser


def _say(command: str, kind: str, message: str) -> None:
    text = " ".join(str(message).split())
    print(f"phasekit {command}: {kind}: {text}", file=sys.stderr)


_NUMBER = re.compile(r"[-+]?\d+(?:\.\d+)?(?:e[-+]?\d+)?")


def _warnings_out(command: str, caught, extra) -> None:
    """Print each warning once; warnings that differ only in their numbers (one per step of a path)
    are shown once with a count."""
    shapes: dict = {}
    ours = [str(w.message) for w in caught if str(w.filename).startswith(_PACKAGE_DIR)]
    for text in ours + [str(x) for x in extra]:
        if any(n in text for n in _NOISE):
            continue
        key = _NUMBER.sub("#", text.split(" above the highest in the data of ")[0])
        first, texts = shapes.setdefault(key, (text, set()))
        texts.add(text)
    for first, texts in shapes.values():
        more = len(texts) - 1
        _say(command, "warning", first + (f" (and {more} similar warning{'s' if more > 1 else ''})" if more else ""))


#: library argument names that a command line sets with an option of another spelling
_OPTION_OF = {"scheduler": "--scheduler", "sheet": "--sheet", "overlay": "--overlay", "overlays": "--overlay",
              "chunk_rows": "--chunk-rows", "workers": "--workers", "id_column": "--id-column",
              "density_column": "--density-column", "ignore_columns": "--ignore-columns", "pressure_kpa": "--pressure"}


def _in_option_words(err):
    """An input error of the library named by the option the user typed (``scheduler`` -> ``--scheduler``)."""
    from phasekit.errors import InputError

    if isinstance(err, InputError) and err.field in _OPTION_OF:
        return type(err)(_OPTION_OF[err.field], err.value, err.expected)
    return err


def main(argv: list[str] | None = None) -> int:
    """Run the ``phasekit`` command; returns its exit code."""
    from phasekit.errors import ConvergenceError, PhasekitError

    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return c.EXIT_OK
    args.notes = []
    command = args.command
    debug = os.environ.get("PHASEKIT_DEBUG", "") not in ("", "0")
    caught: list = []
    report = None
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            c.check_output_path(args)
            if getattr(args, "plot", None):
                c.check_plot_path(args.plot, args)
            result = args.func(args)
            if getattr(args, "returns_code", False):
                code = int(result)
            else:
                report = result
                if hasattr(args, "overlay"):  # the database in use is named on every result
                    report.scalars.setdefault("database", c.model_of(args).label)
                report.warnings = list(dict.fromkeys(list(args.notes) + list(report.warnings)))
                c.emit(report, args)
                code = report.exit_code or c.EXIT_OK
    except ConvergenceError as err:
        code = c.EXIT_CONVERGENCE
        _warnings_out(command, caught, args.notes)
        _say(command, "convergence error", err)
        return code
    except PhasekitError as err:
        _warnings_out(command, caught, args.notes)
        _say(command, "error", _in_option_words(err))
        return c.EXIT_INPUT
    except c.Unavailable as err:
        _say(command, "not available", err)
        return c.EXIT_UNAVAILABLE
    except KeyboardInterrupt:
        _say(command, "error", "interrupted")
        return 130
    except BrokenPipeError:
        return c.EXIT_OK
    except Exception as err:  # a bug: one line, the traceback on request
        if debug:
            raise
        _say(command, "internal error", f"{type(err).__name__}: {err} (set PHASEKIT_DEBUG=1 for the traceback, and "
                                        "please report it with the command line)")
        return c.EXIT_INTERNAL
    extra = list(report.warnings) if report is not None else list(args.notes)
    _warnings_out(command, caught, extra)
    if report is not None and report.stop_note:
        _say(command, "partial result", report.stop_note)
    return code


if __name__ == "__main__":
    sys.exit(main())
