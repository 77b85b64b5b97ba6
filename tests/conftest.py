"""Shared fixtures: the samples folder."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="session")
def samples_dir() -> Path:
    return ROOT / "samples"
