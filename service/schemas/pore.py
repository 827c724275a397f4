"""The pore-structure block (``transport.pore`` of a case, and the body of /v1/diffusivity)."""

from __future__ import annotations

from marshmallow import Schema, ValidationError, fields, post_load, validates_schema

from ..physics.species import SPECIES
from ..physics.transport import PoreInput, custom_species
from .fields import field_for

_LIQUID = ("solvent_viscosity", "solvent_molar_mass", "association_factor", "solute_molar_volume")


class SpeciesDataSchema(Schema):
    name = fields.String(load_default="custom")
    molar_mass = field_for("species.molar_mass", required=True)
    diffusion_volume = field_for("species.diffusion_volume")
    collision_diameter = field_for("species.collision_diameter")


_SPECIES_DATA = SpeciesDataSchema()


class SpeciesField(fields.Field):
    """A species: a name of the built-in table, or an object with its data."""

    def _deserialize(self, value, attr, data, **kwargs):
        if isinstance(value, str):
            if value in SPECIES:
                return SPECIES[value]
            raise ValidationError(f"unknown species; choose one of {', '.join(SPECIES)} "
                                  f"or give {{molar_mass, diffusion_volume}}")
        if isinstance(value, dict):
            data = _SPECIES_DATA.load(value)
            return custom_species(data["name"], data["molar_mass"], data.get("diffusion_volume"),
                                  data.get("collision_diameter"))
        raise ValidationError("must be a species name or an object {molar_mass, diffusion_volume}")


def _rule(name: str, required: bool = False):
    return field_for(f"transport.pore.{name}", required=required)


class PoreSchema(Schema):
    porosity = _rule("porosity", required=True)
    tortuosity = _rule("tortuosity", required=True)
    pore_diameter = _rule("pore_diameter")
    temperature = _rule("temperature")
    pressure = _rule("pressure")
    molecular_diffusivity = _rule("molecular_diffusivity")
    species = SpeciesField()
    carrier = SpeciesField()
    phase = _rule("phase")
    solvent_viscosity = _rule("solvent_viscosity")
    solvent_molar_mass = _rule("solvent_molar_mass")
    association_factor = _rule("association_factor")
    solute_molar_volume = _rule("solute_molar_volume")

    @validates_schema
    def _complete(self, data, **kwargs):
        errors: dict[str, list[str]] = {}
        given = data.get("molecular_diffusivity") is not None
        if data.get("phase") == "liquid":
            if not given:
                for name in _LIQUID + ("temperature",):
                    if name not in data:
                        errors[name] = ["required for a liquid phase without molecular_diffusivity"]
        else:
            for name in ("pore_diameter", "temperature", "species"):
                if name not in data:
                    errors[name] = ["required for a gas phase (Knudsen diffusion)"]
            if not given:
                for name in ("carrier", "pressure"):
                    if name not in data:
                        errors[name] = ["required to estimate molecular_diffusivity (or give it)"]
                for name in ("species", "carrier"):
                    if name in data and not data[name].diffusion_volume:
                        errors[name] = ["needs a diffusion_volume to estimate molecular_diffusivity"]
        if errors:
            raise ValidationError(errors)

    @post_load
    def make(self, data, **kwargs) -> PoreInput:
        return PoreInput(
            porosity=data["porosity"],
            tortuosity=data["tortuosity"],
            pore_diameter=data.get("pore_diameter"),
            temperature=data.get("temperature"),
            pressure=data.get("pressure"),
            species=data.get("species"),
            carrier=data.get("carrier"),
            molecular_diffusivity=data.get("molecular_diffusivity"),
            phase=data["phase"],
            liquid={name: data[name] for name in _LIQUID if name in data},
        )


PORE_SCHEMA = PoreSchema()
