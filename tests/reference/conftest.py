"""Fixtures of the lcapy reference tests."""

import pytest

from .lcapy_oracle import load_lcapy, solve_with_lcapy


@pytest.fixture(scope="session")
def lcapy_solve():
    """``solve_with_lcapy``, with lcapy imported once per session (about a second).

    Forked solves inherit the imported module, so no child pays for the import again.
    """
    load_lcapy()
    return solve_with_lcapy
