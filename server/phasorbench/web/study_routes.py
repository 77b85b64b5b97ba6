"""The studies' routes (thin handlers and their request models): ``POST /api/sweep``
(the sweep JSON; with ``draw``, also the response picture and the page's strings) and
``POST /api/sweep/csv`` (the same sweep as a CSV download), ``POST /api/formula`` (an exact formula);
``POST /api/harmonics`` (the harmonic study).

Bad probes and ranges answer 422 in the language's error shape (``api.run_job``); the
work of one sweep is bounded by points × unknowns (``MAX_SWEEP_WORK``), said in the error.
"""

from __future__ import annotations

from typing import Literal

from fastapi import Request
from pydantic import BaseModel, Field

from ..errors import CircuitError, Diagnostic
from ..model import VOLTAGE_KINDS
from . import api
from .answers import _read
from .jsonsafe import SlicedResponse
from .settings import MAX_PICTURE_PX, MIN_PICTURE_PX, Settings

#: Largest points × unknowns of one sweep request.
MAX_SWEEP_WORK = 1_000_000
#: Largest orders × unknowns of one harmonic study (each order is one full solve).
MAX_HARMONIC_WORK = 2_000_000


class DrawAsk(BaseModel):
    """The response picture a sweep answer should carry."""

    width: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                              description="picture width in px")
    height: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                               description="picture height in px")
    magnitude: Literal["auto", "db", "units"] = Field(
        "auto", description="magnitude scale shown first: dB, the probes' units, or auto "
                            "(dB when every probe is a ratio of like quantities)")


class SweepBody(api.CircuitBody):
    """A circuit text, the probes to observe and optionally the range."""

    probes: list[api.Text] = Field(description="probes: V(n), V(a, b), I(E), Z(a, b), Z(n), X/Y")
    start: float | None = Field(None, alias="from", description="lowest frequency, Hz")
    stop: float | None = Field(None, alias="to", description="highest frequency, Hz")
    points: int | None = Field(None, description="number of frequencies (2 to 100,000)")
    spacing: api.Text | None = Field(None, description="log (default) or linear")
    draw: DrawAsk | None = Field(None, description="add the response picture (svg) and "
                                                   "the page's strings (display)")
    arrays: bool = Field(True, description="false leaves out the per-point arrays "
                                           "(frequencies_hz, each probe's re/im/mag/deg)")

    def ask(self) -> dict:
        return {"probes": self.probes, "start": self.start, "stop": self.stop,
                "points": self.points, "spacing": self.spacing,
                "draw": self.draw.model_dump() if self.draw else None,
                "arrays": self.arrays}


def _unknowns(circuit) -> int:
    return len(circuit.nodes()) - 1 + sum(
        e.kind in VOLTAGE_KINDS or e.kind == "transformer"
        for e in circuit.elements.values())


class HarmonicsBody(api.CircuitBody):
    """A circuit text and, optionally, the PCC, capacitor ratings and the spectra to draw."""

    pcc: str | None = Field(None, description="the node where the utility meets the plant")
    nominal: float | None = Field(None, description="the PCC's nominal (line-to-line) "
                                                    "voltage, V: picks the IEEE 519 row")
    rated: dict[str, float] | None = Field(
        None, description="rated rms voltage of capacitors, by element name, V")
    node: str | None = Field(None, description="the node whose voltage spectrum is drawn")
    element: str | None = Field(None, description="the element whose current spectrum is "
                                                  "drawn")


def harmonics_answer(text: str, ask: dict, settings: Settings) -> dict:
    """The harmonic study's JSON (studies.md) plus its ``display`` strings and charts."""
    from ..presentation.studies.harmonics import chosen, harmonics_display
    from ..studies.harmonics import element_waveforms, run_harmonics
    from ..superposition import source_frequencies
    circuit = _read(text, settings)
    orders, unknowns = len(source_frequencies(circuit)), _unknowns(circuit)
    if orders * max(1, unknowns) > MAX_HARMONIC_WORK:
        raise CircuitError([Diagnostic(
            f"this study is {orders:,} orders × {unknowns:,} unknowns, above the server's "
            f"limit of {MAX_HARMONIC_WORK:,} orders × unknowns",
            "give fewer spectrum orders, or run 'phasorbench harmonics' on the command "
            "line")])
    result = run_harmonics(circuit, ask.get("pcc"), ask.get("nominal"), ask.get("rated"),
                           detail=[ask["element"]] if ask.get("element") else None)
    node, element = chosen(result, ask.get("node"), ask.get("element"))
    samples = element_waveforms(result, element) if element is not None else None
    result["display"] = harmonics_display(result, node, element, samples)
    return result


async def harmonics(body: HarmonicsBody, request: Request):
    """The harmonic study: ``nodes`` (rms, THD, each order), ``elements`` (IEEE 1459
    quantities), ``pcc`` (IEEE 519 limits), ``capacitors`` (IEEE 18 duty, resonance
    order), ``warnings`` and ``display``; 422 for bad input."""
    ask = {"pcc": body.pcc, "nominal": body.nominal, "rated": body.rated,
           "node": body.node, "element": body.element}
    return await api.run_job(request, harmonics_answer, body.netlist, ask)


def check_sweep_work(circuit, points) -> None:
    """Raise ``CircuitError`` when a sweep of ``points`` (None: the circuit's sweep line
    or the default) is past the server's points × unknowns bound."""
    from ..studies.sweep import chosen_points
    unknowns = _unknowns(circuit)
    points = chosen_points(circuit, points)
    if isinstance(points, int) and points * max(1, unknowns) > MAX_SWEEP_WORK:
        raise CircuitError([Diagnostic(
            f"this sweep is {points:,} points × {unknowns:,} unknowns, above the server's "
            f"limit of {MAX_SWEEP_WORK:,} points × unknowns",
            f"use at most {MAX_SWEEP_WORK // max(1, unknowns):,} points for this circuit, "
            "or run 'phasorbench sweep' on the command line")])


def sweep_answer(text: str, ask: dict, settings: Settings) -> dict:
    """The sweep JSON of studies.md, after the work bound."""
    from ..studies.sweep import run_sweep
    circuit = _read(text, settings)
    check_sweep_work(circuit, ask.get("points"))
    return run_sweep(circuit, ask["probes"], ask.get("start"), ask.get("stop"),
                     ask.get("points"), ask.get("spacing"))


def drawn_sweep_answer(text: str, ask: dict, settings: Settings) -> dict:
    """The sweep JSON, with the picture and the page's strings when ``draw`` asks."""
    from ..presentation.drawing.response import response_svg
    from ..presentation.studies.sweep import sweep_display
    result = sweep_answer(text, ask, settings)
    draw = ask.get("draw")
    if draw is not None:
        size = {k: draw[k] for k in ("width", "height") if draw.get(k)}
        result["svg"] = response_svg(result, magnitude=draw.get("magnitude") or "auto",
                                     **size)
        result["display"] = sweep_display(result)
    if not ask.get("arrays", True):
        result.pop("frequencies_hz")
        for data in result["probes"].values():
            for key in ("re", "im", "mag", "deg"):
                data.pop(key)
    return result


def csv_answer(text: str, ask: dict, settings: Settings) -> str:
    from ..presentation.studies.sweep import csv_text
    return csv_text(sweep_answer(text, ask, settings))


async def sweep(body: SweepBody, request: Request):
    """Frequency response of probes: ``frequencies_hz``, ``probes`` (re, im, mag, deg per
    point, null where undefined), ``resonances``, ``warnings``; 422 for bad input."""
    # A sweep is many solves: it runs in the large lane whatever the circuit's size.
    return await api.run_job(request, drawn_sweep_answer, body.netlist, body.ask(), heavy=True)


async def sweep_csv(body: SweepBody, request: Request):
    """The same sweep as ``text/csv`` (one row per frequency: magnitude, angle, re and im
    of every probe), as an attachment; 422 in the JSON error shape for bad input."""
    return await api.run_job(request, csv_answer, body.netlist, body.ask(), heavy=True,
                             respond=_csv_response)


def _csv_response(text: bytes) -> SlicedResponse:
    return SlicedResponse(text, media_type="text/csv; charset=utf-8", headers={
        "Content-Disposition": 'attachment; filename="frequency-response.csv"',
        "X-Content-Type-Options": "nosniff", "Cache-Control": "no-store"})


class FormulaAsk(BaseModel):
    """A formula to derive: the fields of ``POST /api/formula`` after the circuit (the
    sheet asks for one in the same words)."""

    probe: str = Field(description="V(n), V(a, b), I(E), Z(a, b), Z(n) or a ratio X/Y")
    keep: list[str] | None = Field(
        None, description="elements or named values that stay symbols (default: all); the "
                          "others take their exact values from the text")
    solve_for: str | None = Field(
        None, description="an element: solve 'numerator = 0' for it (a balance condition)")


class FormulaBody(api.CircuitBody, FormulaAsk):
    """A circuit text, one probe, and optionally the symbols to keep and an element to
    solve the balance condition for."""


def formula_answer(text: str, ask: dict, settings: Settings) -> dict:
    """The formula JSON of studies.md plus ``display`` (the page's and the sheet's rows)."""
    from ..presentation.studies.formula import formula_display
    from ..studies.formula import PAGE, run_formula
    circuit = _read(text, settings)
    result = run_formula(circuit, ask["probe"], ask.get("keep"), ask.get("solve_for"),
                         time_limit=settings.formula_seconds, spelling=PAGE)
    return dict(result, display=formula_display(result))


async def formula(body: FormulaBody, request: Request):
    """A probe as an exact formula in s: ``formula`` (text, LaTeX, MathML), numerator and
    denominator, ``poles``, ``zeros``, ``solve_for`` (balance conditions), ``check``
    against the numeric solve, ``display``; 422 for bad input or past the size or time
    limit (the error says which)."""
    ask = {"probe": body.probe, "keep": body.keep, "solve_for": body.solve_for}
    # symbolic work may take seconds: the large lane, not the small one
    return await api.run_job(request, formula_answer, body.netlist, ask, heavy=True)
