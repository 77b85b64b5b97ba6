"""The studies' JSON routes (thin handlers and their request models): ``POST /api/sweep``.

Bad probes and ranges answer 422 in the language's error shape (``api.run_job``); the
work of one sweep is bounded by points × unknowns (``MAX_SWEEP_WORK``), said in the error.
"""

from __future__ import annotations

from fastapi import Request
from pydantic import Field

from ..errors import CircuitError, Diagnostic
from ..model import VOLTAGE_KINDS
from . import api
from .answers import _read
from .settings import Settings

#: Largest points × unknowns of one sweep request.
MAX_SWEEP_WORK = 1_000_000


class SweepBody(api.CircuitBody):
    """A circuit text, the probes to observe and optionally the range."""

    probes: list[str] = Field(description="probes: V(n), V(a, b), I(E), Z(a, b), Z(n), X/Y")
    start: float | None = Field(None, alias="from", description="lowest frequency, Hz")
    stop: float | None = Field(None, alias="to", description="highest frequency, Hz")
    points: int | None = Field(None, description="number of frequencies (2 to 100,000)")
    spacing: str | None = Field(None, description="log (default) or linear")


def sweep_answer(text: str, ask: dict, settings: Settings) -> dict:
    """The sweep JSON of studies.md, after the work bound."""
    from ..studies.sweep import DEFAULT_POINTS, run_sweep
    circuit = _read(text, settings)
    unknowns = len(circuit.nodes()) - 1 + sum(
        e.kind in VOLTAGE_KINDS or e.kind == "transformer"
        for e in circuit.elements.values())
    points = ask.get("points") or DEFAULT_POINTS
    if isinstance(points, int) and points * max(1, unknowns) > MAX_SWEEP_WORK:
        raise CircuitError([Diagnostic(
            f"this sweep is {points:,} points × {unknowns:,} unknowns, above the server's "
            f"limit of {MAX_SWEEP_WORK:,} points × unknowns",
            f"use at most {MAX_SWEEP_WORK // max(1, unknowns):,} points for this circuit, "
            "or run 'phasorbench sweep' on the command line")])
    return run_sweep(circuit, ask["probes"], ask.get("start"), ask.get("stop"),
                     ask.get("points"), ask.get("spacing"))


async def sweep(body: SweepBody, request: Request):
    """Frequency response of probes: ``frequencies_hz``, ``probes`` (re, im, mag, deg per
    point, null where undefined), ``resonances``, ``warnings``; 422 for bad input."""
    ask = {"probes": body.probes, "start": body.start, "stop": body.stop,
           "points": body.points, "spacing": body.spacing}
    return await api.run_job(request, sweep_answer, body.netlist, ask)
