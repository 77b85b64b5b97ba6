"""Shared fixtures: the samples folder, an empty solved-text cache per test."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="session")
def samples_dir() -> Path:
    return ROOT / "samples"


@pytest.fixture(autouse=True)
def fresh_solved_cache():
    """Each test starts with the server's solved-text cache empty (web/solved.py), so a
    test that replaces a core function sees it called."""
    import sys
    answers = sys.modules.get("phasorbench.web.answers")
    if answers is not None:
        answers.SOLVED.clear()
    yield
