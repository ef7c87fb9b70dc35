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


def test_precomputed_tables_are_shipped():
    conf = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]["package-data"]
    assert (ROOT / "phasekit" / "thermo" / "precomputed.json").is_file()
    assert "precomputed.json" in conf["phasekit.thermo"]


def _modules_after(code: str) -> set:
    import subprocess
    import sys

    probe = code + "\nimport sys\nprint(' '.join(sorted(sys.modules)))\n"
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True, cwd=ROOT)
    return set(out.stdout.split())


def test_import_phasekit_loads_no_plotting_app_or_cluster_package():
    loaded = _modules_after("import phasekit")
    for heavy in ("plotly", "dash", "matplotlib", "dask", "distributed", "openpyxl", "numba"):
        assert heavy not in loaded, f"import phasekit imports {heavy}"
    # the public names still resolve (loaded on first use)
    loaded = _modules_after("import phasekit as pk\nassert pk.Brine.__name__ == 'Brine'\n"
                            "from phasekit import InputError, solubility\nassert callable(solubility)")
    assert "phasekit.chemistry.brine" in loaded


def test_command_help_builds_no_model():
    loaded = _modules_after("from phasekit.cli.main import build_parser\nbuild_parser().format_help()")
    for heavy in ("numba", "phasekit.thermo.kernel", "phasekit.model", "pandas", "plotly", "dask"):
        assert heavy not in loaded, f"phasekit --help imports {heavy}"
