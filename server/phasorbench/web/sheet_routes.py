"""``POST /api/sheet``: the solved sheet of a circuit, as an HTML file to download.

A router of its own so ``create_app()`` takes it with one ``include_router`` line.
The handler is as thin as the others in ``api.py`` and maps failures the same way:
``CircuitError`` → 422 ``{"errors": [...], "warnings": [...]}``, anything else → 500
with a generic message (the traceback goes to the server log only).
"""

from __future__ import annotations

import logging

from typing import Literal

from fastapi import APIRouter, Request
from fastapi.responses import Response
from pydantic import BaseModel, Field

from . import api, answers
from .api import CircuitBody, CorrectionAsk, PortAsk, Text
from .jsonsafe import SlicedResponse, utf8
from .limits import check_size
from .settings import Settings
from .study_routes import FormulaAsk, check_sweep_work
from .tolerance_routes import ToleranceAsk, check_work

__all__ = ["CorrectionAsk", "PortAsk", "SheetBody", "router", "sheet_answer"]

log = logging.getLogger("phasorbench.web")

router = APIRouter()


class HarmonicsAsk(BaseModel):
    """The harmonic study as ``POST /api/harmonics`` takes it, without the circuit."""

    pcc: str | None = None
    nominal: float | None = None
    rated: dict[str, float] | None = None
    node: str | None = None
    element: str | None = None


class SweepAsk(BaseModel):
    """The frequency response as ``POST /api/sweep`` takes it, without the circuit, and
    the magnitude scale the picture shows."""

    model_config = api.STRICT

    probes: list[Text] = Field(min_length=1, description="probes: V(n), V(a, b), I(E), "
                                                          "Z(a, b), Z(n), X/Y")
    start: float | None = Field(None, alias="from", description="lowest frequency, Hz")
    stop: float | None = Field(None, alias="to", description="highest frequency, Hz")
    points: int | None = Field(None, description="number of frequencies (2 to 100,000)")
    spacing: Text | None = Field(None, description="log (default) or linear")
    magnitude: Literal["auto", "db", "units"] = Field(
        "auto", description="magnitude scale of the picture: dB, the probes' units, or auto")

    def ask(self) -> dict:
        return {"probes": self.probes, "from": self.start, "to": self.stop,
                "points": self.points, "spacing": self.spacing, "magnitude": self.magnitude}


class SheetBody(CircuitBody):
    """A circuit text and, optionally, what else the sheet should show."""

    elements: list[Text] | None = Field(
        None, description="elements whose waveforms and phasors the sheet draws (the page's "
                          "selection); left out, each source and reactive element, capped")
    correct: CorrectionAsk | None = Field(
        None, description="add a power-factor correction, as the page's correction panel "
                          "asks for it")
    port: PortAsk | None = Field(None, description="add the Thevenin and Norton equivalents "
                                                   "seen from two nodes")
    tolerance: ToleranceAsk | None = Field(
        None, description="add a tolerance study, as the page's tolerance tab asks for it")
    formula: FormulaAsk | None = Field(
        None, description="add a formula of a probe, as the page's formula tab asks for it")
    harmonics: HarmonicsAsk | None = Field(
        None, description="add the harmonic study, as the page's harmonics tab asks for it")
    sweep: SweepAsk | None = Field(
        None, description="add the frequency response, as the page's frequency-response tab "
                          "asks for it")
    show: Literal["rms", "peak"] | None = api.SHOW_FIELD


def sheet_answer(body: SheetBody, settings: Settings) -> tuple[str, str]:
    """``(html, download name)`` of the sheet ``body`` asks for; raises ``CircuitError``."""
    from .. import workflow
    from ..presentation.amplitudes import shown_as
    from ..sheet import render_context, sheet_context
    from ..sheet.powertools import run_power_tools
    from ..sheet.formula import formula_section
    from ..sheet.harmonics import harmonics_section
    from ..sheet.sweep import sweep_section
    from ..sheet.tolerance import tolerance_section

    text, name = body.netlist, answers.PAGE_FILENAME
    check_size(text, settings.max_elements)
    result = shown_as(workflow.solve_text(text, name), body.show)
    correct = body.correct.model_dump() if body.correct else None
    port = (body.port.a, body.port.b) if body.port else None
    tools = run_power_tools(text, name, correct=correct, port=port)
    if body.tolerance:
        check_work(workflow.read_circuit(text, name), body.tolerance.model_dump())
    if body.sweep:
        check_sweep_work(workflow.read_circuit(text, name), body.sweep.points)
    context = sheet_context(text, name, result=result, waveform_elements=body.elements,
                            phasor_elements=body.elements, **tools,
                            tolerance=tolerance_section(
                                text, name, body.tolerance.model_dump()
                                if body.tolerance else None),
                            formula=formula_section(
                                text, name, body.formula.model_dump()
                                if body.formula else None),
                            harmonics=harmonics_section(
                                text, name, body.harmonics.model_dump()
                                if body.harmonics else None),
                            sweep=sweep_section(text, name, body.sweep.ask()
                                                if body.sweep else None))
    return render_context(context), context["filename"]


def _encoded_sheet(body, settings) -> tuple[bytes, str]:
    """``sheet_answer`` with the HTML as UTF-8 bytes, encoded in the job's worker thread
    (as ``api.run_job`` does for JSON), not on the event loop."""
    html, filename = sheet_answer(body, settings)
    return utf8(html), filename


@router.post("/api/sheet", summary="The solved sheet of a circuit (a self-contained HTML file)",
             response_class=Response,
             responses={**api.ERROR_RESPONSES,
                        200: {"content": {"text/html": {}},
                              "description": "the sheet, as an attachment"}})
async def sheet(body: SheetBody, request: Request):
    """The solved sheet: input with its SHA-256, tables, diagrams, checks and cautions.

    Answers ``text/html`` with ``Content-Disposition: attachment`` and a file name
    made from the circuit's title; 422 ``{"errors": [...], "warnings": [...]}`` when
    the circuit has errors (as ``/api/solve``).
    """
    # a sheet with a sweep is many solves: the large lane, as POST /api/sweep
    answer, failed = await api.run_guarded(request, _encoded_sheet, body,
                                           request.app.state.settings, text=body.netlist,
                                           heavy=body.sweep is not None)
    if failed is not None:
        return failed
    html, filename = answer
    return SlicedResponse(html, media_type="text/html; charset=utf-8", headers={
        "Content-Disposition": f'attachment; filename="{filename}"',
        "X-Content-Type-Options": "nosniff",
        "Cache-Control": "no-store",
    })
