"""Entry point of the ``phasekit`` command."""

from __future__ import annotations

import argparse
import sys

from phasekit import __version__


def _cmd_app(args) -> int:
    from webapp.app import run

    run(host=args.host, port=args.port)
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="phasekit",
        description="Solid–liquid equilibria of salt brines with the Pitzer model.",
        epilog="Predictions are estimates to be confirmed by laboratory tests.",
    )
    parser.add_argument("--version", action="version", version=f"phasekit {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    app = sub.add_parser("app", help="serve the web app", description="Serve the phasekit web app.",
                         epilog="example: phasekit app --port 8050")
    app.add_argument("--host", default="127.0.0.1", help="address to bind (default 127.0.0.1, loopback only)")
    app.add_argument("--port", type=int, default=8050, help="port (default 8050)")
    app.set_defaults(func=_cmd_app)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return 0
    return args.func(args)


if __name__ == "__main__":
    sys.exit(main())
