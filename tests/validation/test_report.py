"""The committed validation report is the one the database gives now (docs/validation.md is written by
scripts/validation_report.py; run it after any change to data/ and commit the result)."""

import warnings
from pathlib import Path

import pytest

import phasekit as pk
from phasekit.calibration.report import SYSTEMS, build_report, figure_name, render
from phasekit.errors import ValidityWarning

ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.validation
def test_committed_report_is_current():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        text = render(build_report(pk.default_model()), [f"validation/{figure_name(s)}" for s in SYSTEMS])
    committed = (ROOT / "docs" / "validation.md").read_text(encoding="utf-8")
    assert committed == text, "docs/validation.md is stale: run python scripts/validation_report.py and commit it"
    for s in SYSTEMS:
        assert (ROOT / "docs" / "validation" / figure_name(s)).is_file()
