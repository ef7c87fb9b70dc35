"""Subcommand ``app``: serve the web app."""

from __future__ import annotations

from phasekit.cli import common as c


def _app(args) -> int:
    try:
        from webapp.app import run
    except ImportError as exc:
        raise c.Unavailable(f"app: the web app is not installed ({exc})") from None
    run(host=args.host, port=args.port)
    return c.EXIT_OK


def register(sub) -> None:
    p = c.add_parser(sub, "app", "serve the web app", "Serve the phasekit web app.",
                     ["phasekit app", "phasekit app --port 8050"])
    p.add_argument("--host", default="127.0.0.1", help="address to bind (default 127.0.0.1, loopback only)")
    p.add_argument("--port", type=int, default=8050, help="port (default 8050)")
    p.set_defaults(func=_app, returns_code=True)
