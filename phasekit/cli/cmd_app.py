"""Subcommand ``app``: serve the web app."""

from __future__ import annotations

from phasekit.cli import common as c
from phasekit.errors import InputError


def _app(args) -> int:
    try:
        from webapp.app import run
    except ImportError as exc:
        raise c.Unavailable(f"app: the web app is not installed ({exc})") from None
    try:
        run(host=args.host, port=args.port, overlays=list(args.overlay or []),
            allow_hosts=[h.strip() for h in (args.allow_host or []) if h.strip()])
    except InputError as err:  # a bad overlay, before the server starts
        field_name = "--overlay" if err.field in ("overlay", "overlays") else err.field
        raise type(err)(field_name, err.value, err.expected) from None
    return c.EXIT_OK


def register(sub) -> None:
    p = c.add_parser(sub, "app", "serve the web app",
                     "Serve the phasekit web app with the waitress WSGI server, on loopback by default; requests are "
                     "limited in size and must name a known host. With --overlay, its Database menu offers those overlays besides the "
                     "embedded database (and the app starts with them); an overlay can also be uploaded in the app.",
                     ["phasekit app", "phasekit app --port 8050", "phasekit app --overlay works_kcl.toml"])
    p.add_argument("--host", default="127.0.0.1", help="address to bind (default 127.0.0.1, loopback only)")
    p.add_argument("--port", type=int, default=8050, help="port (default 8050)")
    p.add_argument("--allow-host", action="append", metavar="NAME",
                   help="a host name browsers use to reach the app besides 127.0.0.1 and localhost (repeat); "
                   "requests naming any other host are refused")
    c.add_overlay_option(p)
    p.set_defaults(func=_app, returns_code=True)
