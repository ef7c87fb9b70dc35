"""The demo scenario: the invented Saltmarsh Flats solar salt works (files in webapp/demo/)."""

from __future__ import annotations

import copy
import json
from functools import lru_cache
from pathlib import Path

from webapp import uploads

DEMO_DIR = Path(__file__).resolve().parent / "demo"
ANALYSES_FILE = DEMO_DIR / "saltmarsh_flats_analyses.csv"
SESSION_FILE = DEMO_DIR / "saltmarsh_flats_session.json"


@lru_cache(maxsize=1)
def _analyses() -> dict:
    return uploads.read_analyses(ANALYSES_FILE.read_bytes(), ANALYSES_FILE.name)


@lru_cache(maxsize=1)
def _session() -> dict:
    data = json.loads(SESSION_FILE.read_text(encoding="utf-8"))
    if data.get("analyses") == "demo":
        data["analyses"] = _analyses()
    return data


def demo_session() -> dict:
    """The inputs of the demo session (a fresh copy)."""
    return copy.deepcopy(_session())


def demo_analyses() -> dict:
    """The demo table of analyses, as read by :func:`webapp.uploads.read_analyses`."""
    return copy.deepcopy(_analyses())
