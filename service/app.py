"""Application factory."""

from __future__ import annotations

from flask import Flask

from . import errors, request_ids
from .config import load_config


def create_app(config: dict | None = None) -> Flask:
    """Build the app: defaults, then PELLET_* environment variables, then ``config``."""
    app = Flask(__name__)
    app.config.update(load_config(config))
    app.json.sort_keys = False
    errors.init_app(app)

    from .api import batch, contract, diffusivity, effectiveness, meta

    app.register_blueprint(meta.bp)
    app.register_blueprint(contract.bp)
    app.register_blueprint(effectiveness.bp)
    app.register_blueprint(batch.bp)
    app.register_blueprint(diffusivity.bp)
    request_ids.init_app(app)
    return app
