"""The JSON API's handlers: read the request, run one core job off the event loop, answer.

Every handler is a few lines; the work is in ``answers.py`` (plain functions, run in a
worker thread) and the mapping of failures to HTTP codes is here, once:
``CircuitError`` → 422 with ``{"errors": [...], "warnings": [...]}``, anything else →
500 with a generic message and the traceback in the server log only.
"""

from __future__ import annotations

import logging
import re
from typing import Annotated, Literal

from fastapi import Request
from fastapi.responses import Response
from pydantic import AfterValidator, BaseModel, ConfigDict, Field
from pydantic_core import PydanticCustomError

from ..errors import NUMERIC_RANGE_ERRORS, CircuitError, out_of_range
from . import answers, jobs
from .jsonsafe import EncodedJSONResponse, SlicedResponse, StrictJSONResponse, encoded, utf8
from .samples import list_samples
from ..presentation.rows import MAX_WINDOW, ROW_WINDOW
from .settings import MAX_PICTURE_PX, MIN_PICTURE_PX

log = logging.getLogger("phasorbench.web")

INTERNAL_ERROR = ("internal error: the server could not finish this request "
                  "(the details are in the server's log)")


_SURROGATE = re.compile("[\ud800-\udfff]")


def _no_lone_surrogates(value: str) -> str:
    """JSON can carry ``"\\ud800"`` alone, which is no character: such a text is refused
    here, with its place, before any job sees it (it cannot be echoed back as UTF-8)."""
    found = _SURROGATE.search(value)
    if found is None:
        return value
    before = value[:found.start()]
    line = before.count("\n") + 1
    column = found.start() - (before.rfind("\n") + 1) + 1
    raise PydanticCustomError(
        "lone_surrogate",
        "holds a lone UTF-16 surrogate (U+{code}) at line {line}, column {column}, which "
        "is not a character",
        {"code": f"{ord(found.group()):04X}", "line": line, "column": column})


def _not_empty(value: str) -> str:
    if not value:
        raise PydanticCustomError("string_too_short", "String should have at least 1 character")
    return value


#: Every text field of a request: any Unicode character, but no lone surrogate.
Text = Annotated[str, AfterValidator(_no_lone_surrogates)]


#: Request bodies are read strictly: a value must have the type the schema gives it
#: (``0`` is no boolean, ``"5"`` no number), so the schema says exactly what is taken.
STRICT = ConfigDict(strict=True)


class CircuitBody(BaseModel):
    """A circuit text in the project's circuit language."""

    model_config = STRICT

    # minLength is said in the schema and checked by the validator below: pydantic's own
    # length check reads the text as UTF-8 first and would hide a surrogate's place.
    netlist: Annotated[Text, AfterValidator(_not_empty)] = Field(
        json_schema_extra={"minLength": 1},
        description="the circuit text, as typed in the editor or kept in a .circuit file "
                    "(any Unicode but lone surrogates; at most the server's body limit in "
                    "UTF-8 bytes and its element limit). A text the language cannot read "
                    "is answered 422 with every error at its line and column")


class ErrorItem(BaseModel):
    """One problem: where it is (line and column from 1, null for none) and its hint."""

    line: int | None
    column: int | None
    length: int = Field(description="width of the caret span, in characters")
    severity: Literal["error", "warning"]
    message: str
    hint: str


class ErrorAnswer(BaseModel):
    """Every refusal and every circuit with errors is answered in this one shape."""

    errors: list[ErrorItem]
    warnings: list[ErrorItem]


def _refusal(description: str, **extra) -> dict:
    return {"model": ErrorAnswer, "description": description, **extra}


#: Every status a POST route may answer besides 200, listed in its OpenAPI entry.
ERROR_RESPONSES = {
    400: _refusal("the Host header names another server (a guard against DNS rebinding)"),
    403: _refusal("sent by a page of another origin (Origin or Sec-Fetch-Site)"),
    408: _refusal("the body did not arrive within the server's body timeout"),
    413: _refusal("the body is larger than the server's body limit"),
    422: _refusal("the circuit has errors, or the body is not what this route takes: each "
                  "problem with its line, column and hint"),
    500: _refusal("an internal error: the details are in the server's log only"),
    503: _refusal("too many requests are waiting for a worker: retry after the seconds "
                  "in Retry-After", headers={"Retry-After": {
                      "description": "seconds to wait", "schema": {"type": "integer"}}}),
}


#: Element names one solve request may ask about (``SolveBody.names``).
MAX_ASKED = 100


#: The page's RMS / peak switch (``presentation/amplitudes.py``).
SHOW_FIELD = Field(None, description="show voltage and current magnitudes as rms or peak "
                                     "values (default: as the circuit's amplitudes line "
                                     "says; powers are the same either way)")


class SolveBody(CircuitBody):
    """A circuit text, and whether the answer carries the whole results contract."""

    show: Literal["rms", "peak"] | None = SHOW_FIELD

    contract: bool = Field(True, description="false: leave the per-element and per-node maps "
                                             "out (the page reads the display rows only)")
    names: list[Text] = Field([], max_length=MAX_ASKED,
                              description="element names the page shows (its selection): "
                                          "display.present lists those the circuit has")


#: Open three-phase blocks one rows request may name (a block has at least three elements).
MAX_EXPANDED = 20_000


class RowsBody(CircuitBody):
    """A circuit text and the window of one of its tables to show."""

    table: Literal["elements", "nodes"] = Field("elements", description="the branch or the node table")
    show: Literal["rms", "peak"] | None = SHOW_FIELD
    start: int = Field(0, ge=0, description="first row of the window (0-based, in the order asked)")
    count: int = Field(ROW_WINDOW, ge=0, le=MAX_WINDOW, description="rows in the window")
    sort: str | None = Field(None, description="column the branch table is sorted by "
                                               "(none: circuit order)")
    direction: Literal[1, -1] = Field(1, description="1 ascending, -1 descending")
    find: str = Field("", max_length=200, description="keep rows whose name or terminals "
                                                      "contain this text (no case)")
    expanded: list[Text] = Field([], max_length=MAX_EXPANDED,
                                 description="three-phase blocks shown open: their phase "
                                             "rows follow the block's row")


class ViewBody(CircuitBody):
    """A circuit text, the elements a picture should show, and optionally its size."""

    elements: list[Text] = Field(description="element names, as in the circuit's results")
    show: Literal["rms", "peak"] | None = SHOW_FIELD
    width: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                              description="picture width in px (the page sends its panel's width "
                                          "so text is drawn at its true size)")
    height: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                               description="picture height in px")

    def size(self) -> dict:
        return {k: v for k, v in (("width", self.width), ("height", self.height)) if v is not None}


class GroupViewBody(CircuitBody):
    """A circuit text, one of its three-phase blocks, and optionally the picture's size."""

    group: Text = Field(description="a three-phase block (voltage3 or load3) of the circuit")
    show: Literal["rms", "peak"] | None = SHOW_FIELD
    width: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                              description="picture width in px")
    height: int | None = Field(None, ge=MIN_PICTURE_PX, le=MAX_PICTURE_PX,
                               description="picture height in px")

    def size(self) -> dict:
        return {k: v for k, v in (("width", self.width), ("height", self.height)) if v is not None}


class CorrectionAsk(BaseModel):
    """A power-factor correction to size: the fields of ``POST /api/correct`` after the
    circuit (the sheet asks for one in the same words)."""

    model_config = STRICT

    source: Text = Field(description="an independent voltage or current source, or a voltage3 block")
    target: float = Field(description="target power factor in (0, 1], lagging unless leading")
    at: Text | list[Text] | None = Field(
        None, description="where the capacitor goes: a node (to ground), or three line nodes "
                          "for a bank; left out, across the source's terminals (its lines)")
    across: list[Text] | None = Field(None, min_length=2, max_length=2,
                                     description="two nodes: a capacitor across them")
    bank: Literal["wye", "delta"] | None = Field(
        None, description="connection of a three-phase bank (default wye)")
    leading: bool = Field(False, description="aim at a leading target")
    rated_voltage: float | None = Field(
        None, description="rated rms voltage of each unit, V: checks its duty against the "
                          "continuous limits of IEEE Std 18-2002")
    ratings_kvar: Text | list[float] | None = Field(
        None, description="standard bank ratings in kvar at the rated voltage (a list, or "
                          "text such as '5, 7.5, 10'): the next one down and up from the "
                          "exact answer are re-solved; default common ratings")


class PortAsk(BaseModel):
    """The two nodes of a port: the fields of ``POST /api/port`` after the circuit."""

    model_config = STRICT

    a: Text = Field(description="the port's first node")
    b: Text = Field(description="the port's second node (0 for ground)")


class CorrectionBody(CircuitBody, CorrectionAsk):
    """A circuit text and the power-factor correction to size in it."""


class PortBody(CircuitBody, PortAsk):
    """A circuit text and the two nodes of a port."""


def error_item(message: str, hint: str = "") -> dict:
    return {"line": None, "column": None, "length": 1, "severity": "error",
            "message": message, "hint": hint}


def error_response(status: int, message: str, hint: str = "") -> StrictJSONResponse:
    return StrictJSONResponse({"errors": [error_item(message, hint)], "warnings": []},
                              status_code=status)


BUSY_HINT = ("try again in a few seconds; the server is working through other requests "
             "(whoever starts it can let more wait: serve --large-queue N)")


def busy_response(full: jobs.LaneFull) -> StrictJSONResponse:
    """503 with Retry-After: the lane's queue is full (``jobs.LaneFull``)."""
    response = error_response(503, "the server is busy: too many requests are waiting for "
                                   "a worker", BUSY_HINT)
    response.headers["Retry-After"] = str(full.retry_after)
    return response


async def run_guarded(request: Request, job, *args, heavy: bool = False,
                      text: str | None = None):
    """Run ``job(*args)`` in its lane (see ``jobs.py``) and map its failures once.

    Returns ``(answer, None)`` or ``(None, error response)``: ``CircuitError`` and
    numbers past the float range → 422, a full lane → 503 with Retry-After, a client
    that has gone → an empty 499 nobody reads, anything else → 500 (traceback logged).
    """
    state = request.app.state
    runner = state.jobs
    if text is None and args and isinstance(args[0], str):
        text = args[0]                  # the circuit text: its length picks the lane
    try:
        answer = await runner.run(request.receive, runner.lane_for(text, heavy), job, *args)
    except CircuitError as exc:
        return None, StrictJSONResponse(answers.diagnostics_answer(exc.diagnostics),
                                        status_code=422)
    except NUMERIC_RANGE_ERRORS as exc:
        log.warning("request %s %s: numbers out of range", request.method, request.url.path,
                    exc_info=exc)
        return None, StrictJSONResponse(answers.diagnostics_answer(out_of_range(exc).diagnostics),
                                        status_code=422)
    except jobs.LaneFull as full:
        return None, busy_response(full)
    except jobs.ClientGone:
        return None, Response(status_code=499)
    except Exception:
        log.exception("request %s %s failed", request.method, request.url.path)
        return None, error_response(500, INTERNAL_ERROR)
    return answer, None


def _then(job, encode):
    """``job`` followed by ``encode`` of its answer, both in the job's worker thread."""
    def run(*args):
        return encode(job(*args))
    return run


async def run_job(request: Request, job, *args, heavy: bool = False, respond=None):
    """Run ``job(*args, settings)`` in its lane and answer with its JSON, or with
    ``respond(bytes)`` when the route gives one (``job`` then returns text, sent as UTF-8).

    The answer is encoded to bytes in the job's worker thread (``jsonsafe.encoded``,
    ``jsonsafe.utf8``), never on the event loop, so a small request is not held up
    while a big answer is written.
    """
    # Blocking work stays off the event loop: the Python documentation's asyncio guide
    # ("Developing with asyncio", "Running Blocking Code"); starlette's run_in_threadpool
    # does the same for plain routes.
    settings = request.app.state.settings
    if respond is None:
        body, failed = await run_guarded(request, _then(job, encoded), *args, settings,
                                         heavy=heavy)
        return failed if failed is not None else EncodedJSONResponse(body)
    body, failed = await run_guarded(request, _then(job, utf8), *args, settings,
                                     heavy=heavy)
    return failed if failed is not None else respond(body)


async def check(body: CircuitBody, request: Request):
    """Errors and warnings of a circuit, without solving (for live checking as one types).

    200 ``{"errors": [...], "warnings": [...]}`` for any text, each item ``{"line",
    "column", "length", "severity", "message", "hint"}``; 422 only for a body that is not
    ``{"netlist": TEXT}`` (or holds a lone surrogate).
    """
    return await run_job(request, answers.check_answer, body.netlist)


async def solve(body: SolveBody, request: Request):
    """Solve a circuit: the results contract plus a ``display`` field of formatted text.

    A circuit of more than 1,000 elements or nodes carries the first 200 table rows in
    ``display`` (``rows_partial`` true); ``POST /api/rows`` gives the others.
    422 ``{"errors": [...], "warnings": [...]}`` when the circuit has errors.
    """
    return await run_job(request, answers.solve_answer, body.netlist, body.contract, body.names,
                         body.show)


async def rows(body: RowsBody, request: Request):
    """A window of a solved circuit's branch or node table, sorted and filtered as asked:
    ``{"table", "total", "start", "rows", "matched"}`` (rows as in ``display.elements`` /
    ``nodes``; in a circuit with three-phase blocks, block rows and, for the blocks in
    ``expanded``, their phase rows, as ``rows.table_window`` says)."""
    window = body.model_dump(include={"table", "start", "count", "sort", "direction", "find",
                                      "expanded", "show"})
    return await run_job(request, answers.rows_answer, body.netlist, window)


async def waveforms(body: ViewBody, request: Request):
    """v(t), i(t), p(t) of the named elements over two periods, samples and SVG each."""
    return await run_job(request, answers.waveforms_answer, body.netlist, body.elements,
                         body.size(), body.show)


async def phasors(body: ViewBody, request: Request):
    """The phasor diagram (SVG) of the named elements' voltages and currents."""
    return await run_job(request, answers.phasors_answer, body.netlist, body.elements,
                         body.size(), body.show)


async def three_phase(body: GroupViewBody, request: Request):
    """The three-phase view of one block: its phasor diagram (phase voltages and line
    currents) as SVG, and its phase, line and sequence values as display text."""
    return await run_job(request, answers.three_phase_answer, body.netlist, body.group,
                         body.size(), body.show)


async def correct(body: CorrectionBody, request: Request):
    """Size the smallest shunt capacitor that brings a source to a target power factor.

    The answer is the correction result (``capacitance_f``, ``q_var``, ``pf_before``,
    ``pf_after``, ``formula_capacitance_f``, ``circuit_lines`` …) plus ``display`` text;
    a source that meets its target already is a 200 answer too, with ``needed`` false and
    its ``reason``; 422 ``{"errors": [...], "warnings": [...]}`` for a circuit with errors
    or a target a capacitor there cannot reach.
    """
    ask = body.model_dump(include={"source", "target", "at", "across", "bank", "leading",
                                   "rated_voltage", "ratings_kvar"})
    return await run_job(request, answers.correction_answer, body.netlist, ask)


async def port(body: PortBody, request: Request):
    """Thevenin and Norton equivalents seen from nodes ``a`` and ``b``, with the matched
    load and the best resistive load, plus ``display`` text; 422 for unknown nodes."""
    return await run_job(request, answers.port_answer, body.netlist, body.a, body.b)


class TableBody(CircuitBody):
    """A circuit text and one of its tables, as CSV or tab-separated text."""

    table: Literal["nodes", "branches", "three-phase"] = Field(
        description="which table: nodes, branches or three-phase")
    format: Literal["csv", "tsv"] = Field("csv", description="csv (a file) or tsv (for "
                                          "pasting into a spreadsheet)")
    show: Literal["rms", "peak"] | None = SHOW_FIELD


async def table(body: TableBody, request: Request):
    """One table of the solved circuit for a spreadsheet: units in the headings, numbers
    as numbers (never more digits than the solve trusts), a source's current and power
    the delivered ones, the magnitudes RMS or peak as ``show`` says (the headings name
    which: ``|V| RMS (V)``); ``text/csv`` as an attachment, or
    ``text/tab-separated-values``."""
    def respond(text: bytes) -> SlicedResponse:
        if body.format == "tsv":
            return SlicedResponse(text,
                                  media_type="text/tab-separated-values; charset=utf-8",
                                  headers={"X-Content-Type-Options": "nosniff",
                                           "Cache-Control": "no-store"})
        return SlicedResponse(text, media_type="text/csv; charset=utf-8", headers={
            "Content-Disposition": f'attachment; filename="{body.table}.csv"',
            "X-Content-Type-Options": "nosniff", "Cache-Control": "no-store"})
    return await run_job(request, answers.table_answer, body.netlist, body.table,
                         "\t" if body.format == "tsv" else ",", body.show, respond=respond)


async def samples(request: Request):
    """The sample circuits: ``[{"name", "title", "netlist"}]``."""
    return StrictJSONResponse(list_samples(request.app.state.settings.samples_dir))
