"""The app's name and words of our own: the header and the page title say what phasekit does, and no
word of another program's name describes it (in the served page, the command-line help or the README)."""

from __future__ import annotations

import urllib.request
from pathlib import Path

import pytest
from playwright.sync_api import expect

from webapp.layout import PAGE_TITLE, SUBTITLE

pytestmark = pytest.mark.app
ROOT = Path(__file__).resolve().parents[2]
# words that belong to the names of existing programs of this field and must not describe phasekit
FORBIDDEN = ("workbench",)


def test_header_and_title_show_our_words(page):
    expect(page.locator("h1")).to_contain_text(SUBTITLE)
    assert page.title() == PAGE_TITLE
    assert "crystallization" in page.title()


def test_served_page_help_and_readme_avoid_other_programs_words(app_url, page, capsys):
    from phasekit.cli.main import main

    with urllib.request.urlopen(app_url, timeout=30) as resp:
        served = resp.read().decode("utf-8")
    rendered = page.content()
    with pytest.raises(SystemExit):
        main(["--help"])
    cli_help = capsys.readouterr().out
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "phasekit" in cli_help and "phasekit" in readme and "phasekit" in rendered
    for text, where in ((served, "served page"), (rendered, "rendered page"), (cli_help, "phasekit --help"),
                        (readme, "README.md")):
        for word in FORBIDDEN:
            assert word not in text.lower(), f"{word!r} in the {where}"
