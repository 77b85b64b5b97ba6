"""Helpers shared by the tests: contract phasors as complex numbers, polar values."""

from __future__ import annotations

import cmath

from phasorbench.workflow import solve_text


def phasor(d: dict) -> complex:
    """A contract phasor dict as a complex number."""
    return complex(d["re"], d["im"])


def solve(text: str) -> dict:
    return solve_text(text, "<test>")


def polar(mag: float, deg: float) -> complex:
    return cmath.rect(mag, cmath.pi * deg / 180.0)


def current(result: dict, name: str) -> complex:
    return phasor(result["elements"][name]["current"])


def voltage(result: dict, name: str) -> complex:
    return phasor(result["elements"][name]["voltage"])


def node(result: dict, name: str) -> complex:
    return phasor(result["nodes"][name])
