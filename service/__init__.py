"""shapegauge: distribution diagnostics over HTTP.

``create_app(config=None)`` builds the WSGI application; gunicorn runs it as
``"service:create_app()"``.
"""

from __future__ import annotations

__version__ = "0.1.0"

import logging
from collections.abc import Mapping
from typing import Any

from flask import Flask

from .config import load_config


def create_app(config: Mapping[str, Any] | None = None) -> Flask:
    """Build the app: defaults, then ``SHAPEGAUGE_*`` variables, then ``config``."""
    from .api import analysis, errors, meta, monitoring, ops

    app = Flask(__name__, static_folder=None)
    app.config.update(load_config())
    if config:
        app.config.update(config)
    app.config["MAX_CONTENT_LENGTH"] = app.config["MAX_BODY_BYTES"]
    logging.getLogger("shapegauge").setLevel(app.config["LOG_LEVEL"])
    errors.register(app)
    ops.register(app)
    app.register_blueprint(analysis.bp)
    app.register_blueprint(monitoring.bp)
    app.register_blueprint(meta.bp)
    return app
