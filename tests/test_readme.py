"""The README documents what the code declares: server settings, cautions, commands.

The source of truth is the code (settings.py, cautions.py, the CLI parser); the README
must not drift from it.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from phasorbench.presentation.cautions import CAUTIONS, HARMONIC_CAUTIONS
from phasorbench.cli import build_parser
from phasorbench.web.settings import SETTINGS_HELP

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")


@pytest.mark.parametrize("setting", sorted(SETTINGS_HELP))
def test_every_server_setting_is_documented(setting):
    assert f"`{setting}`" in README


@pytest.mark.parametrize("title", [title for title, _ in CAUTIONS + HARMONIC_CAUTIONS])
def test_every_caution_is_in_the_readme(title):
    assert title in README


def test_every_command_is_documented():
    commands = build_parser()._subparsers._group_actions[0].choices
    for name in commands:
        assert f"phasorbench {name}" in README, name


def test_the_two_setup_commands_and_ci_agree():
    # the README's test command is what CI runs
    assert "bash .ci/run" in README
    ci = (ROOT / ".ci" / "run").read_text()
    assert ".venv/bin/python -m pytest" in ci and ".venv/bin/python -m pytest" in README
    assert "phasorbench serve --sample" in README
    assert (ROOT / "samples" / "bakery-feeder.circuit").exists()


def test_the_settings_table_names_exactly_the_serve_options():
    # common practice, no source: README and `serve --help` must not disagree — every
    # option the table names exists, and every option of serve (but --open and --help)
    # is in the table
    import re
    serve = build_parser()._subparsers._group_actions[0].choices["serve"]
    options = {o for a in serve._actions for o in a.option_strings if o.startswith("--")}
    start = README.index("Server settings")
    table = README[start:README.index("\n\n", README.index("| setting", start))]
    named = set(re.findall(r"\| `(--[a-z-]+)[^`]*` \|", table))
    assert named <= options, named - options
    assert options - {"--open", "--help"} <= named, options - {"--open", "--help"} - named


def test_the_limits_table_states_the_server_defaults():
    # common practice, no source: the README's limits are the code's numbers, not old ones
    from phasorbench.web.settings import MAX_BODY_BYTES, MAX_ELEMENTS
    start = README.index("### Limits")
    table = README[start:README.index("\n\n", README.index("| limit", start))]
    assert f"| {MAX_ELEMENTS:,} (`max_elements`" in table
    assert f"| {MAX_BODY_BYTES / 2**20:.1f} MB (`max_body_bytes`" in table
