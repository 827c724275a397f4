"""Response shaping: physics results -> JSON-ready dicts with SI units."""

from __future__ import annotations

import math
import re
from functools import lru_cache

import numpy as np
import orjson

from ..physics.case import Case
from ..physics.diagnostics import WARNING_CODES
from ..physics.effectiveness import (
    REGIME_WARNINGS, EffectivenessResult, first_order_row_diagnostics, regime_message_template,
)
from ..physics.geometry import SHAPES
from .number_text import format_4g
from .rules import FIELD_RULES

# The SI unit of every dimensional result field (one table).
OUTPUT_UNITS = {
    "thiele_length": "m",
    "characteristic_length": "m",
    "observed_rate": "mol/(m^3*s)",
    "pellet_volume": "m^3",
    "external_area": "m^2",
    "profile.position": "m",
    "profile.concentration": "mol/m^3",
}

# Physics diagnostic field names -> request field names.
# Physics argument names (in diagnostics and PhysicsInputError) -> request field names.
PHYSICS_FIELDS = {
    "effective_diffusivity": "transport.effective_diffusivity",
    "surface_concentration": "surface.concentration",
    "concentration": "surface.concentration",
    "diffusion_length": "pellet",
    "radius": "pellet.radius",
    "thickness": "pellet.thickness",
    "outer_radius": "pellet.outer_radius",
    "inner_radius": "pellet.inner_radius",
    "length": "pellet.length",
    "lobes": "pellet.lobes",
    "lobe_diameter": "pellet.lobe_diameter",
    "volume": "pellet.volume",
    "external_area": "pellet.external_area",
    "rate_constant": "kinetics.rate_constant",
    "order": "kinetics.order",
    "adsorption_constant": "kinetics.adsorption_constant",
    "equilibrium_concentration": "kinetics.equilibrium_concentration",
    "molecular_diffusivity": "transport.pore.molecular_diffusivity",
    "species": "transport.pore.species",
    "prater_number": "thermal.prater_number",
    "arrhenius_number": "thermal.arrhenius_number",
}


def request_field(physics_name: str, with_film: bool = False) -> str:
    """The request field a physics argument name stands for."""
    name = PHYSICS_FIELDS.get(physics_name, physics_name)
    if with_film and name == "surface.concentration":
        return "bulk.concentration"
    return name

# Result fields a spreadsheet cell may ask for with field= (scalars only).
SCALAR_FIELDS = (
    "effectiveness_factor",
    "thiele_modulus",
    "thiele_length",
    "generalized_modulus",
    "characteristic_length",
    "observed_rate",
    "regime",
    "method",
)


def quantity(value: float, unit: str) -> dict:
    return {"value": _finite(value), "unit": unit}


def _finite(value: float) -> float:
    value = float(value)
    if not math.isfinite(value):  # guard: a response never carries a non-finite number
        raise ValueError("non-finite result")
    return value


def _echo_rule(prefix: str, name: str, value):
    rule = FIELD_RULES.get(f"{prefix}.{name}")
    if value is None or isinstance(value, (str, bool)) or rule is None or not rule.unit:
        return value
    return quantity(value, rule.unit)


def echo_inputs(case: Case) -> dict:
    """The interpreted inputs in SI, so a caller sees how every field was read."""
    pellet: dict = {"shape": case.shape}
    for name, value in case.dimensions.items():
        pellet[name] = _echo_rule("pellet", name, value)
    kinetics: dict = {"model": case.model}
    for name, value in case.kinetic_parameters.items():
        if name == "rate_constant":
            kinetics[name] = quantity(value, case.extras["rate_constant_unit"])
        else:
            kinetics[name] = _echo_rule("kinetics", name, value)
    kinetics["rate_basis"] = "pellet_volume"
    if case.extras.get("rate_basis") == "catalyst_mass":
        kinetics["converted_from"] = "catalyst_mass"
        kinetics["pellet_density"] = quantity(case.extras["pellet_density"], "kg/m^3")
    out = {"pellet": pellet, "kinetics": kinetics, "transport": _echo_transport(case)}
    if case.film is None:
        out["surface"] = {"concentration": quantity(case.surface_concentration, "mol/m^3")}
    else:
        bulk = {"concentration": quantity(case.bulk_concentration, "mol/m^3")}
        if case.bulk_temperature is not None:
            bulk["temperature"] = quantity(case.bulk_temperature, "K")
        out["bulk"] = bulk
        film = {k: _echo_rule("film", k, v) for k, v in vars(case.film).items()
                if k not in ("flow",) and v is not None}
        film.update({k: _echo_rule("film", k, v) for k, v in case.film.flow.items()})
        out["film"] = film
    if case.thermal is not None:
        out["thermal"] = {k: _echo_rule("thermal", k, v) for k, v in vars(case.thermal).items()
                          if v is not None}
    out["options"] = {"profile_points": case.profile_points}
    return out


def _echo_transport(case: Case) -> dict:
    if case.pore is None:
        return {"effective_diffusivity": quantity(case.effective_diffusivity, "m^2/s")}
    return {"pore": echo_pore(case.pore)}


def echo_pore(pore) -> dict:
    """The pore block as it was read (SI)."""
    out: dict = {"porosity": pore.porosity, "tortuosity": pore.tortuosity, "phase": pore.phase}
    for name, unit in (("pore_diameter", "m"), ("temperature", "K"), ("pressure", "Pa"),
                       ("molecular_diffusivity", "m^2/s")):
        value = getattr(pore, name)
        if value is not None:
            out[name] = quantity(value, unit)
    for name in ("species", "carrier"):
        sp = getattr(pore, name)
        if sp is not None:
            out[name] = {"name": sp.name, "molar_mass": quantity(sp.molar_mass, "kg/mol")}
    for name, unit in (("solvent_viscosity", "Pa*s"), ("solvent_molar_mass", "kg/mol"),
                       ("association_factor", ""), ("solute_molar_volume", "m^3/mol")):
        if name in pore.liquid:
            value = pore.liquid[name]
            out[name] = quantity(value, unit) if unit else value
    return out


def core_fields(
    eta, phi, thiele_length, generalized, characteristic_length, observed_rate,
    regime, method, shape_exponent, volume, area, warnings,
) -> dict:
    """The result fields shared by the single and batch answers (one place for their shape)."""
    out = {
        "effectiveness_factor": _finite(eta),
        "thiele_modulus": _finite(phi),
        "thiele_length": quantity(thiele_length, "m"),
        "generalized_modulus": _finite(generalized),
        "characteristic_length": quantity(characteristic_length, "m"),
        "observed_rate": quantity(observed_rate, OUTPUT_UNITS["observed_rate"]),
        "regime": regime,
        "method": method,
        "shape_exponent": shape_exponent,
    }
    if volume is not None:
        out["pellet_volume"] = quantity(volume, OUTPUT_UNITS["pellet_volume"])
        out["external_area"] = quantity(area, OUTPUT_UNITS["external_area"])
    out["warnings"] = [_warning(d) for d in warnings]
    return out


def result_fields(case: Case, result: EffectivenessResult) -> dict:
    geometry = result.geometry
    out = core_fields(
        result.effectiveness_factor, result.thiele_modulus, result.thiele_length,
        result.generalized_modulus, result.characteristic_length, result.observed_rate,
        result.regime, result.method, geometry.shape_exponent,
        geometry.volume, geometry.external_area, result.diagnostics,
    )
    warnings = out.pop("warnings")
    out.update(engine_fields(result))
    out["warnings"] = warnings
    return out


def _q_or_none(value, unit):
    return None if value is None else quantity(value, unit)


def engine_fields(result: EffectivenessResult) -> dict:
    """Film, heat-effect, steady-state and solver fields, present when they apply."""
    out: dict = {}
    if result.overall_effectiveness is not None:
        out["overall_effectiveness"] = _finite(result.overall_effectiveness)
        out["surface_concentration"] = quantity(result.surface_concentration, "mol/m^3")
        if result.effectiveness_factor > 0:
            out["external_resistance_fraction"] = _finite(
                1.0 - result.overall_effectiveness / result.effectiveness_factor)
    film = result.film
    if film is not None:
        block = {
            "mass_transfer_coefficient": quantity(film.mass_transfer_coefficient, "m/s"),
            "mass_biot_number": _finite(film.mass_biot_number),
        }
        if film.heat_transfer_coefficient is not None:
            block["heat_transfer_coefficient"] = quantity(film.heat_transfer_coefficient, "W/(m^2*K)")
        if film.heat_biot_number is not None:
            block["heat_biot_number"] = _finite(film.heat_biot_number)
        if film.correlations:
            block["particle_diameter"] = quantity(film.particle_diameter, "m")
            block["correlations"] = {
                kind: {"name": c["name"], "reference": c["reference"],
                       "groups": {k: _finite(v) for k, v in c["groups"].items()}}
                for kind, c in film.correlations.items()
            }
        out["film"] = block
    general = result.general
    if general is None:
        return out
    th = general.thermal
    if th is not None:
        block = {"prater_number": _finite(th.prater_number),
                 "arrhenius_number": _finite(th.arrhenius_number)}
        if th.temperature is not None:
            block["reference_temperature"] = quantity(th.temperature, "K")
            block["maximum_temperature_rise"] = quantity(th.maximum_temperature_rise, "K")
        out["thermal"] = block
        if general.surface_temperature is not None:
            out["surface_temperature"] = quantity(general.surface_temperature, "K")
    if general.steady_states:
        out["steady_states"] = [_state(st, th is not None) for st in general.steady_states]
        out["headline_state"] = general.headline_index
    if general.dead_zone_fraction:
        out["dead_zone"] = {
            "fraction": _finite(general.dead_zone_fraction),
            "radius": quantity(general.dead_zone_fraction * result.thiele_length, "m"),
        }
    solver = {k: v for k, v in general.solver.items() if v is not None and k != "elapsed"}
    for key in ("residual", "error_estimate"):
        if key in solver:
            solver[key] = _finite(solver[key])
    out["solver"] = solver
    return out


def _state(state, thermal: bool) -> dict:
    out = {"effectiveness_factor": _finite(state.effectiveness_factor),
           "center_concentration": quantity(state.center_concentration, "mol/m^3")}
    if thermal and state.center_temperature is not None:
        out["center_temperature"] = quantity(state.center_temperature, "K")
    out["stable"] = bool(state.stable)
    if state.overall_effectiveness is not None:
        out["overall_effectiveness"] = _finite(state.overall_effectiveness)
    if state.surface_concentration is not None:
        out["surface_concentration"] = quantity(state.surface_concentration, "mol/m^3")
    if thermal and state.surface_temperature is not None:
        out["surface_temperature"] = quantity(state.surface_temperature, "K")
    return out


def effectiveness_payload(case: Case, result: EffectivenessResult) -> dict:
    """The JSON body of /v1/effectiveness."""
    out = result_fields(case, result)
    if result.profile_position is not None:
        out["profile"] = {
            "position": {
                "value": [_finite(v) for v in result.profile_position],
                "unit": OUTPUT_UNITS["profile.position"],
            },
            "concentration": {
                "value": [_finite(v) for v in result.profile_concentration],
                "unit": OUTPUT_UNITS["profile.concentration"],
            },
        }
        general = result.general
        if general is not None and general.profile_temperature is not None:
            out["profile"]["temperature"] = {
                "value": [_finite(v) for v in general.profile_temperature], "unit": "K"}
    if result.pore is not None:
        out["diffusivity"] = diffusivity_fields(result.pore)
    out["inputs"] = echo_inputs(case)
    return out


def diffusivity_fields(pore) -> dict:
    """Molecular, Knudsen, pore and effective diffusivities (and Knudsen regime)."""
    unit = "m^2/s"
    out = {
        "molecular_diffusivity": quantity(pore.molecular_diffusivity, unit),
        "molecular_diffusivity_method": pore.molecular_method,
    }
    if pore.knudsen_diffusivity is not None:
        out["knudsen_diffusivity"] = quantity(pore.knudsen_diffusivity, unit)
    out["pore_diffusivity"] = quantity(pore.pore_diffusivity, unit)
    out["effective_diffusivity"] = quantity(pore.effective_diffusivity, unit)
    if pore.knudsen_number is not None:
        out["knudsen_number"] = _finite(pore.knudsen_number)
        out["knudsen_number_basis"] = pore.knudsen_number_basis
    out["regime"] = pore.regime
    return out


def column_rows_json(group, columns) -> tuple[np.ndarray, list[str]]:
    """(row indices, JSON text of each row's answer) for a fast-path group.

    The same object as ``{"index": i, "status": 200, **core_fields(...)}`` (a test
    parses the text and compares), written from the columns directly: the numbers
    by orjson column-wise (its shortest round-trip form, as for any answer), each
    row by one compiled f-string. This loop runs once per row of 100k-row batches;
    building and serializing a dict per row cost four times as much.
    """
    arrays = [
        columns.effectiveness_factor, columns.thiele_modulus, columns.thiele_length,
        columns.generalized_modulus, columns.characteristic_length, columns.observed_rate,
    ]
    if columns.volume is not None:
        arrays += [columns.volume, columns.external_area]
    if not all(np.all(np.isfinite(a)) for a in arrays):
        raise ValueError("non-finite result")  # guard: never a non-finite number out
    texts = [_number_texts(a) for a in arrays]
    exponent = SHAPES[group.shape].shape_exponent
    rows = group.rows.tolist()
    out = _rows_writer(exponent, columns.volume is not None)(
        rows, columns.regime, format_4g(columns.generalized_modulus),
        format_4g(columns.effectiveness_factor), *texts)
    # rows with INPUT_OUTSIDE_COMMON_RANGE (rare): their diagnostics one by one
    for position in np.flatnonzero(columns.out_of_range).tolist():
        numbers = [float(a[position]) for a in arrays]
        diagnostics = first_order_row_diagnostics(
            numbers[3], numbers[0], numbers[2], float(group.effective_diffusivity[position]),
            float(group.surface_concentration[position]))
        fields = core_fields(*numbers[:6], columns.regime[position], "closed_form", exponent,
                             *(numbers[6:] or (None, None)), diagnostics)
        out[position] = orjson.dumps({"index": rows[position], "status": 200,
                                      **fields}).decode()
    return group.rows, out


def _number_texts(values: np.ndarray) -> list[str]:
    """Each float of an array as orjson writes it."""
    text = orjson.dumps(np.ascontiguousarray(values, dtype=np.float64),
                        option=orjson.OPT_SERIALIZE_NUMPY).decode()
    return text[1:-1].split(",") if len(values) else []


@lru_cache(maxsize=16)
def _rows_writer(shape_exponent: int, with_volume: bool):
    """A function writing the JSON text of many fast rows of one shape, from: the row
    indices, regimes, generalized moduli and eta as the regime messages write them
    (``%.4g`` texts), then the six (eight with volume and area) result columns as
    number texts.

    It is compiled from the row's text (one f-string per regime inside one list
    comprehension): the fastest way CPython builds many strings of many parts. Only
    our own constant text goes into the source, through repr.
    """
    def unit(name):
        return orjson.dumps(OUTPUT_UNITS[name]).decode()

    numbers = ["eta", "phi", "length", "gen", "char", "rate"] + (
        ["volume", "area"] if with_volume else [])
    head = (
        '{"index":{index},"status":200,"effectiveness_factor":{eta},"thiele_modulus":{phi},'
        '"thiele_length":{"value":{length},"unit":' + unit("thiele_length") + '},'
        '"generalized_modulus":{gen},'
        '"characteristic_length":{"value":{char},"unit":' + unit("characteristic_length") + '},'
        '"observed_rate":{"value":{rate},"unit":' + unit("observed_rate") + '},'
    )
    tail = '"method":"closed_form","shape_exponent":' + orjson.dumps(shape_exponent).decode()
    if with_volume:
        tail += (',"pellet_volume":{"value":{volume},"unit":' + unit("pellet_volume") + '},'
                 '"external_area":{"value":{area},"unit":' + unit("external_area") + '}')
    texts = {"kinetic": head + '"regime":"kinetic",' + tail + ',"warnings":[]}'}
    for regime, code in REGIME_WARNINGS.items():
        severity = WARNING_CODES[code][0]
        if severity == "caution":  # would carry the safety note: not written here
            raise ValueError(f"{code} is a caution")
        message = orjson.dumps(regime_message_template(regime, 1.0)).decode()
        warning = f'{{"code":"{code}","severity":"{severity}","message":{message}}}'
        texts[regime] = head + f'"regime":"{regime}",' + tail + ',"warnings":[' + warning + ']}'
    choice = "{kinetic} if regime == 'kinetic' else {diffusion} if regime == 'diffusion' " \
             "else {transition}".format(**{r: _f_string(t) for r, t in texts.items()})
    columns = ", ".join(f"{name}_column" for name in numbers)
    source = (f"lambda rows, regimes, gens, etas, {columns}: ["
              f"{choice} for index, regime, generalized, eta_value, {', '.join(numbers)} "
              f"in zip(rows, regimes, gens, etas, {columns})]")
    return eval(source, {"__builtins__": {"zip": zip}})  # noqa: S307 - our constant text only


_FIELD = re.compile(r"\{(index|eta|phi|length|gen|char|rate|volume|area)\}|%%|%\.4g")


def _f_string(text: str) -> str:
    """The source of an f-string giving ``text`` with its {name} fields filled in and
    its two %.4g (from the regime message template) filled with the texts of the
    generalized modulus and eta (names ``generalized``, ``eta_value``)."""
    fills = iter(["generalized", "eta_value"])

    def field(match):
        token = match.group(0)
        if token == "%%":
            return "%"
        if token == "%.4g":
            return "{" + next(fills) + "}"
        return token

    parts, last = [], 0
    for match in _FIELD.finditer(text):  # literal text: braces doubled for the f-string
        parts.append(text[last:match.start()].replace("{", "{{").replace("}", "}}"))
        parts.append(field(match))
        last = match.end()
    parts.append(text[last:].replace("{", "{{").replace("}", "}}"))
    return f"f{''.join(parts)!r}"


def scalar_row(result: EffectivenessResult) -> dict:
    """The scalar results of one case as a flat row (SI numbers, warnings as codes)."""
    return {
        "effectiveness_factor": _finite(result.effectiveness_factor),
        "thiele_modulus": _finite(result.thiele_modulus),
        "thiele_length": _finite(result.thiele_length),
        "generalized_modulus": _finite(result.generalized_modulus),
        "characteristic_length": _finite(result.characteristic_length),
        "observed_rate": _finite(result.observed_rate),
        "regime": result.regime,
        "method": result.method,
        "warnings": ";".join(d.code for d in result.diagnostics),
    }


def warning_dicts(diagnostics) -> list[dict]:
    return [_warning(d) for d in diagnostics]


def _warning(diag) -> dict:
    item = diag.as_dict()
    if "field" in item:
        item["field"] = request_field(item["field"])
    return item
