"""The tolerance study's routes (thin handlers, the request model, the work bound):
``POST /api/tolerance`` answers the study's JSON in one go; the page uses the job
routes instead (``POST /api/tolerance/jobs`` starts one, ``GET …/jobs/{id}`` says how
many chunks are done or gives the answer, ``DELETE …/jobs/{id}`` cancels between
chunks). Bad input answers 422 in the language's error shape; the work of one request
is bounded by (runs + corners) × unknowns (``MAX_TOLERANCE_WORK``), said in the error.
"""

from __future__ import annotations

import functools
import secrets
import threading
import time

from fastapi import Request
from pydantic import BaseModel, Field

from ..errors import CircuitError, Diagnostic
from ..model import VOLTAGE_KINDS
from . import answers, api
from .answers import _read
from .jsonsafe import EncodedJSONResponse, StrictJSONResponse, encoded
from .settings import Settings

#: Largest (runs + worst-case corners) × unknowns of one request.
MAX_TOLERANCE_WORK = 40_000_000
#: Tolerance jobs running at once (each holds a solve worker).
MAX_JOBS = 2
#: A finished job's answer is kept this long for its page to fetch (seconds).
KEEP_SECONDS = 600


class ToleranceAsk(BaseModel):
    """What a tolerance study asks for (also the sheet's ``tolerance`` field)."""

    probes: list[api.Text] = Field(default_factory=list, description="probes: V(n), V(a, b), "
                              "I(E), Z(a, b), Z(n), X/Y")
    runs: int | None = Field(None, description="Monte Carlo runs (default 10,000)")
    seed: int | None = Field(None, description="seed of the draws (default 1)")
    worst_case: bool = Field(False, description="the worst case of |X| over the box")
    limits: list[api.Text] = Field(default_factory=list,
                              description='limits on magnitudes, e.g. "V(out) 0.95..1.05"')


class ToleranceBody(api.CircuitBody, ToleranceAsk):
    """A circuit text, the probes and the study's settings."""

    display: bool = Field(False, description="add the page's strings and pictures "
                          "(display: settings, tables, histogram and sensitivity SVGs)")

    def ask(self) -> dict:
        return {"probes": self.probes, "runs": self.runs, "seed": self.seed,
                "worst_case": self.worst_case, "limits": self.limits,
                "display": self.display}


def tolerance_answer(text: str, ask: dict, settings: Settings, progress=None,
                     cancel=None) -> dict:
    """The tolerance JSON of studies.md, after the work bound."""
    from ..studies.tolerance import run_tolerance
    circuit = _read(text, settings)
    check_work(circuit, ask)
    chunks = None
    if settings.scheduler:              # the server's setting: chunks on a Dask cluster
        from ..studies.cluster import cluster_chunks
        chunks = cluster_chunks(circuit, ask["probes"], ask.get("limits") or (),
                                settings.scheduler)
    result = run_tolerance(circuit, ask["probes"], ask.get("runs"), ask.get("seed"),
                           ask.get("worst_case", False), ask.get("limits") or (),
                           progress=progress, cancel=cancel, chunks=chunks)
    if ask.get("display"):
        from ..presentation.cautions import TOLERANCE_NOTE
        from ..presentation.studies.tolerance import view
        result["display"] = {**view(result), "caution": TOLERANCE_NOTE}
    return result


def _finished(text: str, ask: dict, settings: Settings, progress, cancel) -> bytes:
    """A job's study and its finished answer ``{"state": "done", …}`` encoded, both in
    the job's worker thread: the status poll sends these bytes as they are, so a big
    answer is never encoded on the event loop (as ``api.run_job`` does for the rest)."""
    return encoded({"state": "done",
                    **tolerance_answer(text, ask, settings, progress, cancel)})


def check_work(circuit, ask: dict) -> None:
    """Refuse a study above the server's bound, or with no probe (``CircuitError``)."""
    from ..studies.tolerance import DEFAULT_RUNS
    from ..studies.worstcase import MAX_ENUMERATED
    if not ask.get("probes") and not ask.get("limits"):
        raise CircuitError([Diagnostic("no probe given", "add a probe, e.g. V(out)")])
    unknowns = len(circuit.nodes()) - 1 + sum(
        e.kind in VOLTAGE_KINDS or e.kind == "transformer"
        for e in circuit.elements.values())
    runs = ask.get("runs") or DEFAULT_RUNS
    tolerated = len(circuit.value_tolerances) + sum(
        1 for e in circuit.elements.values() if e.tolerance)
    corners = 2 ** min(tolerated, MAX_ENUMERATED) if ask.get("worst_case") else 0
    if isinstance(runs, int) and (runs + corners) * max(1, unknowns) > MAX_TOLERANCE_WORK:
        most = max(0, MAX_TOLERANCE_WORK // max(1, unknowns) - corners)
        raise CircuitError([Diagnostic(
            f"this study is {runs + corners:,} solves × {unknowns:,} unknowns, above the "
            f"server's limit of {MAX_TOLERANCE_WORK:,} solves × unknowns",
            f"use at most {most:,} runs for this circuit, or run 'phasorbench "
            "tolerance' on the command line")])


async def tolerance(body: ToleranceBody, request: Request):
    """Monte Carlo over the tolerances: per probe the statistics and histograms of the
    magnitude and angle, ranked sensitivities, the worst case (``worst_case``), the yield
    inside ``limits``; ``runs``, ``seed``, ``warnings``; 422 for bad input."""
    # A study is many solves: the large lane whatever the circuit's size.
    return await api.run_job(request, tolerance_answer, body.netlist, body.ask(), heavy=True)


def _jobs(request: Request) -> dict:
    state = request.app.state
    if not hasattr(state, "tolerance_jobs"):
        state.tolerance_jobs = {}
    jobs = state.tolerance_jobs
    now = time.monotonic()
    # a finished answer is kept KEEP_SECONDS from when it was ready (a study may run
    # longer than that), until its page fetches it
    for key in [k for k, j in jobs.items() if j["future"].done() and
                now - j.get("finished", now) > KEEP_SECONDS]:
        del jobs[key]
    return jobs


async def start_job(body: ToleranceBody, request: Request):
    """Start a tolerance study; answer ``{"job": ID}`` (poll ``GET /api/tolerance/jobs/ID``)."""
    jobs = _jobs(request)
    if sum(not j["future"].done() for j in jobs.values()) >= MAX_JOBS:
        return api.error_response(429, f"{MAX_JOBS} tolerance studies are running already",
                                  "wait for one to finish, or cancel it")
    job = {"done": 0, "total": None, "cancel": threading.Event(),
           "started": time.monotonic()}

    def progress(done, total):
        job["done"], job["total"] = done, total
    state = request.app.state
    # a thread-safe future of the large lane's pool itself: the job outlives this
    # request (it is cancelled by DELETE, between chunks), bounded by MAX_JOBS
    job["future"] = state.jobs.large.pool.submit(functools.partial(
        _finished, body.netlist, body.ask(), state.settings, progress,
        job["cancel"].is_set))
    job["future"].add_done_callback(lambda _done: job.__setitem__("finished",
                                                                  time.monotonic()))
    key = secrets.token_hex(8)
    jobs[key] = job
    return StrictJSONResponse({"job": key})


async def job_status(job_id: str, request: Request):
    """``{"state": "running", "done", "total"}`` while it runs; then the study's JSON
    (``state`` "done"), the 422 errors, or ``{"state": "cancelled"}``."""
    from ..studies.tolerance import Cancelled
    jobs = _jobs(request)
    job = jobs.get(job_id)
    if job is None:
        return api.error_response(404, "no such tolerance study (finished answers are kept "
                                  f"{KEEP_SECONDS // 60} minutes)", "start it again")
    future = job["future"]
    if not future.done():
        return StrictJSONResponse({"state": "running", "done": job["done"],
                                   "total": job["total"]})
    del jobs[job_id]
    exc = future.exception()
    if exc is None:                 # the answer's bytes, written when the study ended
        return EncodedJSONResponse(future.result())
    if isinstance(exc, Cancelled):
        return StrictJSONResponse({"state": "cancelled"})
    if isinstance(exc, CircuitError):
        return StrictJSONResponse(answers.diagnostics_answer(exc.diagnostics),
                                  status_code=422)
    api.log.error("tolerance job failed", exc_info=exc)
    return api.error_response(500, api.INTERNAL_ERROR)


async def cancel_job(job_id: str, request: Request):
    """Stop a running study between chunks."""
    job = _jobs(request).get(job_id)
    if job is None:
        return api.error_response(404, "no such tolerance study", "")
    job["cancel"].set()
    return StrictJSONResponse({"state": "cancelling"})
