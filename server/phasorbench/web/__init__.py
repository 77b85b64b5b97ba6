"""The local web server of phasorbench: JSON API and the workbench page.

``create_app()`` in ``app.py`` lists every route; ``serve.py`` is the ``serve`` command.
This package is a thin shell over ``workflow.py``: it imports FastAPI and Jinja2,
which the core never does.
"""

from .app import create_app
from .settings import Settings

__all__ = ["Settings", "create_app"]
