"""Pictures and sweeps.

- ``POST /v1/effectiveness`` and ``POST /v1/size`` also answer ``image/svg+xml`` when the
  Accept header prefers it (JSON stays the default): the profile plot and the size
  trade-off plot. ``init_app`` adds this negotiation around those two views.
- ``POST /v1/effectiveness/curve``: eta against the generalized modulus for the case's shape
  and rate law (JSON points, or the log-log plot).
- ``POST /v1/sweep``: one field of a case varied over a range (JSON rows, CSV or plot).
"""

from __future__ import annotations

import functools
import time
from dataclasses import replace

import numpy as np
from flask import Blueprint, Flask, Response, current_app, request
from marshmallow import ValidationError

from ..errors import ApiProblem
from ..formats import csv_response, json_response, read_json_body
from ..metrics import timed_evaluate
from ..physics.effectiveness import evaluate, evaluate_first_order_columns
from ..physics.errors import PhysicsInputError, SolverBudgetExceeded
from ..physics.inversion import largest_pellet, table_scales
from ..schemas.case import CASE_SCHEMA, flatten_errors
from ..schemas.responses import effectiveness_payload, request_field, warning_dicts
from ..schemas.rules import FIELD_RULES
from ..schemas.size import load_size, main_dimension
from ..schemas.sweep import (failed_row, load_sweep, ok_row, sweep_csv_rows, sweep_payload,
                             with_value)
from .. import plots
from .effectiveness import compute, load_case, require_object

bp = Blueprint("plots", __name__, url_prefix="/v1")

SVG = plots.SVG_MEDIA_TYPE
PROFILE_POINTS = 101  # profile positions drawn when the case asks for none
CURVE_POINTS_CLOSED_FORM = 60
CURVE_POINTS_ENGINE = 31
CURVE_MODULUS_SPAN = (1e-2, 1e2)  # the curve spans at least this generalized modulus range
SWEEP_BUDGET_FACTOR = 4.0  # a whole sweep may take this many single-solve budgets


def svg_response(document: bytes) -> Response:
    return Response(document, mimetype=SVG)


def _negotiate(offered: list[str]) -> str:
    """The media type to answer from ``offered`` (first = default); 406 if none is acceptable."""
    accept = request.accept_mimetypes
    if accept and not accept.best_match(offered):
        raise ApiProblem("not-acceptable", f"This operation answers {', '.join(offered)}.")
    return accept.best_match(offered, default=offered[0])


def _prefers_svg(offered: list[str]) -> bool:
    accept = request.accept_mimetypes
    return bool(accept) and accept.best_match(offered + [SVG]) == SVG


# --------------------------------------------------------------------- negotiated pictures


def effectiveness_svg() -> Response:
    """The profile plot of one case (every steady state marked)."""
    case = load_case(read_json_body())
    if case.profile_points == 0:
        case = replace(case, profile_points=PROFILE_POINTS)
    answer = effectiveness_payload(case, compute(case))
    return svg_response(plots.profile_svg(answer))


def size_svg() -> Response:
    """The size trade-off plot (eta and the Ergun pressure gradient against size)."""
    sizing = load_size(require_object(read_json_body(), "a pellet case and a target"))
    table = sizing.table
    scales = table_scales(table["min_scale"], table["max_scale"], table["points"],
                          table["spacing"])
    answer = largest_pellet(sizing.case, sizing.target, sizing.bed, scales)
    main = main_dimension(sizing.case.shape)
    rows = answer.rows
    gradients = None if sizing.bed is None else [r.pressure_gradient for r in rows]
    largest = None if answer.largest is None else answer.largest.dimensions[main]
    note = None if answer.largest is not None else f"{answer.message}."
    unit = FIELD_RULES[f"pellet.{main}"].unit
    return svg_response(plots.tradeoff_svg(
        main, [r.dimensions[main] for r in rows], [r.effectiveness_factor for r in rows],
        gradients, sizing.target, largest, table["spacing"] == "log", note=note, si_unit=unit))


NEGOTIATED = {
    "effectiveness.effectiveness_post": (["application/json"], effectiveness_svg),
    "size.size_post": (["application/json", "text/csv"], size_svg),
}


def init_app(app: Flask) -> None:
    """Answer image/svg+xml on the views in NEGOTIATED when Accept prefers it.

    Call after their blueprints are registered. The original view answers every other
    request unchanged (JSON stays the default)."""
    for endpoint, (offered, picture) in NEGOTIATED.items():
        view = app.view_functions[endpoint]

        @functools.wraps(view)
        def negotiated(*args, _view=view, _offered=offered, _picture=picture, **kwargs):
            if _prefers_svg(_offered):
                return _picture()
            return _view(*args, **kwargs)

        app.view_functions[endpoint] = negotiated


# --------------------------------------------------------------------- effectiveness curve


def _is_closed_form_curve(case, result) -> bool:
    return (case.model == "power_law" and case.kinetic_parameters.get("order") == 1.0
            and case.thermal is None and case.effective_diffusivity is not None
            and result.geometry.shape_exponent is not None)


def _curve_rate_constants(k0: float, modulus0: float, points: int) -> np.ndarray:
    """Rate constants spanning the generalized modulus range around the case.

    Every registered rate law is proportional to its rate constant, so the generalized
    modulus grows as sqrt(k): k = k0 (Phi / Phi0)^2 puts the points evenly in log Phi.
    The moduli plotted are those the evaluation returns, not these targets.
    """
    low = min(CURVE_MODULUS_SPAN[0], modulus0 / 10.0)
    high = max(CURVE_MODULUS_SPAN[1], modulus0 * 10.0)
    return k0 * (np.geomspace(low, high, points) / modulus0) ** 2


def effectiveness_curve(case, result, budget: float) -> dict:
    """The curve's JSON: points (k, Phi, eta, other steady states), operating point, method."""
    k0 = case.kinetic_parameters["rate_constant"]
    unit = case.extras["rate_constant_unit"]
    if not (k0 > 0 and result.generalized_modulus > 0):
        raise ApiProblem("validation-error", "An effectiveness curve needs a reaction.", [{
            "field": "kinetics.rate_constant", "message": "must be > 0 for an effectiveness curve"}])
    curve = {"shape": case.shape, "model": case.model, "method": "numerical",
             "rate_constant_unit": unit,
             "operating_point": {"rate_constant": k0,
                                 "generalized_modulus": result.generalized_modulus,
                                 "effectiveness_factor": result.effectiveness_factor},
             "asymptotes": {"kinetic": "effectiveness_factor = 1",
                            "diffusion": "effectiveness_factor = 1 / generalized_modulus"},
             "complete": True, "several_states": False, "points": []}
    if _is_closed_form_curve(case, result):
        ks = _curve_rate_constants(k0, result.generalized_modulus, CURVE_POINTS_CLOSED_FORM)
        n = len(ks)
        columns = evaluate_first_order_columns(
            case.shape, case.dimensions, ks, np.full(n, case.effective_diffusivity),
            np.full(n, float(case.reference_concentration)))
        keep = columns.finite
        curve["method"] = "closed_form"
        curve["points"] = [
            {"rate_constant": k, "generalized_modulus": phi, "effectiveness_factor": eta}
            for k, phi, eta in zip(ks[keep].tolist(), columns.generalized_modulus[keep].tolist(),
                                   columns.effectiveness_factor[keep].tolist())]
    else:
        _engine_curve(case, result, budget, curve)
    others = _other_states(result)
    if others:
        curve["several_states"] = True
        curve["operating_point"]["other_steady_states"] = others
    curve["warnings"] = warning_dicts(result.diagnostics)
    return curve


def _other_states(result) -> list[dict]:
    """The steady states besides the headline one (eta, stability), when there are several."""
    general = result.general
    if general is None or len(general.steady_states) < 2:
        return []
    return [{"effectiveness_factor": float(s.effectiveness_factor), "stable": bool(s.stable)}
            for i, s in enumerate(general.steady_states) if i != general.headline_index]


def _engine_curve(case, result, budget: float, curve: dict) -> None:
    ks = _curve_rate_constants(case.kinetic_parameters["rate_constant"],
                               result.generalized_modulus, CURVE_POINTS_ENGINE)
    deadline = time.monotonic() + budget
    skipped = 0
    for k in ks.tolist():
        remaining = deadline - time.monotonic()
        if remaining <= 0:
            curve["complete"] = False
            break
        point = replace(case, profile_points=0,
                        kinetic_parameters={**case.kinetic_parameters, "rate_constant": k})
        try:
            res = timed_evaluate(lambda c: evaluate(c, remaining), point)
        except PhysicsInputError:
            skipped += 1
            continue
        except SolverBudgetExceeded:
            curve["complete"] = False
            break
        entry = {"rate_constant": k, "generalized_modulus": res.generalized_modulus,
                 "effectiveness_factor": res.effectiveness_factor}
        others = _other_states(res)
        if others:
            curve["several_states"] = True
            entry["other_steady_states"] = others
        curve["points"].append(entry)
    if not curve["complete"] or skipped:
        curve["complete"] = False
        curve["note"] = (f"{len(curve['points'])} of {len(ks)} points computed within the "
                         f"time budget of {budget:g} s" + (f"; {skipped} could not be computed"
                                                           if skipped else ""))
    if not curve["points"]:
        raise SolverBudgetExceeded(budget, "effectiveness curve")


@bp.post("/effectiveness/curve")
def effectiveness_curve_post():
    wants = _negotiate(["application/json", SVG])
    case = load_case(read_json_body())
    result = compute(replace(case, profile_points=0))
    curve = effectiveness_curve(case, result, current_app.config["SOLVER_TIME_BUDGET"])
    if wants == SVG:
        return svg_response(plots.effectiveness_curve_svg(curve))
    return json_response(curve)


# --------------------------------------------------------------------- sweep


def _sweep_row(sweep, index: int, value: float, deadline: float, per_solve: float) -> dict:
    unit = sweep.unit
    try:
        case = CASE_SCHEMA.load(with_value(sweep.case_body, sweep.parameter, value))
    except ValidationError as exc:
        return failed_row(index, value, unit, 422, [
            {"field": f"case.{e['field']}", "message": e["message"]}
            for e in flatten_errors(exc.messages)])
    remaining = min(per_solve, deadline - time.monotonic())
    if remaining <= 0:
        return failed_row(index, value, unit, 503, [{"field": "(row)", "message": (
            "the sweep's time budget was spent before this point")}])
    try:
        result = timed_evaluate(lambda c: evaluate(c, remaining), case)
    except PhysicsInputError as exc:
        field = request_field(exc.argument, with_film=case.film is not None)
        return failed_row(index, value, unit, 422, [
            {"field": f"case.{field}" if not field.startswith("(") else field,
             "message": exc.reason}])
    except SolverBudgetExceeded as exc:
        return failed_row(index, value, unit, 503, [{"field": "(row)", "message": (
            f"the {exc.what} did not finish within {exc.budget_seconds:.3g} s")}])
    return ok_row(index, value, unit, result, [d.code for d in result.diagnostics])


@bp.post("/sweep")
def sweep_post():
    wants = _negotiate(["application/json", "text/csv", SVG])
    sweep = load_sweep(require_object(read_json_body(), "a sweep"))
    per_solve = current_app.config["SOLVER_TIME_BUDGET"]
    deadline = time.monotonic() + SWEEP_BUDGET_FACTOR * per_solve
    rows = [_sweep_row(sweep, i, v, deadline, per_solve) for i, v in enumerate(sweep.values)]
    if wants == "text/csv":
        return csv_response(sweep_csv_rows(sweep, rows))
    if wants == SVG:
        return svg_response(plots.sweep_svg(sweep.parameter, sweep.unit, rows,
                                            sweep.spacing == "log"))
    return json_response(sweep_payload(sweep, rows))
