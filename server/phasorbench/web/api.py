"""The JSON API's handlers: read the request, run one core job off the event loop, answer.

Every handler is a few lines; the work is in ``answers.py`` (plain functions, run in a
worker thread) and the mapping of failures to HTTP codes is here, once:
``CircuitError`` → 422 with ``{"errors": [...], "warnings": [...]}``, anything else →
500 with a generic message and the traceback in the server log only.
"""

from __future__ import annotations

import asyncio
import functools
import logging

from fastapi import Request
from pydantic import BaseModel, Field

from ..errors import CircuitError
from . import answers
from .jsonsafe import StrictJSONResponse
from .samples import list_samples
from .settings import MAX_PICTURE_PX, MIN_PICTURE_PX

log = logging.getLogger("phasorbench.web")

INTERNAL_ERROR = ("internal error: the server could not finish this request "
                  "(the details are in the server's log)")


class CircuitBody(BaseModel):
    """A circuit text in the project's circuit language."""

    netlist: str = Field(description="the circuit text, as typed in the editor or kept in a .circuit file")


class ViewBody(CircuitBody):
    """A circuit text, the elements a picture should show, and optionally its size."""

    elements: list[str] = Field(description="element names, as in the circuit's results")
    width: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                              description="picture width in px (the page sends its panel's width "
                                          "so text is drawn at its true size)")
    height: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                               description="picture height in px")

    def size(self) -> dict:
        return {k: v for k, v in (("width", self.width), ("height", self.height)) if v is not None}


def error_item(message: str, hint: str = "") -> dict:
    return {"line": None, "column": None, "length": 1, "severity": "error",
            "message": message, "hint": hint}


def error_response(status: int, message: str, hint: str = "") -> StrictJSONResponse:
    return StrictJSONResponse({"errors": [error_item(message, hint)], "warnings": []},
                              status_code=status)


async def run_job(request: Request, job, *args) -> StrictJSONResponse:
    """Run ``job(*args, settings)`` in the solve pool and map its outcome to a response."""
    state = request.app.state
    loop = asyncio.get_running_loop()
    try:
        answer = await loop.run_in_executor(
            state.solve_pool, functools.partial(job, *args, state.settings))
    except CircuitError as exc:
        return StrictJSONResponse(answers.diagnostics_answer(exc.diagnostics), status_code=422)
    except Exception:
        log.exception("request %s %s failed", request.method, request.url.path)
        return error_response(500, INTERNAL_ERROR)
    return StrictJSONResponse(answer)


async def check(body: CircuitBody, request: Request):
    """Errors and warnings of a circuit, without solving (for live checking as one types).

    Always 200: ``{"errors": [...], "warnings": [...]}``, each item ``{"line", "column",
    "length", "severity", "message", "hint"}``.
    """
    return await run_job(request, answers.check_answer, body.netlist)


async def solve(body: CircuitBody, request: Request):
    """Solve a circuit: the results contract plus a ``display`` field of formatted text.

    422 ``{"errors": [...], "warnings": [...]}`` when the circuit has errors.
    """
    return await run_job(request, answers.solve_answer, body.netlist)


async def waveforms(body: ViewBody, request: Request):
    """v(t), i(t), p(t) of the named elements over two periods, samples and SVG each."""
    return await run_job(request, answers.waveforms_answer, body.netlist, body.elements,
                         body.size())


async def phasors(body: ViewBody, request: Request):
    """The phasor diagram (SVG) of the named elements' voltages and currents."""
    return await run_job(request, answers.phasors_answer, body.netlist, body.elements,
                         body.size())


async def samples(request: Request):
    """The sample circuits: ``[{"name", "title", "netlist"}]``."""
    return StrictJSONResponse(list_samples(request.app.state.settings.samples_dir))
