"""Reading request bodies and rendering responses (JSON via orjson; CSV and text later)."""

from __future__ import annotations

import csv
import io
import json

import orjson
from flask import Response, request

from .errors import ApiProblem

JSON_OPTIONS = orjson.OPT_SERIALIZE_NUMPY


def json_response(payload, status: int = 200) -> Response:
    """orjson-encoded JSON response (non-finite floats must never reach here)."""
    return Response(orjson.dumps(payload, option=JSON_OPTIONS), status=status,
                    mimetype="application/json")


def _is_json_media_type(mimetype: str) -> bool:
    return mimetype == "application/json" or (
        mimetype.startswith("application/") and mimetype.endswith("+json")
    )


def is_json_request() -> bool:
    """True when the request says its body is JSON."""
    return _is_json_media_type(request.mimetype)


def read_json_body():
    """The request body as JSON (400 if malformed, 415 if not JSON).

    orjson parses the common case. A body it rejects is read again by the
    standard library, which accepts the non-standard NaN / Infinity literals and
    numbers beyond the double range: they then reach the schemas and become a 422
    naming the field instead of a bare 400.
    """
    if not _is_json_media_type(request.mimetype):
        got = request.mimetype or "none"
        raise ApiProblem(
            "unsupported-media-type",
            f"Send the body as application/json (Content-Type was {got}).",
        )
    raw = request.get_data(cache=True)
    if not raw.strip():
        raise ApiProblem("malformed-body", "The request body is empty; send a JSON object.")
    try:
        return orjson.loads(raw)
    except orjson.JSONDecodeError as first:
        try:
            return json.loads(raw)
        except (ValueError, RecursionError, UnicodeDecodeError):
            raise ApiProblem(
                "malformed-body", f"The request body is not valid JSON: {first}."
            ) from None


def _cell(value) -> str:
    if isinstance(value, float):
        return repr(value)
    return "" if value is None else str(value)


def csv_text(rows) -> str:
    """RFC 4180 CSV (CRLF line ends) from rows of cells; floats at full precision."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    for row in rows:
        writer.writerow([_cell(v) for v in row])
    return buffer.getvalue()


def csv_response(rows, status: int = 200) -> Response:
    """CSV from rows of cells, or from ready CSV text."""
    text = rows if isinstance(rows, str) else csv_text(rows)
    return Response(text, status=status, mimetype="text/csv",
                    headers={"Content-Type": "text/csv; charset=utf-8; header=present"})


def text_response(value, status: int = 200) -> Response:
    """A bare value as text/plain (for a spreadsheet's web-query cell)."""
    return Response(_cell(value), status=status,
                    headers={"Content-Type": "text/plain; charset=utf-8"})
