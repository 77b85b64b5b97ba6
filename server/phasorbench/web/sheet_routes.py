"""``POST /api/sheet``: the solved sheet of a circuit, as an HTML file to download.

A router of its own so ``create_app()`` takes it with one ``include_router`` line.
The handler is as thin as the others in ``api.py`` and maps failures the same way:
``CircuitError`` → 422 ``{"errors": [...], "warnings": [...]}``, anything else → 500
with a generic message (the traceback goes to the server log only).
"""

from __future__ import annotations

import asyncio
import functools
import logging

from fastapi import APIRouter, Request
from fastapi.responses import Response
from pydantic import Field

from ..errors import CircuitError
from . import answers
from .api import INTERNAL_ERROR, CircuitBody, error_response
from .jsonsafe import StrictJSONResponse
from .limits import check_size
from .settings import Settings

__all__ = ["SheetBody", "router", "sheet_answer"]

log = logging.getLogger("phasorbench.web")

router = APIRouter()


class SheetBody(CircuitBody):
    """A circuit text and, optionally, the elements the sheet should draw."""

    elements: list[str] | None = Field(
        None, description="elements whose waveforms and phasors the sheet draws (the page's "
                          "selection); left out, each source and reactive element, capped")


def sheet_answer(text: str, elements: list[str] | None, settings: Settings) -> tuple[str, str]:
    """``(html, download name)`` of the sheet of ``text``; raises ``CircuitError``."""
    from .. import workflow
    from ..sheet import render_context, sheet_context

    check_size(text, settings.max_elements)
    result = workflow.solve_text(text, answers.PAGE_FILENAME)
    context = sheet_context(text, answers.PAGE_FILENAME, result=result,
                            waveform_elements=elements, phasor_elements=elements)
    return render_context(context), context["filename"]


@router.post("/api/sheet", summary="The solved sheet of a circuit (a self-contained HTML file)",
             response_class=Response,
             responses={200: {"content": {"text/html": {}},
                              "description": "the sheet, as an attachment"},
                        422: {"description": "the circuit has errors: {\"errors\": [...]}"}})
async def sheet(body: SheetBody, request: Request):
    """The solved sheet: input with its SHA-256, tables, diagrams, checks and cautions.

    Answers ``text/html`` with ``Content-Disposition: attachment`` and a file name
    made from the circuit's title; 422 ``{"errors": [...], "warnings": [...]}`` when
    the circuit has errors (as ``/api/solve``).
    """
    state = request.app.state
    settings = getattr(state, "settings", None) or Settings()
    loop = asyncio.get_running_loop()
    try:
        # The solve pool of the app when it has one (create_app makes it).
        html, filename = await loop.run_in_executor(
            getattr(state, "solve_pool", None),
            functools.partial(sheet_answer, body.netlist, body.elements, settings))
    except CircuitError as exc:
        return StrictJSONResponse(answers.diagnostics_answer(exc.diagnostics), status_code=422)
    except Exception:
        log.exception("request %s %s failed", request.method, request.url.path)
        return error_response(500, INTERNAL_ERROR)
    return Response(html, media_type="text/html; charset=utf-8", headers={
        "Content-Disposition": f'attachment; filename="{filename}"',
        "X-Content-Type-Options": "nosniff",
        "Cache-Control": "no-store",
    })
