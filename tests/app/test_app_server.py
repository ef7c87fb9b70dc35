"""The server binds to the loopback interface unless told otherwise."""

from __future__ import annotations

import inspect
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from pkapp import free_port, wait_for

pytestmark = pytest.mark.app
ROOT = Path(__file__).resolve().parents[2]


def _listening(port: int) -> set[str]:
    """Local addresses (hex, as in /proc/net/tcp) listening on ``port``."""
    out = set()
    for table in ("/proc/net/tcp", "/proc/net/tcp6"):
        if not os.path.exists(table):
            continue
        with open(table) as f:
            next(f)
            for line in f:
                parts = line.split()
                addr, state = parts[1], parts[3]
                ip, p = addr.rsplit(":", 1)
                if int(p, 16) == port and state == "0A":
                    out.add(ip)
    return out


def test_defaults_are_loopback():
    from phasekit.cli.main import build_parser
    from webapp.app import run

    assert inspect.signature(run).parameters["host"].default == "127.0.0.1"
    assert build_parser().parse_args(["app"]).host == "127.0.0.1"
    assert build_parser().parse_args(["app"]).port == 8050


def test_phasekit_app_listens_on_127_0_0_1_only():
    port = free_port()
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.Popen([sys.executable, "-m", "phasekit.cli.main", "app", "--port", str(port)], cwd=ROOT,
                            env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        wait_for(f"http://127.0.0.1:{port}/", timeout=90)
        time.sleep(0.2)
        assert _listening(port) == {"0100007F"}  # 127.0.0.1, nothing else
    finally:
        proc.send_signal(signal.SIGINT)
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
