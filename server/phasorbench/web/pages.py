"""The HTML pages: the workbench and an API reference that works without a network.

Handlers hand plain data to the templates (cautions, limits, the sample to start
with); the page's script does the rest through the JSON API.
"""

from __future__ import annotations

from fastapi import Request

from .. import __version__
from ..presentation.cautions import CAUTIONS, SCOPE_NOTE
from ..presentation.formatting import plain
from ..tools.standard_sizes import DEFAULT_RATINGS_KVAR


#: Headers of every page: scripts and data from this server only, no framing by other
#: sites (clickjacking). Inline styles stay allowed: the server's SVG pictures carry a
#: <style> of their own and the editor places its marks with style attributes.
PAGE_HEADERS = {
    "Content-Security-Policy": ("default-src 'self'; script-src 'self'; connect-src 'self'; "
                                "img-src 'self' data:; style-src 'self' 'unsafe-inline'; "
                                "object-src 'none'; base-uri 'none'; form-action 'self'; "
                                "frame-ancestors 'none'"),
    "X-Content-Type-Options": "nosniff",
    "Referrer-Policy": "no-referrer",
}


def _templates(request: Request):
    return request.app.state.templates


async def workbench(request: Request):
    """The workbench page: editor, tables, diagrams, power summary, cautions."""
    settings = request.app.state.settings
    context = {
        "version": __version__,
        "cautions": [{"title": t, "text": x} for t, x in CAUTIONS],
        "scope_note": SCOPE_NOTE,
        "initial_sample": settings.initial_sample or "",
        "max_body_bytes": settings.max_body_bytes,
        "max_elements": settings.max_elements,
        "max_view_elements": settings.max_view_elements,
        "request_timeout_ms": int(settings.page_timeout_s * 1000),
        "standard_ratings": ", ".join(plain(q, 6) for q in DEFAULT_RATINGS_KVAR),
    }
    return _templates(request).TemplateResponse(request, "workbench.html", context,
                                                headers=PAGE_HEADERS)


def _operations(schema: dict) -> list[dict]:
    """The OpenAPI paths as a flat list the reference page lists in order."""
    out = []
    for path, methods in schema.get("paths", {}).items():
        for method, op in methods.items():
            body = op.get("requestBody", {}).get("content", {}).get("application/json", {})
            ref = body.get("schema", {}).get("$ref", "")
            out.append({"method": method.upper(), "path": path,
                        "summary": op.get("summary", ""),
                        "description": op.get("description", ""),
                        "body": ref.rsplit("/", 1)[-1] if ref else None,
                        "responses": sorted(op.get("responses", {}))})
    return out


def _models(schema: dict) -> list[dict]:
    models = []
    for name, model in sorted(schema.get("components", {}).get("schemas", {}).items()):
        if name in ("HTTPValidationError", "ValidationError"):
            continue
        fields = [{"name": f, "type": spec.get("type") or "object",
                   "items": (spec.get("items") or {}).get("type"),
                   "description": spec.get("description", ""),
                   "required": f in model.get("required", [])}
                  for f, spec in model.get("properties", {}).items()]
        models.append({"name": name, "description": model.get("description", ""),
                       "fields": fields})
    return models


async def api_docs(request: Request):
    """The API reference, drawn from ``/openapi.json`` with no script or CDN."""
    schema = request.app.openapi()
    context = {"version": __version__, "operations": _operations(schema),
               "models": _models(schema), "title": schema.get("info", {}).get("title", "")}
    return _templates(request).TemplateResponse(request, "api_docs.html", context,
                                                headers=PAGE_HEADERS)
