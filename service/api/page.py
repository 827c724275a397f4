"""GET /: the browser page (a form for one case; static files under /static/)."""

from __future__ import annotations

from flask import Blueprint, current_app

bp = Blueprint("page", __name__)


@bp.get("/")
def index():
    """service/static/index.html: plain HTML, CSS and JavaScript, nothing from other hosts."""
    response = current_app.send_static_file("index.html")
    response.headers["Content-Security-Policy"] = (
        "default-src 'self'; img-src 'self' blob: data:; style-src 'self'; "
        "script-src 'self'; connect-src 'self'; frame-ancestors 'none'")
    return response
