"""POST /v1/effectiveness/batch: many cases (JSON list or CSV table); one bad row never fails the others."""

from __future__ import annotations

import gc
import time
from contextlib import contextmanager

import numpy as np
from flask import Blueprint, current_app, request
from marshmallow import ValidationError

from ..errors import ApiProblem, validation_problem
from ..formats import csv_response, json_response, read_json_body
from ..metrics import observe_batch
from ..physics.effectiveness import evaluate_first_order_columns
from ..physics.errors import PhysicsInputError, SolverBudgetExceeded
from ..schemas.case import CASE_SCHEMA, flatten_errors
from ..schemas.columnar import fast_path_columns, flatten_cases, row_case
from ..schemas.csv_rows import CsvProblem, read_csv_columns
from .effectiveness import compute
from ..schemas.responses import OUTPUT_UNITS, column_rows, request_field, result_fields

bp = Blueprint("batch", __name__, url_prefix="/v1")

CSV_COLUMNS = (
    "effectiveness_factor", "thiele_modulus", "thiele_length", "generalized_modulus",
    "characteristic_length", "observed_rate", "regime", "method",
)


class Batch:
    """The rows of one batch as dotted columns, and how to rebuild one row as a case."""

    def __init__(self, columns: dict, count: int, odd=None, cases: list | None = None,
                 problems: dict | None = None):
        self.columns, self.count, self.odd = columns, count, odd
        self.cases, self.problems = cases, problems or {}

    def case(self, index: int):
        if index in self.problems:
            return self.problems[index]  # a string: the row's problem
        if self.cases is not None:
            return self.cases[index]
        return row_case(self.columns, index)


def _read_batch() -> Batch:
    limit = current_app.config["MAX_BATCH_ROWS"]
    if request.mimetype in ("text/csv", "application/csv"):
        try:
            columns, count, ragged = read_csv_columns(request.get_data(cache=False), limit)
        except CsvProblem as exc:
            if exc.malformed:
                raise ApiProblem("malformed-body", str(exc)) from None
            raise validation_problem([{"field": exc.field, "message": str(exc)}]) from None
        odd = np.zeros(count, dtype=bool)
        odd[list(ragged)] = True
        batch = Batch(columns, count, odd, problems=ragged)
    else:
        body = read_json_body()
        if not isinstance(body, dict) or set(body) != {"cases"} or not isinstance(body["cases"], list):
            raise validation_problem(
                [{"field": "cases", "message": 'the body must be {"cases": [<case>, ...]}'}]
            )
        cases = body["cases"]
        count = len(cases)
        if count <= limit:
            columns, odd = flatten_cases(cases)
            batch = Batch(columns, count, odd, cases=cases)
    if count > limit:
        raise ApiProblem("too-large", f"The batch has {count} rows; the limit is {limit}.")
    return batch


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


def run_batch(cases: list | Batch) -> list[dict]:
    """Answer every row: fast-path groups column-wise, every other row one by one."""
    if not isinstance(cases, Batch):
        columns, odd = flatten_cases(cases)
        cases = Batch(columns, len(cases), odd, cases=cases)
    batch = cases
    results: list = [None] * batch.count
    groups, rest = fast_path_columns(batch.columns, batch.count, batch.odd)
    for group in groups:
        columns = evaluate_first_order_columns(
            group.shape, group.dimensions, group.rate_constant,
            group.effective_diffusivity, group.surface_concentration,
        )
        if not columns.finite.all():  # overflowing rows: the one-by-one path reports them
            rest.extend(group.rows[~columns.finite].tolist())
            group, columns = group.subset(columns.finite), columns.subset(columns.finite)
        for index, fields in column_rows(group, columns):
            results[index] = {"index": index, "status": 200, **fields}
    solver_budget = current_app.config["SOLVER_TIME_BUDGET"]
    batch_budget = current_app.config["BATCH_TIME_BUDGET"]
    deadline = time.monotonic() + batch_budget
    for index in sorted(rest):
        remaining = deadline - time.monotonic()
        if remaining <= 0:
            results[index] = {"index": index, "status": 503, "errors": [{
                "field": "(row)",
                "message": f"not computed: the batch's time budget of {batch_budget:g} s was "
                           f"used up by earlier rows; send this row again (alone or in a "
                           f"smaller batch)"}]}
            continue
        results[index] = {"index": index,
                          **_slow_row(batch.case(index), min(solver_budget, remaining))}
    return results


@bp.post("/effectiveness/batch")
def effectiveness_batch():
    wants = request.accept_mimetypes.best_match(["application/json", "text/csv"],
                                                default="application/json")
    if request.accept_mimetypes and not request.accept_mimetypes.best_match(
        ["application/json", "text/csv"]
    ):
        raise ApiProblem("not-acceptable", "This operation answers application/json or text/csv.")
    with _collector_paused():
        batch = _read_batch()
        observe_batch(batch.count)
        results = run_batch(batch)
        failed = sum(1 for r in results if r["status"] != 200)
        if wants == "text/csv":
            return csv_response(_csv_table(results))
        return json_response(
            {"rows": len(results), "succeeded": len(results) - failed, "failed": failed,
             "results": results}
        )


def _csv_table(results: list[dict]) -> list[list]:
    header = ["index", "status"] + [
        f"{c} [{OUTPUT_UNITS[c]}]" if c in OUTPUT_UNITS else c for c in CSV_COLUMNS
    ] + ["warnings", "errors"]
    table = [header]
    for r in results:
        if r["status"] == 200:
            cells = [_plain_value(r[c]) for c in CSV_COLUMNS]
            warnings = ";".join(w["code"] for w in r["warnings"])
            errors = ""
        else:
            cells = [""] * len(CSV_COLUMNS)
            warnings = ""
            errors = "; ".join(f"{e['field']}: {e['message']}" for e in r["errors"])
        table.append([r["index"], r["status"], *cells, warnings, errors])
    return table


def _plain_value(value):
    return value["value"] if isinstance(value, dict) else value
