"""Request schema of one pellet case -> ``physics.case.Case`` (plain SI).

Shape and rate-law schemas are generated from the physics registries, so a new
shape or rate law needs a registry entry and its field rules, nothing here.
"""

from __future__ import annotations

from marshmallow import RAISE, Schema, ValidationError, fields, post_load, validates_schema

from .. import units
from ..physics.case import Case, FilmInput, ThermalInput
from ..physics.kinetics import RATE_LAWS, RateLawSpec
from ..physics.geometry import SHAPES
from .pore import PoreSchema
from .fields import Choice, Integer, Quantity, RawQuantity, Tagged, field_for
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


def _mass_basis_unit(volume_unit: str) -> str:
    """k per catalyst mass: r_mass = r_volume / rho_p, so its unit is k's times m^3/kg."""
    return f"({volume_unit})*m^3/kg"


class _KineticsBase(StrictSchema):
    model = fields.String(required=True)
    rate_constant = RawQuantity(required=True)
    rate_basis = Choice("kinetics.rate_basis")
    pellet_density = Quantity("kinetics.pellet_density")

    spec: RateLawSpec  # set per model

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
        parameters = {name: data[name] for name in self.parameter_names if name in data}
        volume_unit = self.spec.rate_constant_unit(**parameters)
        si_unit = volume_unit if basis == "pellet_volume" else _mass_basis_unit(volume_unit)
        try:
            k = magnitude if unit is None else units.to_si(magnitude, unit, si_unit)
        except units.QuantityError as exc:
            detail = f"{exc} for {self.spec.name}"
            if "order" in parameters:
                detail += f" of order {parameters['order']:g}"
            raise ValidationError(f"{detail} ({basis} basis)", field_name="rate_constant") from None
        problem = FIELD_RULES["kinetics.rate_constant"].range_error(k)
        if problem:
            raise ValidationError(problem, field_name="rate_constant")
        if basis == "catalyst_mass":
            k *= data["pellet_density"]
        parameters["rate_constant"] = k
        return {
            "model": data["model"],
            "parameters": parameters,
            "rate_basis": basis,
            "pellet_density": data.get("pellet_density"),
            "rate_constant_unit": volume_unit,
        }


def _kinetics_schema(spec: RateLawSpec) -> Schema:
    names = tuple(n for n in spec.fields + spec.optional if n != "rate_constant")
    declared = {name: field_for(f"kinetics.{name}",
                                required=name in spec.fields and
                                FIELD_RULES[f"kinetics.{name}"].default is None)
                for name in names}
    declared["spec"] = spec
    declared["parameter_names"] = names
    return type(f"{spec.name.title().replace('_', '')}Schema", (_KineticsBase,), declared)()


KINETICS_SCHEMAS = {name: _kinetics_schema(spec) for name, spec in RATE_LAWS.items()}


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


class BulkSchema(StrictSchema):
    concentration = Quantity("bulk.concentration", required=True)
    temperature = Quantity("bulk.temperature")


_THERMAL_NUMBERS = ("prater_number", "arrhenius_number")
_THERMAL_DATA = ("heat_of_reaction", "activation_energy", "effective_thermal_conductivity")


class ThermalSchema(StrictSchema):
    prater_number = field_for("thermal.prater_number")
    arrhenius_number = field_for("thermal.arrhenius_number")
    heat_of_reaction = field_for("thermal.heat_of_reaction")
    activation_energy = field_for("thermal.activation_energy")
    effective_thermal_conductivity = field_for("thermal.effective_thermal_conductivity")
    temperature = field_for("thermal.temperature")

    @validates_schema
    def _one_form(self, data, **kwargs):
        numbers = [n for n in _THERMAL_NUMBERS if n in data]
        given = [n for n in _THERMAL_DATA if n in data]
        if numbers and given:
            raise ValidationError(
                "give either prater_number and arrhenius_number, or heat_of_reaction, "
                "activation_energy and effective_thermal_conductivity, not both",
                field_name=given[0],
            )
        wanted = _THERMAL_NUMBERS if numbers or not given else _THERMAL_DATA
        missing = {n: ["required with the other thermal fields"] for n in wanted if n not in data}
        if missing:
            raise ValidationError(missing)

    @post_load
    def make(self, data, **kwargs) -> ThermalInput:
        return ThermalInput(**data)


_FLOW = ("superficial_velocity", "fluid_density", "fluid_viscosity", "molecular_diffusivity",
         "bed_voidage")
_FLOW_HEAT = ("fluid_thermal_conductivity", "fluid_heat_capacity")


class FilmSchema(StrictSchema):
    mass_transfer_coefficient = field_for("film.mass_transfer_coefficient")
    heat_transfer_coefficient = field_for("film.heat_transfer_coefficient")
    superficial_velocity = field_for("film.superficial_velocity")
    fluid_density = field_for("film.fluid_density")
    fluid_viscosity = field_for("film.fluid_viscosity")
    molecular_diffusivity = field_for("film.molecular_diffusivity")
    bed_voidage = field_for("film.bed_voidage")
    particle_diameter = field_for("film.particle_diameter")
    fluid_thermal_conductivity = field_for("film.fluid_thermal_conductivity")
    fluid_heat_capacity = field_for("film.fluid_heat_capacity")
    mass_correlation = field_for("film.mass_correlation")
    heat_correlation = field_for("film.heat_correlation")

    @validates_schema
    def _one_form(self, data, **kwargs):
        flow = [n for n in _FLOW + _FLOW_HEAT + ("particle_diameter",) if n in data]
        if "mass_transfer_coefficient" in data:
            if flow:
                raise ValidationError(
                    "give either mass_transfer_coefficient or the flow data for a correlation",
                    field_name=flow[0],
                )
            return
        if not flow:
            raise ValidationError(
                "give mass_transfer_coefficient, or the flow data (superficial_velocity, "
                "fluid_density, fluid_viscosity, molecular_diffusivity, bed_voidage)",
                field_name="mass_transfer_coefficient",
            )
        missing = {n: ["required for the mass transfer correlation"] for n in _FLOW if n not in data}
        if missing:
            raise ValidationError(missing)

    @post_load
    def make(self, data, **kwargs) -> FilmInput:
        flow = {n: data[n] for n in _FLOW + _FLOW_HEAT + ("particle_diameter",) if n in data}
        return FilmInput(
            mass_transfer_coefficient=data.get("mass_transfer_coefficient"),
            heat_transfer_coefficient=data.get("heat_transfer_coefficient"),
            flow=flow,
            mass_correlation=data["mass_correlation"],
            heat_correlation=data["heat_correlation"],
        )


class OptionsSchema(StrictSchema):
    profile_points = Integer("options.profile_points")


class CaseSchema(StrictSchema):
    pellet = Tagged("shape", PELLET_SCHEMAS, required=True)
    kinetics = Tagged("model", KINETICS_SCHEMAS, required=True)
    transport = fields.Nested(TransportSchema, required=True)
    surface = fields.Nested(SurfaceSchema)
    bulk = fields.Nested(BulkSchema)
    film = fields.Nested(FilmSchema)
    thermal = fields.Nested(ThermalSchema)
    options = fields.Nested(OptionsSchema, load_default=lambda: {"profile_points": 0})

    @validates_schema
    def _conditions(self, data, **kwargs):
        errors: dict[str, list[str]] = {}
        if "film" in data:
            if "surface" in data:
                errors["surface"] = ["with a film, give the conditions in bulk instead of surface"]
            elif "bulk" not in data:
                errors["bulk"] = ["required with a film (the bulk concentration)"]
        else:
            if "bulk" in data:
                errors["bulk"] = ["bulk conditions need a film; without one give surface"]
            elif "surface" not in data:
                errors["surface"] = ["required field is missing"]
        thermal = data.get("thermal")
        if thermal is not None and thermal.prater_number is None:
            if "film" in data:
                if thermal.temperature is not None:
                    errors["thermal.temperature"] = [
                        "with a film the reference temperature is bulk.temperature"]
                elif data.get("bulk", {}).get("temperature") is None:
                    errors["bulk.temperature"] = ["required with a film and thermal data"]
            elif thermal.temperature is None:
                errors["thermal.temperature"] = ["required: the surface temperature"]
        film = data.get("film")
        if (film is not None and thermal is not None and film.heat_transfer_coefficient is None
                and film.flow and not all(n in film.flow for n in _FLOW_HEAT)):
            errors["film.fluid_thermal_conductivity"] = [
                "with heat effects the heat transfer correlation needs "
                "fluid_thermal_conductivity and fluid_heat_capacity"]
        if errors:
            raise ValidationError(errors)

    @post_load
    def make(self, data, **kwargs) -> Case:
        kinetics = data["kinetics"]
        bulk = data.get("bulk", {})
        return Case(
            shape=data["pellet"]["shape"],
            dimensions=data["pellet"]["dimensions"],
            model=kinetics["model"],
            kinetic_parameters=kinetics["parameters"],
            effective_diffusivity=data["transport"].get("effective_diffusivity"),
            pore=data["transport"].get("pore"),
            surface_concentration=data.get("surface", {}).get("concentration"),
            profile_points=data["options"]["profile_points"],
            thermal=data.get("thermal"),
            film=data.get("film"),
            bulk_concentration=bulk.get("concentration"),
            bulk_temperature=bulk.get("temperature"),
            extras={
                "rate_basis": kinetics["rate_basis"],
                "pellet_density": kinetics["pellet_density"],
                "rate_constant_unit": kinetics["rate_constant_unit"],
            },
        )


CASE_SCHEMA = CaseSchema()


def load_case_and_extras(case_body: dict, extras_schema: Schema, extras: dict,
                         errors: dict | None = None):
    """(extras, case): an operation's own fields and the case beside them, validated
    together so that one ValidationError lists every bad field (``errors``: problems
    the caller found already)."""
    errors = dict(errors or {})
    loaded = case = None
    try:
        loaded = extras_schema.load(extras)
    except ValidationError as exc:
        merge_messages(errors, exc.messages)
    try:
        case = CASE_SCHEMA.load(case_body)
    except ValidationError as exc:
        merge_messages(errors, exc.messages)
    if errors:
        raise ValidationError(errors)
    return loaded, case


def merge_messages(into: dict, messages) -> None:
    """Merge marshmallow messages into ``into``, nested keys too, first message kept."""
    if not isinstance(messages, dict):
        into.setdefault("_schema", []).extend(messages)
        return
    for key, value in messages.items():
        if isinstance(value, dict) and isinstance(into.get(key), dict):
            merge_messages(into[key], value)
        elif key not in into:
            into[key] = value


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
