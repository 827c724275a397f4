"""POST /v1/effectiveness/batch: many cases (JSON list or CSV table); one bad row never fails the others."""

from __future__ import annotations

import gc
import time
from contextlib import contextmanager

import numpy as np
import orjson
from flask import Blueprint, Response, current_app, request
from marshmallow import ValidationError

from ..errors import ApiProblem, validation_problem
from ..formats import JSON_OPTIONS, csv_response, is_json_request, json_response, read_json_body
from ..metrics import observe_batch
from ..physics.effectiveness import evaluate_first_order_columns
from ..physics.errors import PhysicsInputError, SolverBudgetExceeded
from ..schemas.batch_decode import decode_cases
from ..schemas.case import CASE_SCHEMA, flatten_errors
from ..schemas.columnar import MISSING, fast_path_columns, flatten_cases, row_case
from ..schemas.csv_rows import CsvProblem, read_csv_columns, read_header
from .effectiveness import compute
from ..schemas.responses import OUTPUT_UNITS, column_rows_json, request_field, result_fields

bp = Blueprint("batch", __name__, url_prefix="/v1")

CSV_COLUMNS = (
    "effectiveness_factor", "thiele_modulus", "thiele_length", "generalized_modulus",
    "characteristic_length", "observed_rate", "regime", "method",
)


class Batch:
    """The rows of one batch as dotted columns, and how to rebuild one row as a case."""

    def __init__(self, columns: dict, count: int, odd=None, cases: list | None = None,
                 problems: dict | None = None, column_units: dict | None = None,
                 row_reader=None, complete: set | frozenset = frozenset()):
        self.columns, self.count, self.odd = columns, count, odd
        self.complete = complete  # columns with a value in every row
        self.cases, self.problems = cases, problems or {}
        self.column_units = column_units or {}
        self.row_reader = row_reader  # index -> the row as sent, when there is no case list

    def case(self, index: int):
        if index in self.problems:
            return self.problems[index]  # a string: the row's problem
        if self.cases is not None:
            return self.cases[index]
        if self.row_reader is not None:
            return self.row_reader(index)
        return row_case(self.columns, index, self.column_units)


def _read_batch() -> Batch:
    limit = current_app.config["MAX_BATCH_ROWS"]
    if request.mimetype in ("text/csv", "application/csv"):
        try:
            columns, count, ragged, column_units = read_csv_columns(
                request.get_data(cache=False), limit)
        except CsvProblem as exc:
            if exc.malformed:
                raise ApiProblem("malformed-body", str(exc)) from None
            raise validation_problem([{"field": exc.field, "message": str(exc)}]) from None
        odd = np.zeros(count, dtype=bool)
        odd[list(ragged)] = True
        batch = Batch(columns, count, odd, problems=ragged, column_units=column_units)
    else:
        batch = _json_batch(limit)
        count = batch.count
    if count > limit:
        raise ApiProblem("too-large", f"The batch has {count} rows; the limit is {limit}.")
    return batch


def _json_batch(limit: int) -> Batch:
    """A JSON batch: {"cases": [...]} or {"columns": {...}} (422 for any other body)."""
    decoded = decode_cases(request.get_data(cache=True)) if is_json_request() else None
    if decoded is not None:  # rows of the fast-path form, decoded straight to columns
        return Batch(decoded.columns, decoded.count, np.zeros(decoded.count, dtype=bool),
                     row_reader=decoded.case, complete=decoded.complete)
    body = read_json_body()
    if isinstance(body, dict) and set(body) == {"columns"}:
        return _column_body(body["columns"], limit)
    if isinstance(body, dict) and set(body) == {"cases"} and isinstance(body["cases"], list):
        cases = body["cases"]
        if len(cases) > limit:  # answered 413 by the caller, before any row is read
            return Batch({}, len(cases))
        columns, odd = flatten_cases(cases)
        return Batch(columns, len(cases), odd, cases=cases)
    raise validation_problem([{
        "field": "cases",
        "message": 'the body must be {"cases": [<case>, ...]} or '
                   '{"columns": {"<field> [unit]": [...], ...}}'}])


def _column_body(raw_columns, limit: int) -> Batch:
    """{"columns": {"pellet.radius [mm]": [...], ...}}: the CSV table as JSON arrays
    (same header names and units; null means not given)."""
    if not isinstance(raw_columns, dict) or not raw_columns:
        raise validation_problem([{"field": "columns",
                                   "message": "must be an object of equally long arrays"}])
    try:
        header = read_header(list(raw_columns))
    except CsvProblem as exc:
        raise validation_problem([{"field": f"columns.{exc.field}", "message": str(exc)}]) from None
    lengths = {len(v) if isinstance(v, list) else -1 for v in raw_columns.values()}
    if len(lengths) != 1 or -1 in lengths:
        raise validation_problem([{"field": "columns",
                                   "message": "every column must be an array of the same length"}])
    count = lengths.pop()
    if count > limit:
        raise ApiProblem("too-large", f"The batch has {count} rows; the limit is {limit}.")
    columns, column_units = {}, {}
    for (name, unit), values in zip(header, raw_columns.values()):
        columns[name] = [MISSING if v is None else v for v in values]
        if unit:
            column_units[name] = unit
    return Batch(columns, count, np.zeros(count, dtype=bool), column_units=column_units)


def _slow_row(raw, budget: float | None = None) -> dict:
    """One row through the case schema and the general evaluation (solver budget [s])."""
    if not isinstance(raw, dict):
        message = raw if isinstance(raw, str) else f"expected an object, got {type(raw).__name__}"
        return {"status": 422, "errors": [{"field": "(row)", "message": message}]}
    try:
        case = CASE_SCHEMA.load(raw)
        return {"status": 200, **result_fields(case, compute(case, budget))}
    except ValidationError as exc:
        return {"status": 422, "errors": flatten_errors(exc.messages)}
    except PhysicsInputError as exc:
        return {"status": 422, "errors": [{"field": request_field(exc.argument),
                                           "message": exc.reason}]}
    except SolverBudgetExceeded as exc:
        return {"status": 503, "errors": [{"field": "(row)", "message": str(exc)}]}


@contextmanager
def _collector_paused():
    """Pause the cyclic garbage collector while a batch builds ~10 objects a row.

    The rows hold no reference cycles, and CPython 3.11 would otherwise run a full
    collection over the growing result many times (measured: 2-3x slower rows).
    """
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()


def _as_batch(cases: list | Batch) -> Batch:
    if isinstance(cases, Batch):
        return cases
    columns, odd = flatten_cases(cases)
    return Batch(columns, len(cases), odd, cases=cases)


def _fast_groups(batch: Batch):
    """(group, column results) for the fast path, and the rows left for one-by-one."""
    groups, rest = fast_path_columns(batch.columns, batch.count, batch.odd, batch.column_units,
                                     batch.complete)
    done = []
    for group in groups:
        columns = evaluate_first_order_columns(
            group.shape, group.dimensions, group.rate_constant,
            group.effective_diffusivity, group.surface_concentration,
        )
        if not columns.finite.all():  # overflowing rows: the one-by-one path reports them
            rest.extend(group.rows[~columns.finite].tolist())
            group, columns = group.subset(columns.finite), columns.subset(columns.finite)
        done.append((group, columns))
    return done, sorted(rest)


def _slow_rows(batch: Batch, rest: list[int]):
    """(index, result) for every remaining row, within the batch's time budget."""
    solver_budget = current_app.config["SOLVER_TIME_BUDGET"]
    batch_budget = current_app.config["BATCH_TIME_BUDGET"]
    deadline = time.monotonic() + batch_budget
    for index in rest:
        remaining = deadline - time.monotonic()
        if remaining <= 0:
            yield index, {"status": 503, "errors": [{
                "field": "(row)",
                "message": f"not computed: the batch's time budget of {batch_budget:g} s was "
                           f"used up by earlier rows; send this row again (alone or in a "
                           f"smaller batch)"}]}
            continue
        yield index, _slow_row(batch.case(index), min(solver_budget, remaining))


def run_batch(cases: list | Batch) -> tuple[list[str], int]:
    """(JSON text of every row's answer in row order, number of failed rows): fast-path
    groups column-wise, every other row one by one."""
    batch = _as_batch(cases)
    results = np.empty(batch.count, dtype=object)
    done, rest = _fast_groups(batch)
    for group, columns in done:
        rows, texts = column_rows_json(group, columns)
        results[rows] = texts
    failed = 0
    for index, result in _slow_rows(batch, rest):
        failed += result["status"] != 200
        results[index] = orjson.dumps({"index": index, **result}, option=JSON_OPTIONS).decode()
    return results.tolist(), failed


COLUMN_LAYOUT_FIELDS = ("effectiveness_factor", "thiele_modulus", "thiele_length",
                        "generalized_modulus", "characteristic_length", "observed_rate")


def run_batch_columns(cases: list | Batch) -> dict:
    """Answer every row in the column layout: one array per result field, rows in order,
    null where a row failed; warnings as codes joined by ";" (no messages), errors as
    "field: message" joined by "; "."""
    batch = _as_batch(cases)
    n = batch.count
    numbers = {name: np.full(n, np.nan) for name in COLUMN_LAYOUT_FIELDS}
    status = np.zeros(n, dtype=int)
    texts = {name: np.full(n, None, dtype=object) for name in ("regime", "method", "warnings", "errors")}
    done, rest = _fast_groups(batch)
    for group, columns in done:
        rows = group.rows
        for name in COLUMN_LAYOUT_FIELDS:
            numbers[name][rows] = getattr(columns, name)
        status[rows] = 200
        texts["regime"][rows] = columns.regime
        texts["method"][rows] = "closed_form"
        texts["warnings"][rows] = columns.codes
    for index, result in _slow_rows(batch, rest):
        status[index] = result["status"]
        if result["status"] == 200:
            for name in COLUMN_LAYOUT_FIELDS:
                value = result[name]
                numbers[name][index] = value["value"] if isinstance(value, dict) else value
            texts["regime"][index] = result["regime"]
            texts["method"][index] = result["method"]
            texts["warnings"][index] = ";".join(w["code"] for w in result["warnings"])
        else:
            texts["errors"][index] = "; ".join(f"{e['field']}: {e['message']}"
                                               for e in result["errors"])
    failed = int(np.count_nonzero(status != 200))
    return {
        "rows": n, "succeeded": n - failed, "failed": failed,
        "units": {name: OUTPUT_UNITS[name] for name in COLUMN_LAYOUT_FIELDS if name in OUTPUT_UNITS},
        "columns": {"index": np.arange(n), "status": status, **numbers,
                    **{name: values.tolist() for name, values in texts.items()}},
    }


@bp.post("/effectiveness/batch")
def effectiveness_batch():
    wants = request.accept_mimetypes.best_match(["application/json", "text/csv"],
                                                default="application/json")
    if request.accept_mimetypes and not request.accept_mimetypes.best_match(
        ["application/json", "text/csv"]
    ):
        raise ApiProblem("not-acceptable", "This operation answers application/json or text/csv.")
    layout = request.args.get("layout", "rows")
    if layout not in ("rows", "columns") or len(request.args.getlist("layout")) > 1:
        raise validation_problem([{"field": "layout", "message": "must be rows or columns"}])
    with _collector_paused():
        batch = _read_batch()
        observe_batch(batch.count)
        if wants == "text/csv":
            return csv_response(_csv_text(run_batch_columns(batch)))
        if layout == "columns":
            return json_response(run_batch_columns(batch))
        return Response(_rows_body(*run_batch(batch)), mimetype="application/json")


def _rows_body(results: list[str], failed: int) -> list[bytes]:
    """The row-layout answer from the rows' JSON texts, as a list of pieces (the server
    writes them one after the other): rows joined and encoded 1000 at a time reuse the
    memory of the pieces before, where one piece of tens of MB would be copied twice
    into fresh pages."""
    n = len(results)
    head = '{"rows":%d,"succeeded":%d,"failed":%d,"results":[' % (n, n - failed, failed)
    pieces = [head.encode()]
    for start in range(0, n, 1000):
        if start:
            pieces.append(b",")
        pieces.append(",".join(results[start:start + 1000]).encode())
    pieces.append(b"]}")
    return pieces


def _csv_text(payload: dict) -> str:
    """The column-layout answer as CSV text (header with units; empty cells where a row
    failed). The numbers are written by orjson as one table (shortest round-trip form;
    a failed row's null becomes an empty cell), text cells quoted as RFC 4180 requires."""
    header = ["index", "status"] + [
        f"{c} [{OUTPUT_UNITS[c]}]" if c in OUTPUT_UNITS else c for c in CSV_COLUMNS
    ] + ["warnings", "errors"]
    columns = payload["columns"]
    numeric = [name for name in CSV_COLUMNS if isinstance(columns[name], np.ndarray)]
    words = [name for name in CSV_COLUMNS if name not in numeric]
    if numeric != list(CSV_COLUMNS[:len(numeric)]):
        raise ValueError("the CSV writer expects the numeric columns first")
    n = len(columns["index"])
    if n:
        table = orjson.dumps(np.column_stack([columns[name] for name in numeric]),
                             option=orjson.OPT_SERIALIZE_NUMPY).decode()
        numbers = table[2:-2].replace("null", "").split("],[")
    else:
        numbers = []
    texts = [_plain_cells(columns[name]) for name in words + ["warnings"]]
    errors = columns["errors"]
    texts.append([_csv_cell(v) for v in errors] if errors.count(None) != n else [""] * n)
    lines = [",".join(header)]
    lines += [",".join(cells) for cells in zip(
        map(str, columns["index"].tolist()), map(str, columns["status"].tolist()), numbers,
        *texts)]
    return "\r\n".join(lines) + "\r\n"


def _plain_cells(values: list) -> list[str]:
    """Cells of plain words (regime, method, warning codes): None becomes empty."""
    return [("" if v is None else v) for v in values] if None in values else values


def _csv_cell(value) -> str:
    if value is None:
        return ""
    text = str(value)
    if any(c in text for c in ',"\r\n'):
        return '"' + text.replace('"', '""') + '"'
    return text
