"""Request and response of /v1/diagnose (the lab-data check).

The request is a case whose ``kinetics`` carries only the form of the rate law,
plus ``observed_rate`` (and ``observed_rate_basis``, ``pellet_density``). The case
blocks are validated by the very case schema of /v1/effectiveness
(``CASE_SCHEMA``): the body is loaded with a placeholder rate constant (a bare 1.0
in SI), which the inversion then replaces. So every block, shape, rate law and
rule of /v1/effectiveness holds here unchanged, and no field rule is duplicated.
"""

from __future__ import annotations

from dataclasses import dataclass

from marshmallow import ValidationError, post_load, validates_schema

from .. import units
from ..physics.case import Case
from ..physics.inversion import ExternalConditions, HeatData, LabDataCheck
from ..physics.kinetics import RATE_LAWS
from .case import StrictSchema, load_case_and_extras
from .fields import Choice, Quantity, RawQuantity
from .responses import diffusivity_fields, echo_inputs, quantity, warning_dicts
from .rules import FIELD_RULES

PLACEHOLDER_RATE_CONSTANT = 1.0
OBSERVED_RATE_UNITS = {"pellet_volume": "mol/(m^3*s)", "catalyst_mass": "mol/(kg*s)"}
RATE_CONSTANT_REFUSED = (
    "not accepted here: the intrinsic rate constant is what /v1/diagnose infers from "
    "observed_rate; give only the form of the rate law (model, order, ...)"
)


class ObservedRateSchema(StrictSchema):
    """The top-level fields /v1/diagnose adds to a case."""

    observed_rate = RawQuantity(required=True)
    observed_rate_basis = Choice("observed_rate_basis")
    pellet_density = Quantity("pellet_density")

    @validates_schema
    def _density_with_mass_basis(self, data, **kwargs):
        if data.get("observed_rate_basis") == "catalyst_mass" and "pellet_density" not in data:
            raise ValidationError("required when observed_rate_basis is catalyst_mass",
                                  field_name="pellet_density")

    @post_load
    def make(self, data, **kwargs):
        basis = data["observed_rate_basis"]
        magnitude, unit = data["observed_rate"]
        si_unit = OBSERVED_RATE_UNITS[basis]
        try:
            given = magnitude if unit is None else units.to_si(magnitude, unit, si_unit)
        except units.QuantityError as exc:
            raise ValidationError(f"{exc} ({basis} basis)", field_name="observed_rate") from None
        problem = FIELD_RULES["observed_rate"].range_error(given)
        if problem:
            raise ValidationError(problem, field_name="observed_rate")
        per_volume = given * data["pellet_density"] if basis == "catalyst_mass" else given
        return {"observed_rate": per_volume, "basis": basis, "given": given,
                "pellet_density": data.get("pellet_density")}


OBSERVED_RATE_SCHEMA = ObservedRateSchema()


@dataclass(frozen=True)
class DiagnoseRequest:
    """A validated /v1/diagnose body: the case (placeholder k), r_obs per pellet volume
    [mol/(m^3 s)], the rate as given, and the optional film/thermal data in SI."""

    case: Case
    observed_rate: float
    observed: dict
    external: ExternalConditions
    heat: HeatData
    heat_effects: bool


def load_diagnose(body: dict) -> DiagnoseRequest:
    """Validate a /v1/diagnose body (one ValidationError listing every bad field)."""
    extras = {name: body[name] for name in OBSERVED_RATE_SCHEMA.fields if name in body}
    case_body = {name: value for name, value in body.items() if name not in extras}
    errors: dict = {}
    kinetics = case_body.get("kinetics")
    if isinstance(kinetics, dict):
        refused = {}
        if "rate_constant" in kinetics:
            refused["rate_constant"] = [RATE_CONSTANT_REFUSED]
        for name in ("rate_basis", "pellet_density"):
            if name in kinetics:  # they qualify a given rate constant; here k is the answer
                refused[name] = ["not accepted here: the rate constant is what is sought; give "
                                 "observed_rate_basis and pellet_density for a per-mass rate"]
        if refused:
            errors["kinetics"] = refused
        case_body["kinetics"] = {**kinetics, "rate_constant": PLACEHOLDER_RATE_CONSTANT}
    observed, case = load_case_and_extras(case_body, OBSERVED_RATE_SCHEMA, extras, errors)
    return DiagnoseRequest(
        case=case,
        observed_rate=observed["observed_rate"],
        observed=observed,
        external=ExternalConditions(
            mass_transfer_coefficient=optional_si(body, "film.mass_transfer_coefficient"),
            bulk_concentration=optional_si(body, "bulk.concentration"),
            heat_transfer_coefficient=optional_si(body, "film.heat_transfer_coefficient"),
            bulk_temperature=optional_si(body, "bulk.temperature"),
        ),
        heat=HeatData(
            heat_of_reaction=optional_si(body, "thermal.heat_of_reaction"),
            activation_energy=optional_si(body, "thermal.activation_energy"),
            effective_thermal_conductivity=optional_si(
                body, "thermal.effective_thermal_conductivity"),
            # with a film the case gives bulk.temperature instead (Anderson then uses it)
            surface_temperature=(optional_si(body, "thermal.temperature")
                                 or optional_si(body, "bulk.temperature")),
            prater_number=optional_si(body, "thermal.prater_number"),
            arrhenius_number=optional_si(body, "thermal.arrhenius_number"),
        ),
        heat_effects="thermal" in body,
    )


def optional_si(body: dict, dotted: str) -> float | None:
    """A film/bulk/thermal value of an already validated body in SI, or None when the
    field is absent or the field table has no rule for it (block not offered yet)."""
    rule = FIELD_RULES.get(dotted)
    node = body
    for part in dotted.split("."):
        node = node.get(part) if isinstance(node, dict) else None
    if node is None or rule is None or rule.unit is None:
        return None
    try:
        return units.parse_quantity(node, rule.unit)
    except units.QuantityError:
        return None


def rate_constant_unit(case: Case) -> str:
    """SI unit of k for the case's rate law, per pellet volume: the unit the case schema
    echoes for /v1/effectiveness, else the one of the rate-law registry."""
    unit = case.extras.get("rate_constant_unit")
    if unit:
        return str(unit)
    spec = RATE_LAWS.get(case.model)
    try:
        return spec.rate_constant_unit(**case.kinetic_parameters) if spec else ""
    except TypeError:
        return ""


def diagnose_payload(request: DiagnoseRequest, check: LabDataCheck) -> dict:
    """The JSON body of /v1/diagnose (names fixed by DESIGN section 4)."""
    inversion = check.inversion
    result = inversion.result
    case = request.case
    out = {
        "effectiveness_factor": result.effectiveness_factor,
        "intrinsic_rate_constant": quantity(inversion.rate_constant, rate_constant_unit(case)),
        "weisz_prater_modulus": check.weisz_prater_modulus,
        "weisz_prater_basis": "characteristic_length",
    }
    if check.weisz_prater_modulus_own_length is not None:
        out["weisz_prater_modulus_thiele_length"] = check.weisz_prater_modulus_own_length
    out.update({
        "criteria": check.criteria,
        "thiele_modulus": result.thiele_modulus,
        "thiele_length": quantity(result.thiele_length, "m"),
        "generalized_modulus": result.generalized_modulus,
        "characteristic_length": quantity(result.characteristic_length, "m"),
        "observed_rate": quantity(result.observed_rate, OBSERVED_RATE_UNITS["pellet_volume"]),
        "surface_concentration": quantity(check.surface_concentration, "mol/m^3"),
        "regime": result.regime,
        "method": result.method,
        "warnings": warning_dicts([*result.diagnostics, *check.diagnostics]),
        "notes": check.notes,
    })
    if result.pore is not None:
        out["diffusivity"] = diffusivity_fields(result.pore)
    inputs = echo_inputs(case)
    inputs["kinetics"].pop("rate_constant", None)
    observed = request.observed
    inputs["observed_rate"] = quantity(observed["given"], OBSERVED_RATE_UNITS[observed["basis"]])
    inputs["observed_rate_basis"] = observed["basis"]
    if observed["pellet_density"] is not None:
        inputs["pellet_density"] = quantity(observed["pellet_density"], "kg/m^3")
    out["inputs"] = inputs
    return out


def unreachable_message(observed_rate: float, check: LabDataCheck) -> str:
    """Plain sentence for a rate that no rate constant reproduces."""
    inv = check.inversion
    low, high = inv.searched
    if inv.status != 1:
        return (
            f"{inv.message}: observed_rate {observed_rate:.6g} mol/(m^3*s) (per pellet volume) "
            f"could not be inverted because the case could not be computed at a rate constant "
            f"the search needed (rates met: {inv.lowest_rate:.6g} to {inv.highest_rate:.6g} "
            f"mol/(m^3*s)); see /v1/effectiveness for this case near the expected rate "
            f"constant."
        )
    return (
        f"{inv.message}: observed_rate {observed_rate:.6g} mol/(m^3*s) (per pellet volume) "
        f"is not reached by this pellet for any rate constant from {low:.3g} to {high:.3g} "
        f"(SI); the rates met lay between {inv.lowest_rate:.6g} and {inv.highest_rate:.6g} "
        f"mol/(m^3*s). Check observed_rate, its basis and unit, the diffusivity and the "
        f"concentration."
    )
