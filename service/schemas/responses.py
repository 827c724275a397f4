"""Response shaping: physics results -> JSON-ready dicts with SI units."""

from __future__ import annotations

import math

from ..physics.case import Case
from ..physics.effectiveness import EffectivenessResult
from ..physics.geometry import SHAPES
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
DIAGNOSTIC_FIELDS = {
    "effective_diffusivity": "transport.effective_diffusivity",
    "surface_concentration": "surface.concentration",
    "diffusion_length": "pellet",
}

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


def echo_inputs(case: Case) -> dict:
    """The interpreted inputs in SI, so a caller sees how every field was read."""
    pellet: dict = {"shape": case.shape}
    for name, value in case.dimensions.items():
        rule = FIELD_RULES.get(f"pellet.{name}")
        pellet[name] = quantity(value, rule.unit) if rule and rule.unit else value
    params = case.kinetic_parameters
    kinetics = {
        "model": case.model,
        "order": params["order"],
        "rate_constant": quantity(params["rate_constant"], case.extras["rate_constant_unit"]),
        "rate_basis": "pellet_volume",
    }
    if case.extras.get("rate_basis") == "catalyst_mass":
        kinetics["converted_from"] = "catalyst_mass"
        kinetics["pellet_density"] = quantity(case.extras["pellet_density"], "kg/m^3")
    return {
        "pellet": pellet,
        "kinetics": kinetics,
        "transport": {
            "effective_diffusivity": quantity(case.effective_diffusivity, "m^2/s"),
        },
        "surface": {"concentration": quantity(case.surface_concentration, "mol/m^3")},
        "options": {"profile_points": case.profile_points},
    }


def effectiveness_payload(case: Case, result: EffectivenessResult) -> dict:
    """The JSON body of POST /v1/effectiveness."""
    out = {
        "effectiveness_factor": _finite(result.effectiveness_factor),
        "thiele_modulus": _finite(result.thiele_modulus),
        "thiele_length": quantity(result.thiele_length, OUTPUT_UNITS["thiele_length"]),
        "generalized_modulus": _finite(result.generalized_modulus),
        "characteristic_length": quantity(
            result.characteristic_length, OUTPUT_UNITS["characteristic_length"]
        ),
        "observed_rate": quantity(result.observed_rate, OUTPUT_UNITS["observed_rate"]),
        "regime": result.regime,
        "method": result.method,
        "shape_exponent": SHAPES[case.shape].shape_exponent,
    }
    geometry = result.geometry
    if geometry.volume is not None:
        out["pellet_volume"] = quantity(geometry.volume, OUTPUT_UNITS["pellet_volume"])
        out["external_area"] = quantity(geometry.external_area, OUTPUT_UNITS["external_area"])
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
    out["warnings"] = [_warning(d) for d in result.diagnostics]
    out["inputs"] = echo_inputs(case)
    return out


def _warning(diag) -> dict:
    item = diag.as_dict()
    if "field" in item:
        item["field"] = DIAGNOSTIC_FIELDS.get(item["field"], item["field"])
    return item
