"""The local web server of phasorbench: JSON API and the workbench page.

``create_app()`` in ``app.py`` lists every route; the ``serve`` command is ``cli/serve.py``.
This package is a thin shell over ``workflow.py``: it imports FastAPI and Jinja2,
which the core never does. They are imported on first use, so the command line's
``solve`` does not pay for them.
"""

from __future__ import annotations

__all__ = ["Settings", "create_app"]


def __getattr__(name: str):
    if name == "create_app":
        from .app import create_app
        return create_app
    if name == "Settings":
        from .settings import Settings
        return Settings
    raise AttributeError(name)
