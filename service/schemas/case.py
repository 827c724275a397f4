"""Request schema of one pellet case -> ``physics.case.Case`` (plain SI).

Shape and rate-law schemas are generated from the physics registries, so a new
shape or rate law needs a registry entry and its field rules, nothing here.
"""

from __future__ import annotations

from marshmallow import RAISE, Schema, ValidationError, fields, post_load, validates_schema

from .. import units
from ..physics.case import Case
from ..physics.geometry import SHAPES
from .pore import PoreSchema
from .fields import Choice, Integer, Number, Quantity, RawQuantity, Tagged, field_for
from .rules import FIELD_RULES

RATE_BASES = FIELD_RULES["kinetics.rate_basis"].choices


class StrictSchema(Schema):
    class Meta:
        unknown = RAISE


def _shape_schema(name: str) -> Schema:
    spec = SHAPES[name]
    declared = {"shape": fields.String(required=True)}
    for dimension in spec.dimensions:
        declared[dimension] = field_for(f"pellet.{dimension}", required=True)
    for option in spec.optional:
        declared[option] = field_for(f"pellet.{option}")

    def make(self, data, **kwargs):
        shape = data.pop("shape")
        return {"shape": shape, "dimensions": data}

    declared["make"] = post_load(make)
    return type(f"{name.title()}PelletSchema", (StrictSchema,), declared)()


PELLET_SCHEMAS = {name: _shape_schema(name) for name in SHAPES}


def rate_constant_unit(order: float, basis: str) -> str:
    """SI unit of k in r = k c^n for the given order and basis."""
    exponent = 1.0 - order
    conc = "" if exponent == 0 else f"(mol/m^3)^{exponent:g}*"
    if basis == "catalyst_mass":
        return f"{conc}m^3/(kg*s)"
    return f"{conc}1/s" if conc else "1/s"


class PowerLawSchema(StrictSchema):
    model = fields.String(required=True)
    order = Number("kinetics.order")
    rate_constant = RawQuantity(required=True)
    rate_basis = Choice("kinetics.rate_basis")
    pellet_density = Quantity("kinetics.pellet_density")

    @validates_schema
    def _density_with_mass_basis(self, data, **kwargs):
        if data.get("rate_basis") == "catalyst_mass" and "pellet_density" not in data:
            raise ValidationError(
                "required when rate_basis is catalyst_mass", field_name="pellet_density"
            )

    @post_load
    def make(self, data, **kwargs):
        basis = data["rate_basis"]
        magnitude, unit = data["rate_constant"]
        si_unit = rate_constant_unit(data["order"], basis)
        try:
            k = magnitude if unit is None else units.to_si(magnitude, unit, si_unit)
        except units.QuantityError as exc:
            raise ValidationError(
                f"{exc} (order {data['order']:g}, {basis} basis)", field_name="rate_constant"
            ) from None
        problem = FIELD_RULES["kinetics.rate_constant"].range_error(k)
        if problem:
            raise ValidationError(problem, field_name="rate_constant")
        if basis == "catalyst_mass":
            k *= data["pellet_density"]
        return {
            "model": data["model"],
            "parameters": {"order": data["order"], "rate_constant": k},
            "rate_basis": basis,
            "pellet_density": data.get("pellet_density"),
            "rate_constant_unit": rate_constant_unit(data["order"], "pellet_volume"),
        }


KINETICS_SCHEMAS = {"power_law": PowerLawSchema()}


class TransportSchema(StrictSchema):
    effective_diffusivity = Quantity("transport.effective_diffusivity")
    pore = fields.Nested(PoreSchema)

    @validates_schema
    def _one_source(self, data, **kwargs):
        if ("effective_diffusivity" in data) == ("pore" in data):
            raise ValidationError(
                "give either effective_diffusivity or pore (the pore structure), not both",
                field_name="effective_diffusivity",
            )


class SurfaceSchema(StrictSchema):
    concentration = Quantity("surface.concentration", required=True)


class OptionsSchema(StrictSchema):
    profile_points = Integer("options.profile_points")


class CaseSchema(StrictSchema):
    pellet = Tagged("shape", PELLET_SCHEMAS, required=True)
    kinetics = Tagged("model", KINETICS_SCHEMAS, required=True)
    transport = fields.Nested(TransportSchema, required=True)
    surface = fields.Nested(SurfaceSchema, required=True)
    options = fields.Nested(OptionsSchema, load_default=lambda: {"profile_points": 0})

    @post_load
    def make(self, data, **kwargs) -> Case:
        kinetics = data["kinetics"]
        return Case(
            shape=data["pellet"]["shape"],
            dimensions=data["pellet"]["dimensions"],
            model=kinetics["model"],
            kinetic_parameters=kinetics["parameters"],
            effective_diffusivity=data["transport"].get("effective_diffusivity"),
            pore=data["transport"].get("pore"),
            surface_concentration=data["surface"]["concentration"],
            profile_points=data["options"]["profile_points"],
            extras={
                "rate_basis": kinetics["rate_basis"],
                "pellet_density": kinetics["pellet_density"],
                "rate_constant_unit": kinetics["rate_constant_unit"],
            },
        )


CASE_SCHEMA = CaseSchema()


def flatten_errors(messages, prefix: str = "") -> list[dict]:
    """marshmallow's nested messages -> [{"field": "pellet.radius", "message": ...}]."""
    out: list[dict] = []
    if isinstance(messages, dict):
        for key, value in messages.items():
            if key == "_schema":
                name = prefix
            else:
                name = f"{prefix}.{key}" if prefix else str(key)
            out.extend(flatten_errors(value, name))
    elif isinstance(messages, (list, tuple)):
        for item in messages:
            if isinstance(item, (dict, list, tuple)):
                out.extend(flatten_errors(item, prefix))
            else:
                out.append({"field": prefix or "(body)", "message": _tidy(str(item))})
    else:
        out.append({"field": prefix or "(body)", "message": _tidy(str(messages))})
    return out


def _tidy(message: str) -> str:
    if message == "Unknown field.":
        return "unknown field (not part of this request's schema)"
    if message == "Missing data for required field.":
        return "required field is missing"
    return message
