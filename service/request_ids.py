"""X-Request-ID: accepted from the caller (if sane) or generated, and echoed on every response."""

from __future__ import annotations

import re
import uuid

from flask import Flask, g, request

HEADER = "X-Request-ID"
_SANE = re.compile(r"^[A-Za-z0-9._:-]{1,128}$")


def current() -> str:
    return g.get("request_id", "-")


def init_app(app: Flask) -> None:
    @app.before_request
    def _assign():
        given = request.headers.get(HEADER, "")
        g.request_id = given if _SANE.match(given) else uuid.uuid4().hex

    @app.after_request
    def _echo(response):
        response.headers[HEADER] = g.get("request_id") or uuid.uuid4().hex
        return response
