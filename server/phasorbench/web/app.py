"""The web application: one ``create_app()`` that lists every route the server has.

Read this file to know the whole surface of the server. Handlers live in ``pages.py``
(HTML) and ``api.py`` (JSON); the guards in ``guards.py`` run before any of them.
"""

from __future__ import annotations

import contextlib
import logging

from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import HTMLResponse, Response
from fastapi.routing import APIRoute
from fastapi.templating import Jinja2Templates
from starlette.routing import Mount
from starlette.staticfiles import StaticFiles

from .. import __version__
from ..blas import pin_loaded
from . import api, pages, sheet_routes, study_routes, tolerance_routes
from .guards import HostOriginGuard
from .jobs import JobRunner
from .serving import SecurityHeaders
from starlette.exceptions import HTTPException as StarletteHTTPException
from .jsonsafe import StrictJSONResponse
from .settings import Settings

log = logging.getLogger("phasorbench.web")


def _routes(settings: Settings) -> list:
    """Every route of the server, in one list."""
    def page(path, endpoint):
        return APIRoute(path, endpoint, methods=["GET"], response_class=HTMLResponse,
                        include_in_schema=False)

    def post(path, endpoint, summary, more=None):
        return APIRoute(path, endpoint, methods=["POST"], summary=summary,
                        response_class=StrictJSONResponse,
                        responses={**api.ERROR_RESPONSES, **(more or {})})

    busy_jobs = {429: {"model": api.ErrorAnswer,
                       "description": "as many tolerance studies are running as the server takes"}}
    no_job = {404: {"model": api.ErrorAnswer, "description": "no such study (or it expired)"}}

    return [
        page("/", pages.workbench),
        page("/docs", pages.api_docs),
        post("/api/check", api.check, "Check a circuit (errors and warnings, no solve)"),
        post("/api/solve", api.solve, "Solve a circuit (results contract + display text)"),
        post("/api/rows", api.rows, "A window of a solved circuit's branch or node table"),
        post("/api/waveforms", api.waveforms, "Sample v(t), i(t), p(t) of elements, with SVG"),
        post("/api/phasors", api.phasors, "Phasor diagram SVG of elements"),
        post("/api/three-phase", api.three_phase,
             "Three-phase view of a block: phasor SVG, phase, line and sequence values"),
        post("/api/correct", api.correct, "Size the power-factor correction capacitor of a source"),
        post("/api/port", api.port, "Thevenin and Norton equivalents seen from two nodes"),
        APIRoute("/api/table", api.table, methods=["POST"],
                 summary="One table (nodes, branches, three-phase) as CSV or tab-separated text",
                 response_class=Response,
                 responses={**api.ERROR_RESPONSES,
                            200: {"content": {"text/csv": {}, "text/tab-separated-values": {}},
                                  "description": "the table as text"}}),
        post("/api/sweep", study_routes.sweep, "Frequency response of probes over a range"),
        APIRoute("/api/sweep/csv", study_routes.sweep_csv, methods=["POST"],
                 summary="The same frequency response as a CSV file",
                 response_class=Response,
                 responses={**api.ERROR_RESPONSES,
                            200: {"content": {"text/csv": {}},
                                  "description": "the response, one row per frequency"}}),
        post("/api/tolerance", tolerance_routes.tolerance,
             "Monte Carlo, sensitivities, worst case and yield over the tolerances"),
        post("/api/tolerance/jobs", tolerance_routes.start_job,
             "Start a tolerance study (the page's progress and cancel)", busy_jobs),
        APIRoute("/api/tolerance/jobs/{job_id}", tolerance_routes.job_status,
                 methods=["GET"], summary="Progress or answer of a tolerance study",
                 response_class=StrictJSONResponse,
                 responses={**api.ERROR_RESPONSES, **no_job}),
        APIRoute("/api/tolerance/jobs/{job_id}", tolerance_routes.cancel_job,
                 methods=["DELETE"], summary="Cancel a tolerance study",
                 response_class=StrictJSONResponse,
                 responses={**api.ERROR_RESPONSES, **no_job}),
        post("/api/formula", study_routes.formula,
             "A probe as an exact formula in s, with poles, zeros and balance conditions"),
        post("/api/harmonics", study_routes.harmonics,
             "Harmonic study: distortion, IEEE 1459 powers, IEEE 519 limits, capacitor duty"),
        *sheet_routes.router.routes,          # POST /api/sheet: the solved sheet download
        APIRoute("/api/samples", api.samples, methods=["GET"], summary="List the sample circuits",
                 response_class=StrictJSONResponse),
        Mount("/static", StaticFiles(directory=settings.static_dir), name="static"),
    ]


async def _invalid_request(request: Request, exc: RequestValidationError):
    """A malformed body gets the same error shape as a malformed circuit."""
    errors = []
    for err in exc.errors():
        where = ".".join(str(p) for p in err.get("loc", ()) if p != "body")
        if err.get("type") == "lone_surrogate":
            # Said of the field, with the place inside it, so the editor can mark it.
            item = api.error_item(f"{where or 'the body'} {err['msg']}",
                                  "remove the character or retype it; only whole "
                                  "characters can be read")
            if where == "netlist":
                item.update(line=err["ctx"]["line"], column=err["ctx"]["column"])
            errors.append(item)
            continue
        message = f"request body: {err.get('msg', 'invalid')}" + (f" ({where})" if where else "")
        errors.append(api.error_item(
            message, 'send JSON like {"netlist": "frequency 50 Hz\\n..."}'))
    return StrictJSONResponse({"errors": errors, "warnings": []}, status_code=422)


async def _http_error(request: Request, exc: StarletteHTTPException):
    """Framework refusals (a body that is not JSON, an unknown path) in the API's error
    shape, so a client reads every failure the same way."""
    detail = exc.detail if isinstance(exc.detail, str) else "the request was refused"
    return StrictJSONResponse({"errors": [api.error_item(detail)], "warnings": []},
                              status_code=exc.status_code, headers=exc.headers)


async def _internal_error(request: Request, exc: Exception):
    log.error("unhandled error on %s %s", request.method, request.url.path, exc_info=exc)
    return api.error_response(500, api.INTERNAL_ERROR)


def _preload() -> None:
    """Import the solve path now, so the first request does not wait for it, and the
    modules jobs import lazily: a job cancelled in the middle of a first import would
    leave the next request to import them again."""
    from .. import accuracy, checks, results, solver, superposition  # noqa: F401
    from ..language import parser  # noqa: F401
    from ..sheet import render_context  # noqa: F401
    from ..studies import sweep  # noqa: F401
    from ..tools import correct_power_factor  # noqa: F401


def create_app(settings: Settings | None = None) -> FastAPI:
    """Build the server: routes, guards, templates, static files, the solve pool.

    A missing ``static/`` or ``templates/`` folder fails here, at start-up, not on the
    first request.
    """
    settings = settings or Settings()
    for folder in (settings.static_dir, settings.templates_dir):
        if not folder.is_dir():
            raise RuntimeError(f"phasorbench web: folder not found: {folder}")
    pin_loaded()             # one BLAS thread per solve worker (see blas.py)
    runner = JobRunner(settings)
    _preload()

    @contextlib.asynccontextmanager
    async def lifespan(app):
        yield
        runner.shutdown()

    app = FastAPI(
        title="phasorbench", version=__version__,
        description="Local API of the phasorbench workbench: AC circuits in sinusoidal steady state.",
        routes=_routes(settings), lifespan=lifespan,
        docs_url=None, redoc_url=None,          # /docs is our own page: no CDN assets
        default_response_class=StrictJSONResponse,
        exception_handlers={RequestValidationError: _invalid_request,
                            StarletteHTTPException: _http_error,
                            Exception: _internal_error},
    )
    app.state.settings = settings
    app.state.jobs = runner
    app.state.templates = Jinja2Templates(directory=str(settings.templates_dir))
    app.add_middleware(HostOriginGuard, settings=settings)
    app.add_middleware(SecurityHeaders)         # outermost: the guards' refusals get them too
    return app
