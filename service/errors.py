"""RFC 9457 problem+json for every error path; the one place HTTP statuses are assigned."""

from __future__ import annotations

import logging

import orjson
from flask import Flask, Response, request
from marshmallow import ValidationError
from werkzeug.exceptions import HTTPException

from .physics.errors import PhysicsInputError, SolverBudgetExceeded

log = logging.getLogger(__name__)

PROBLEM_MEDIA_TYPE = "application/problem+json"

# problem kind -> (status, title)
PROBLEMS: dict[str, tuple[int, str]] = {
    "malformed-body": (400, "Malformed request body"),
    "bad-request": (400, "Bad request"),
    "unauthorized": (401, "API key required"),
    "forbidden": (403, "API key not accepted"),
    "not-found": (404, "Not found"),
    "method-not-allowed": (405, "Method not allowed"),
    "not-acceptable": (406, "Not acceptable"),
    "too-large": (413, "Request too large"),
    "unsupported-media-type": (415, "Unsupported media type"),
    "validation-error": (422, "Validation failed"),
    "solver-budget-exceeded": (503, "Solver time budget exceeded"),
    "internal-error": (500, "Internal error"),
}

# Headers a problem kind always carries (RFC 9110 section 15.5.2: a 401 names its scheme).
PROBLEM_HEADERS: dict[str, dict[str, str]] = {
    "unauthorized": {"WWW-Authenticate": 'Bearer realm="pellet-effectiveness"'},
}

_HTTP_KIND = {400: "bad-request", 404: "not-found", 405: "method-not-allowed",
              406: "not-acceptable", 413: "too-large", 415: "unsupported-media-type"}


class ApiProblem(Exception):
    """Raised by views and helpers; turned into problem+json by the handler below."""

    def __init__(self, kind: str, detail: str, errors: list[dict] | None = None, **extra):
        self.kind = kind
        self.detail = detail
        self.errors = errors
        self.extra = extra
        super().__init__(detail)


def problem_body(kind: str, detail: str, errors=None, **extra) -> dict:
    status, title = PROBLEMS[kind]
    body = {
        "type": f"urn:pellet-effectiveness:problem:{kind}",
        "title": title,
        "status": status,
        "detail": detail,
    }
    try:
        body["instance"] = request.path
    except RuntimeError:  # outside a request
        pass
    if errors:
        body["errors"] = errors
    body.update(extra)
    return body


def problem_response(kind: str, detail: str, errors=None, headers=None, **extra) -> Response:
    body = problem_body(kind, detail, errors, **extra)
    response = Response(orjson.dumps(body), status=body["status"], mimetype=PROBLEM_MEDIA_TYPE)
    for name, value in (headers or {}).items():
        response.headers[name] = value
    return response


def validation_problem(errors: list[dict]) -> ApiProblem:
    fields = ", ".join(dict.fromkeys(e["field"] for e in errors))
    return ApiProblem("validation-error", f"The request has invalid fields: {fields}.", errors)


def physics_problem(exc: PhysicsInputError, field: str | None = None) -> ApiProblem:
    from .schemas.responses import request_field

    name = field or request_field(exc.argument)
    return ApiProblem(
        "validation-error",
        f"The case cannot be computed: {exc.reason}.",
        [{"field": name, "message": exc.reason}],
    )


def init_app(app: Flask) -> None:
    """Register the handlers that turn every error into problem+json."""

    @app.errorhandler(ApiProblem)
    def _api_problem(exc: ApiProblem):
        return problem_response(exc.kind, exc.detail, exc.errors,
                                headers=PROBLEM_HEADERS.get(exc.kind), **exc.extra)

    @app.errorhandler(ValidationError)
    def _validation(exc: ValidationError):
        from .schemas.case import flatten_errors

        return _api_problem(validation_problem(flatten_errors(exc.messages)))

    @app.errorhandler(PhysicsInputError)
    def _physics(exc: PhysicsInputError):
        return _api_problem(physics_problem(exc))

    @app.errorhandler(SolverBudgetExceeded)
    def _budget(exc: SolverBudgetExceeded):
        return problem_response(
            "solver-budget-exceeded",
            f"The {exc.what} did not finish within the time budget of "
            f"{exc.budget_seconds:g} s; simplify the case or ask the operator to raise "
            f"PELLET_SOLVER_TIME_BUDGET.",
            headers={"Retry-After": "1"},
        )

    @app.errorhandler(HTTPException)
    def _http(exc: HTTPException):
        kind = _HTTP_KIND.get(exc.code or 500)
        if kind is None:
            status, title = exc.code or 500, exc.name
            body = {"type": "about:blank", "title": title, "status": status,
                    "detail": exc.description}
            return Response(orjson.dumps(body), status=status, mimetype=PROBLEM_MEDIA_TYPE)
        detail = _HTTP_DETAIL.get(kind, exc.description or PROBLEMS[kind][1])
        if kind == "too-large":
            detail = (f"The request body exceeds the limit of "
                      f"{app.config['MAX_CONTENT_LENGTH']} bytes.")
        headers = {}
        if kind == "method-not-allowed" and getattr(exc, "valid_methods", None):
            headers["Allow"] = ", ".join(exc.valid_methods)
            detail = f"{request.method} is not allowed here; allowed: {headers['Allow']}."
        return problem_response(kind, detail, headers=headers)

    @app.errorhandler(Exception)
    def _unexpected(exc: Exception):
        log.exception("unhandled error on %s %s", request.method, request.path)
        return problem_response(
            "internal-error", "An unexpected error occurred; it has been logged."
        )


_HTTP_DETAIL = {
    "not-found": "No such resource; GET /v1/models lists the operations, /openapi.json the contract.",
    "unsupported-media-type": "Send the request body as application/json.",
}
