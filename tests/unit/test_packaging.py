"""The wheel must carry every sub-package and the database."""

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def test_every_package_is_listed_in_pyproject():
    listed = set(tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "phasekit").rglob("__init__.py")}
    found |= {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "webapp").rglob("__init__.py")}
    found.add("phasekit.data")
    assert found <= listed, f"missing from pyproject packages: {sorted(found - listed)}"


def test_database_files_match_package_data_patterns():
    conf = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]["package-data"]
    patterns = conf["phasekit.data"]
    for f in (ROOT / "data").rglob("*"):
        if f.is_file() and f.suffix in {".csv", ".toml", ".json"}:
            rel = f.relative_to(ROOT / "data")
            assert any(rel.match(p) for p in patterns), f"{rel} would not be shipped"
