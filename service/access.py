"""Access control for a shared server: optional API keys, an opt-in query key, and CORS.

API keys (off unless configured):
- PELLET_API_KEYS: comma-separated keys; PELLET_API_KEYS_FILE: a file with one key per line
  ('#' starts a comment). Either one turns the check on; both may be given (union). The file
  is read again when it changes (checked at most every RELOAD_INTERVAL seconds), so a
  rotated Kubernetes Secret takes effect without a restart. A configured file that cannot be
  read at start-up stops the app from starting; an empty key set refuses every keyed request.
- A caller sends ``X-API-Key: <key>`` (or ``Authorization: Bearer <key>``, which is what
  Prometheus can send). Missing: 401 problem+json with WWW-Authenticate; wrong: 403.
  Keys are compared as SHA-256 digests with hmac.compare_digest against every configured
  key, so neither the position of the first differing byte nor which key matched shows in
  the timing.
- Always open: /healthz and /readyz (probes carry no key), CORS preflights (browsers send
  no custom header on them). /metrics is open only when PELLET_METRICS_OPEN is true.

Query key (PELLET_ALLOW_QUERY_KEY, off by default): for spreadsheet web-query cells that cannot
set headers, ``api_key=<key>`` in the query string of a GET (or HEAD) request. It is taken out
of the query string before the app reads it. Risk: a URL carries it into browser history,
spreadsheet files, proxy and server logs; gunicorn's access log here redacts it, other hops may
not. Prefer a key of its own for spreadsheet users, revocable alone.

CORS (PELLET_CORS_ORIGINS, off by default): comma-separated origins (``https://a.example``)
or ``*``. A listed Origin gets Access-Control-Allow-Origin on every answer and a 204 to its
preflight; other origins get no CORS header, so browsers refuse them.
"""

from __future__ import annotations

import hashlib
import hmac
import logging
import os
import threading
import time
from urllib.parse import unquote_plus

from flask import Flask, Response, current_app, request

from .errors import ApiProblem

log = logging.getLogger(__name__)

KEY_HEADER = "X-API-Key"
QUERY_PARAMETER = "api_key"
QUERY_KEY_ENVIRON = "pellet.query_api_key"
OPEN_PATHS = frozenset({"/healthz", "/readyz", "/"})
# The browser page's own files hold no data; the page's calls carry the key like any other.
OPEN_PREFIXES = ("/static/",)
METRICS_PATH = "/metrics"
RELOAD_INTERVAL = 2.0  # [s] between checks of PELLET_API_KEYS_FILE for a change
CORS_METHODS = "GET, POST, OPTIONS"
CORS_HEADERS = "Content-Type, Accept, X-API-Key, Authorization, X-Request-ID"
CORS_EXPOSE = "X-Request-ID, Retry-After, WWW-Authenticate"
CORS_MAX_AGE = "600"


def _digest(key: str) -> bytes:
    return hashlib.sha256(key.encode("utf-8")).digest()


def _split_keys(text: str, sep: str | None) -> list[str]:
    lines = text.split(sep) if sep else text.splitlines()
    keys = []
    for line in lines:
        key = line.split("#", 1)[0].strip() if sep is None else line.strip()
        if key:
            keys.append(key)
    return keys


class KeyRing:
    """The accepted keys (as digests): from a comma-separated list and/or a file."""

    def __init__(self, listed: str = "", path: str = ""):
        self.enabled = bool(listed.strip() or path)
        self._listed = [_digest(k) for k in _split_keys(listed, ",")]
        self._path = path
        self._lock = threading.Lock()
        self._stamp: tuple | None = None
        self._checked = 0.0
        self._from_file: list[bytes] = []
        if path:
            self._reload(strict=True)
        if self.enabled and not self._listed and not self._from_file:
            log.warning("API keys are switched on but none is configured: every keyed request "
                        "is refused")

    def _reload(self, strict: bool = False) -> None:
        try:
            info = os.stat(self._path)
            stamp = (info.st_mtime_ns, info.st_size, info.st_ino)
            if stamp != self._stamp:
                with open(self._path, encoding="utf-8") as handle:
                    self._from_file = [_digest(k) for k in _split_keys(handle.read(), None)]
                self._stamp = stamp
        except OSError as exc:
            if strict:
                raise RuntimeError(f"PELLET_API_KEYS_FILE={self._path!r} cannot be read: "
                                   f"{exc.strerror}") from None
            log.error("PELLET_API_KEYS_FILE %r cannot be read (%s); keeping the keys read "
                      "before", self._path, exc.strerror)
        self._checked = time.monotonic()

    def digests(self) -> list[bytes]:
        if self._path and time.monotonic() - self._checked > RELOAD_INTERVAL:
            with self._lock:
                if time.monotonic() - self._checked > RELOAD_INTERVAL:
                    self._reload()
        return self._listed + self._from_file

    def accepts(self, given: str) -> bool:
        """Constant-time membership: every key is compared, digests of equal length."""
        given_digest = _digest(given)
        found = False
        for digest in self.digests():
            found |= hmac.compare_digest(given_digest, digest)
        return found


def _origins(text: str) -> frozenset[str]:
    return frozenset(o.strip().rstrip("/") for o in text.split(",") if o.strip())


class StripQueryKey:
    """WSGI middleware: takes ``api_key`` out of a GET/HEAD query string into the environ."""

    def __init__(self, wsgi_app):
        self.wsgi_app = wsgi_app

    def __call__(self, environ, start_response):
        query = environ.get("QUERY_STRING", "")
        if "api" in query.lower() and environ.get("REQUEST_METHOD") in ("GET", "HEAD"):
            kept, key = [], None
            for pair in query.split("&"):
                name, _, value = pair.partition("=")
                if unquote_plus(name) == QUERY_PARAMETER:
                    key = unquote_plus(value)
                else:
                    kept.append(pair)
            if key is not None:
                environ[QUERY_KEY_ENVIRON] = key
                environ["QUERY_STRING"] = "&".join(kept)
        return self.wsgi_app(environ, start_response)


def _presented_key() -> str | None:
    key = request.headers.get(KEY_HEADER)
    if key:
        return key
    scheme, _, credentials = request.headers.get("Authorization", "").partition(" ")
    if scheme.lower() == "bearer" and credentials.strip():
        return credentials.strip()
    return request.environ.get(QUERY_KEY_ENVIRON)


def _is_preflight() -> bool:
    return (request.method == "OPTIONS" and "Origin" in request.headers
            and "Access-Control-Request-Method" in request.headers)


def _missing_key_detail() -> str:
    detail = f"This operation needs an API key: send it in the {KEY_HEADER} header."
    if QUERY_PARAMETER in request.args:
        if not current_app.config["ALLOW_QUERY_KEY"]:
            detail += f" The {QUERY_PARAMETER} query parameter is switched off on this server."
        else:
            detail += f" The {QUERY_PARAMETER} query parameter is accepted on GET requests only."
    return detail


def init_app(app: Flask) -> None:
    """Key check before every request (when keys are configured) and CORS headers."""
    keys = KeyRing(app.config["API_KEYS"], app.config["API_KEYS_FILE"])
    origins = _origins(app.config["CORS_ORIGINS"])
    app.extensions["pellet_keys"] = keys
    if app.config["ALLOW_QUERY_KEY"]:
        app.wsgi_app = StripQueryKey(app.wsgi_app)

    def _origin_allowed() -> str | None:
        origin = request.headers.get("Origin")
        if origin and ("*" in origins or origin.rstrip("/") in origins):
            return "*" if "*" in origins else origin
        return None

    def _check():
        if origins and _is_preflight():
            allowed = _origin_allowed()
            response = Response(status=204)
            if allowed:
                response.headers["Access-Control-Allow-Methods"] = CORS_METHODS
                response.headers["Access-Control-Allow-Headers"] = CORS_HEADERS
                response.headers["Access-Control-Max-Age"] = CORS_MAX_AGE
            return response
        if (not keys.enabled or request.path in OPEN_PATHS
                or request.path.startswith(OPEN_PREFIXES)):
            return None
        if request.path == METRICS_PATH and app.config["METRICS_OPEN"]:
            return None
        given = _presented_key()
        if not given:
            raise ApiProblem("unauthorized", _missing_key_detail())
        if not keys.accepts(given):
            raise ApiProblem("forbidden", "The API key is not valid on this server.")
        return None

    if keys.enabled or origins:  # nothing to check otherwise: no hook on the request path
        app.before_request(_check)

    if origins:
        @app.after_request
        def _cors(response):
            allowed = _origin_allowed()
            if allowed:
                response.headers["Access-Control-Allow-Origin"] = allowed
                response.headers["Access-Control-Expose-Headers"] = CORS_EXPOSE
            if "*" not in origins:
                response.vary.add("Origin")
            return response
