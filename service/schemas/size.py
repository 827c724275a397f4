"""Request and response of /v1/size (pellet sizing and the size trade-off table).

The request is a full case (validated by the very ``CASE_SCHEMA`` of
/v1/effectiveness; its pellet is the reference, scale 1) plus
``target_effectiveness``, an optional ``bed`` (without it: no pressure drop) and
an optional ``table`` of scale factors relative to the given pellet.
"""

from __future__ import annotations

from dataclasses import dataclass

from marshmallow import ValidationError, fields, validates_schema

from ..physics.case import Case
from ..physics.geometry import SHAPES
from ..physics.inversion import DIMENSION_POWERS, Bed, SizeRow, SizingAnswer
from .case import StrictSchema, load_case_and_extras
from .fields import field_for
from .responses import echo_inputs, quantity, warning_dicts
from .rules import FIELD_RULES

BED_FIELDS = ("voidage", "fluid_density", "fluid_viscosity", "superficial_velocity")
TABLE_FIELDS = ("min_scale", "max_scale", "points", "spacing")
TABLE_DEFAULTS = {name: FIELD_RULES[f"table.{name}"].default for name in TABLE_FIELDS}
RATE_UNIT = "mol/(m^3*s)"
TABLE_UNITS = {
    "characteristic_length": "m",
    "observed_rate": RATE_UNIT,
    "observed_rate_per_reactor_volume": RATE_UNIT,
    "pressure_gradient": "Pa/m",
}
EQUIVALENT_DIAMETER_BASIS = (
    "d_p = 6 V_p/S_p = sphericity x volume-equivalent diameter (the Ergun convention for "
    "non-spheres; Bird, Stewart & Lightfoot, Transport Phenomena, sec. 6.4)"
)


def _block(prefix: str, names: tuple[str, ...], required: bool) -> type:
    declared = {n: field_for(f"{prefix}.{n}", required=required) for n in names}
    return type(f"{prefix.title()}Schema", (StrictSchema,), declared)


BedSchema = _block("bed", BED_FIELDS, required=True)


class TableSchema(_block("table", TABLE_FIELDS, required=False)):
    @validates_schema
    def _ordered(self, data, **kwargs):
        if data.get("min_scale", 0) >= data.get("max_scale", float("inf")):
            raise ValidationError("must be greater than table.min_scale", field_name="max_scale")


class SizeExtrasSchema(StrictSchema):
    target_effectiveness = field_for("target_effectiveness", required=True)
    bed = fields.Nested(BedSchema)
    table = fields.Nested(TableSchema, load_default=lambda: dict(TABLE_DEFAULTS))


SIZE_EXTRAS_SCHEMA = SizeExtrasSchema()


@dataclass(frozen=True)
class SizeRequest:
    """A validated /v1/size body: the reference case, target eta [-], bed or None, table."""

    case: Case
    target: float
    bed: Bed | None
    table: dict


def load_size(body: dict) -> SizeRequest:
    """Validate a /v1/size body (one ValidationError listing every bad field)."""
    extras = {n: body[n] for n in SIZE_EXTRAS_SCHEMA.fields if n in body}
    case_body = {n: v for n, v in body.items() if n not in extras}
    loaded, case = load_case_and_extras(case_body, SIZE_EXTRAS_SCHEMA, extras)
    table = {**TABLE_DEFAULTS, **loaded["table"]}
    bed = Bed(**loaded["bed"]) if "bed" in loaded else None
    return SizeRequest(case, loaded["target_effectiveness"], bed, table)


def main_dimension(shape: str) -> str:
    """The dimension the table shows for a shape (its first scaled dimension)."""
    return next(d for d in SHAPES[shape].dimensions if DIMENSION_POWERS.get(d, 0) > 0)


def _dimension(name: str, value):
    rule = FIELD_RULES.get(f"pellet.{name}")
    return quantity(value, rule.unit) if rule is not None and rule.unit else value


def _row(shape: str, row: SizeRow) -> dict:
    main = main_dimension(shape)
    out = {
        "scale": row.scale,
        "characteristic_length": quantity(row.characteristic_length, "m"),
        main: _dimension(main, row.dimensions[main]),
        "effectiveness_factor": row.effectiveness_factor,
        "observed_rate": quantity(row.observed_rate, RATE_UNIT),
    }
    if row.pressure_gradient is not None:
        out["observed_rate_per_reactor_volume"] = quantity(
            row.observed_rate_per_reactor_volume, RATE_UNIT)
        out["pressure_gradient"] = quantity(row.pressure_gradient, "Pa/m")
    return out


def size_payload(request: SizeRequest, answer: SizingAnswer) -> dict:
    """The JSON body of /v1/size."""
    case = request.case
    best = answer.largest
    out: dict = {"status": answer.status, "message": answer.message,
                 "target_effectiveness": request.target}
    out["largest_pellet"] = {"shape": case.shape, **{
        name: _dimension(name, value) for name, value in best.dimensions.items()}}
    out["scale"] = best.scale
    out["characteristic_length"] = quantity(best.characteristic_length, "m")
    out["equivalent_particle_diameter"] = quantity(answer.equivalent_particle_diameter, "m")
    out["equivalent_particle_diameter_basis"] = EQUIVALENT_DIAMETER_BASIS
    if answer.sphericity is not None:
        out["sphericity"] = answer.sphericity
        out["volume_equivalent_diameter"] = quantity(answer.volume_equivalent_diameter, "m")
    out["effectiveness_factor"] = best.effectiveness_factor
    out["observed_rate"] = quantity(best.observed_rate, RATE_UNIT)
    if best.pressure_gradient is not None:
        out["observed_rate_per_reactor_volume"] = quantity(
            best.observed_rate_per_reactor_volume, RATE_UNIT)
        out["pressure_gradient"] = quantity(best.pressure_gradient, "Pa/m")
    out["search_scales"] = list(answer.search_scales)
    out["tradeoff"] = [_row(case.shape, r) for r in answer.rows]
    out["warnings"] = warning_dicts(best.diagnostics)
    inputs = echo_inputs(case)
    inputs["target_effectiveness"] = request.target
    if request.bed is not None:
        bed = request.bed
        inputs["bed"] = {
            "voidage": bed.voidage,
            "fluid_density": quantity(bed.fluid_density, "kg/m^3"),
            "fluid_viscosity": quantity(bed.fluid_viscosity, "Pa*s"),
            "superficial_velocity": quantity(bed.superficial_velocity, "m/s"),
        }
    inputs["table"] = dict(request.table)
    out["inputs"] = inputs
    return out


def size_csv_rows(request: SizeRequest, answer: SizingAnswer) -> list[list]:
    """The trade-off table as CSV rows, units in the header (SI numbers)."""
    shape = request.case.shape
    main = main_dimension(shape)
    main_rule = FIELD_RULES.get(f"pellet.{main}")
    columns = ["scale", "characteristic_length", main, "effectiveness_factor", "observed_rate"]
    units = {**TABLE_UNITS, main: main_rule.unit if main_rule else ""}
    if request.bed is not None:
        columns += ["observed_rate_per_reactor_volume", "pressure_gradient"]
    header = [f"{c} [{units[c]}]" if units.get(c) else c for c in columns]
    rows = [header]
    for row in answer.rows:
        values = {
            "scale": row.scale, "characteristic_length": row.characteristic_length,
            main: row.dimensions[main], "effectiveness_factor": row.effectiveness_factor,
            "observed_rate": row.observed_rate,
            "observed_rate_per_reactor_volume": row.observed_rate_per_reactor_volume,
            "pressure_gradient": row.pressure_gradient,
        }
        rows.append([float(values[c]) for c in columns])
    return rows
