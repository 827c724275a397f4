"""Application factory."""

from __future__ import annotations

from flask import Flask

from . import access, errors, metrics, request_ids
from .config import load_config


def create_app(config: dict | None = None) -> Flask:
    """Build the app: defaults, then PELLET_* environment variables, then ``config``."""
    app = Flask(__name__)
    app.config.update(load_config(config))
    app.json.sort_keys = False
    errors.init_app(app)

    from .api import batch, contract, diffusivity, effectiveness, meta
    from .api import diagnose, page, plots, size

    app.register_blueprint(meta.bp)
    app.register_blueprint(contract.bp)
    app.register_blueprint(effectiveness.bp)
    app.register_blueprint(batch.bp)
    app.register_blueprint(diffusivity.bp)
    app.register_blueprint(diagnose.bp)
    app.register_blueprint(size.bp)
    app.register_blueprint(plots.bp)
    plots.init_app(app)  # image/svg+xml on /v1/effectiveness and /v1/size (after both)
    app.register_blueprint(page.bp)
    request_ids.init_app(app)
    access.init_app(app)  # before metrics: /metrics is keyed like the rest
    metrics.init_app(app)
    return app
