"""The one table of request fields: SI unit, range and inclusiveness, default.

Both the marshmallow schemas and the columnar (batch) validator read this table,
and a test checks the OpenAPI file against it, so the three cannot disagree.
Keys are the dotted request names (``pellet.radius``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass


@dataclass(frozen=True)
class FieldRule:
    """How one request field is read and checked.

    unit : SI unit a bare number is taken in ("" for dimensionless, None when the
        unit depends on other fields, e.g. a rate constant on the order).
    minimum, maximum : bounds in SI (None: unbounded).
    exclusive_minimum, exclusive_maximum : whether the bound itself is excluded.
    kind : "quantity" (number, "value unit" string or {value, unit}), "number"
        (plain number), "integer" or "choice".
    """

    unit: str | None
    description: str
    minimum: float | None = None
    exclusive_minimum: bool = False
    maximum: float | None = None
    exclusive_maximum: bool = False
    kind: str = "quantity"
    default: object = None
    choices: tuple = ()

    def range_error(self, value: float) -> str | None:
        """A message when ``value`` breaks the range, else None."""
        unit = f" {self.unit}" if self.unit else ""
        if self.minimum is not None:
            if value < self.minimum or (self.exclusive_minimum and value == self.minimum):
                op = ">" if self.exclusive_minimum else ">="
                return f"must be {op} {self.minimum:g}{unit}; got {value:.6g}{unit}"
        if self.maximum is not None:
            if value > self.maximum or (self.exclusive_maximum and value == self.maximum):
                op = "<" if self.exclusive_maximum else "<="
                return f"must be {op} {self.maximum:g}{unit}; got {value:.6g}{unit}"
        return None


# Upper bounds far beyond any catalyst pellet or process, per SI unit. They are not
# physics limits; they keep every intermediate of the arithmetic finite (a radius of
# 1e300 m would overflow its volume) so that nonsense is a 422 and never a 500.
SANITY_MAXIMUM = {
    "m": 1e3, "m^2": 1e6, "m^3": 1e9, "K": 1e5, "Pa": 1e10, "kg/m^3": 1e5, "m^2/s": 1.0,
    "Pa*s": 1e3, "kg/mol": 1e3, "m^3/mol": 1.0, "m/s": 1e3, "mol/m^3": 1e9,
    "W/(m*K)": 1e4, "W/(m^2*K)": 1e8, "J/(kg*K)": 1e6,
}


def _positive(unit: str, description: str) -> FieldRule:
    return FieldRule(unit, description, minimum=0.0, exclusive_minimum=True,
                     maximum=SANITY_MAXIMUM.get(unit))


FIELD_RULES: dict[str, FieldRule] = {
    "pellet.shape": FieldRule(None, "Pellet shape.", kind="choice"),
    "pellet.radius": _positive("m", "Radius of a sphere or cylinder."),
    "pellet.thickness": _positive("m", "Slab thickness (the whole layer)."),
    "pellet.exposed_faces": FieldRule(
        None,
        "Slab faces open to the fluid: 2 (pellet plate) or 1 (layer on an impermeable wall).",
        kind="choice",
        default=2,
        choices=(1, 2),
    ),
    "pellet.outer_radius": _positive("m", "Outer radius of a ring (hollow cylinder)."),
    "pellet.inner_radius": _positive("m", "Inner (bore) radius of a ring; less than outer_radius."),
    "pellet.length": _positive(
        "m", "Pellet length of a finite cylinder, ring or extrudate (omit for infinite length)."
    ),
    "pellet.lobes": FieldRule(
        None, "Number of lobes of a multi-lobed extrudate.", kind="choice", choices=(3, 4)
    ),
    "pellet.lobe_diameter": _positive("m", "Diameter of one lobe of an extrudate."),
    "pellet.volume": _positive("m^3", "Pellet volume (custom shape)."),
    "pellet.external_area": _positive("m^2", "Permeable external area (custom shape)."),
    "kinetics.model": FieldRule(None, "Rate law.", kind="choice"),
    "kinetics.order": FieldRule(
        "", "Reaction order n of r = k c^n.", minimum=0.0, maximum=10.0, kind="number", default=1.0
    ),
    "kinetics.rate_constant": FieldRule(
        None,
        "Rate constant k; its SI unit follows the order: (mol/m^3)^(1-n)/s per pellet volume, "
        "(mol/m^3)^(1-n) m^3/(kg s) per catalyst mass.",
        minimum=0.0,
        maximum=1e30,
    ),
    "kinetics.rate_basis": FieldRule(
        None,
        "Basis of the rate constant: per pellet volume, or per catalyst mass (then "
        "pellet_density converts it).",
        kind="choice",
        default="pellet_volume",
        choices=("pellet_volume", "catalyst_mass"),
    ),
    "kinetics.pellet_density": _positive(
        "kg/m^3", "Pellet (particle) density, needed with rate_basis catalyst_mass."
    ),
    "kinetics.adsorption_constant": FieldRule(
        "m^3/mol", "Adsorption constant K of r = k c / (1 + K c)^m.", minimum=0.0,
        maximum=1e30,
    ),
    "kinetics.exponent": FieldRule(
        None, "Exponent m of the adsorption term (1 or 2).", kind="choice", default=1,
        choices=(1, 2),
    ),
    "kinetics.equilibrium_concentration": FieldRule(
        "mol/m^3", "Equilibrium concentration c_eq of r = k (c - c_eq); below the surface "
        "(or bulk) concentration.", minimum=0.0, maximum=SANITY_MAXIMUM["mol/m^3"],
    ),
    "thermal.prater_number": FieldRule(
        "", "Prater number beta = (-dH) D_e c_s / (lambda_e T_s); > 0 exothermic.",
        minimum=-1.0, exclusive_minimum=True, maximum=10.0, kind="number",
    ),
    "thermal.arrhenius_number": FieldRule(
        "", "Arrhenius number gamma = E / (R T_s).", minimum=0.0, maximum=200.0, kind="number",
    ),
    "thermal.heat_of_reaction": FieldRule(
        "J/mol", "Heat (enthalpy) of reaction; negative for an exothermic reaction.",
        minimum=-1e8, maximum=1e8,
    ),
    "thermal.activation_energy": FieldRule(
        "J/mol", "Activation energy E of the rate constant.", minimum=0.0, maximum=1e7,
    ),
    "thermal.effective_thermal_conductivity": _positive(
        "W/(m*K)", "Effective thermal conductivity lambda_e of the pellet."
    ),
    "thermal.temperature": _positive(
        "K", "Temperature at the pellet surface (with a film: give bulk.temperature instead)."
    ),
    "film.mass_transfer_coefficient": _positive(
        "m/s", "Fluid-to-pellet mass transfer coefficient k_m."
    ),
    "film.heat_transfer_coefficient": _positive(
        "W/(m^2*K)", "Fluid-to-pellet heat transfer coefficient h."
    ),
    "film.superficial_velocity": _positive("m/s", "Superficial (empty-tube) fluid velocity."),
    "film.fluid_density": _positive("kg/m^3", "Fluid density."),
    "film.fluid_viscosity": _positive("Pa*s", "Fluid dynamic viscosity."),
    "film.molecular_diffusivity": _positive(
        "m^2/s", "Molecular diffusivity of the reactant in the fluid."
    ),
    "film.bed_voidage": FieldRule(
        "", "Bed voidage.", minimum=0.0, exclusive_minimum=True, maximum=1.0,
        exclusive_maximum=True, kind="number",
    ),
    "film.particle_diameter": _positive(
        "m", "Particle diameter for the correlations; default 6 V_p/S_p (the diameter of the "
        "sphere with the pellet's V_p/S_p)."
    ),
    "film.fluid_thermal_conductivity": _positive(
        "W/(m*K)", "Fluid thermal conductivity (heat transfer correlation)."
    ),
    "film.fluid_heat_capacity": _positive(
        "J/(kg*K)", "Fluid specific heat capacity (heat transfer correlation)."
    ),
    "film.mass_correlation": FieldRule(
        None, "Packed-bed mass transfer correlation.", kind="choice", default="wakao_funazkri",
        choices=("wakao_funazkri", "dwivedi_upadhyay", "gnielinski"),
    ),
    "film.heat_correlation": FieldRule(
        None, "Packed-bed heat transfer correlation.", kind="choice", default="wakao_kaguei",
        choices=("wakao_kaguei", "gnielinski"),
    ),
    "bulk.concentration": FieldRule(
        "mol/m^3", "Reactant concentration in the bulk fluid (with a film).", minimum=0.0,
        maximum=SANITY_MAXIMUM["mol/m^3"],
    ),
    "bulk.temperature": _positive("K", "Bulk fluid temperature (with a film and heat effects)."),
    "transport.effective_diffusivity": _positive(
        "m^2/s", "Effective diffusivity D_e of the reactant inside the pellet."
    ),
    "transport.pore.porosity": FieldRule(
        "", "Pellet porosity (void fraction).", minimum=0.0, exclusive_minimum=True,
        maximum=1.0, exclusive_maximum=True, kind="number",
    ),
    "transport.pore.tortuosity": FieldRule(
        "", "Tortuosity factor of the pores.", minimum=1.0, kind="number"
    ),
    "transport.pore.pore_diameter": _positive("m", "Mean pore diameter."),
    "transport.pore.temperature": _positive("K", "Temperature of the fluid in the pores."),
    "transport.pore.pressure": _positive("Pa", "Total pressure (gas phase)."),
    "transport.pore.molecular_diffusivity": _positive(
        "m^2/s", "Molecular diffusivity of the reactant in the fluid, if known."
    ),
    "transport.pore.species": FieldRule(
        None,
        "Diffusing species: a name from the built-in table, or {molar_mass, diffusion_volume, "
        "collision_diameter}.",
        kind="species",
    ),
    "transport.pore.carrier": FieldRule(
        None, "Carrier (bulk) gas, as for species; needed to estimate the molecular diffusivity.",
        kind="species",
    ),
    "transport.pore.phase": FieldRule(
        None, "Fluid in the pores.", kind="choice", default="gas", choices=("gas", "liquid")
    ),
    "transport.pore.solvent_viscosity": _positive("Pa*s", "Solvent viscosity (liquid phase)."),
    "transport.pore.solvent_molar_mass": _positive("kg/mol", "Solvent molar mass (liquid phase)."),
    "transport.pore.association_factor": FieldRule(
        "", "Wilke-Chang association factor of the solvent (water 2.6, methanol 1.9, "
        "ethanol 1.5, unassociated 1.0).", minimum=0.0, exclusive_minimum=True, kind="number",
    ),
    "transport.pore.solute_molar_volume": _positive(
        "m^3/mol", "Solute molar volume at its normal boiling point (liquid phase)."
    ),
    "species.molar_mass": _positive("kg/mol", "Molar mass of a species given by its data."),
    "species.diffusion_volume": FieldRule(
        "", "Fuller diffusion volume (sum of atomic increments).", minimum=0.0,
        exclusive_minimum=True, kind="number",
    ),
    "species.collision_diameter": _positive("m", "Lennard-Jones collision diameter."),
    "surface.concentration": FieldRule(
        "mol/m^3", "Reactant concentration at the pellet surface.", minimum=0.0,
        maximum=SANITY_MAXIMUM["mol/m^3"],
    ),
    "options.profile_points": FieldRule(
        None,
        "Number of evenly spaced profile positions from centre to surface (0: no profile).",
        minimum=0,
        maximum=2001,
        kind="integer",
        default=0,
    ),
    # --- POST /v1/diagnose (lab-data check) and POST /v1/size (pellet sizing): top-level
    # fields beside the case blocks, and the size request's bed and table blocks.
    "observed_rate": FieldRule(
        None,
        "Measured (observed) reaction rate: per pellet volume, SI unit mol/(m^3*s); with "
        "observed_rate_basis catalyst_mass per catalyst mass, SI unit mol/(kg*s).",
        minimum=0.0,
        exclusive_minimum=True,
    ),
    "observed_rate_basis": FieldRule(
        None,
        "Basis of observed_rate: per pellet volume, or per catalyst mass (then the top-level "
        "pellet_density converts it).",
        kind="choice",
        default="pellet_volume",
        choices=("pellet_volume", "catalyst_mass"),
    ),
    "pellet_density": _positive(
        "kg/m^3", "Pellet (particle) density, needed with observed_rate_basis catalyst_mass."
    ),
    "target_effectiveness": FieldRule(
        "", "Effectiveness factor the largest pellet must keep.", minimum=0.0,
        exclusive_minimum=True, maximum=1.0, exclusive_maximum=True, kind="number",
    ),
    "bed.voidage": FieldRule(
        "", "Bed voidage (void fraction of the packed bed).", minimum=0.0,
        exclusive_minimum=True, maximum=1.0, exclusive_maximum=True, kind="number",
    ),
    "bed.fluid_density": _positive("kg/m^3", "Density of the fluid flowing through the bed."),
    "bed.fluid_viscosity": _positive("Pa*s", "Dynamic viscosity of the fluid."),
    "bed.superficial_velocity": FieldRule(
        "m/s", "Superficial (empty-tube) velocity of the fluid.", minimum=0.0
    ),
    "table.min_scale": FieldRule(
        "", "Smallest scale factor of the trade-off table (1 = the given pellet).",
        minimum=0.0, exclusive_minimum=True, kind="number", default=0.1,
    ),
    "table.max_scale": FieldRule(
        "", "Largest scale factor of the trade-off table (1 = the given pellet).",
        minimum=0.0, exclusive_minimum=True, kind="number", default=10.0,
    ),
    "table.points": FieldRule(
        None, "Number of rows of the trade-off table.", minimum=2, maximum=200,
        kind="integer", default=25,
    ),
    "table.spacing": FieldRule(
        None, "Spacing of the scale factors: even in log(scale) or in scale.", kind="choice",
        default="log", choices=("log", "linear"),
    ),
}


def check_finite(value: float) -> str | None:
    return None if math.isfinite(value) else "must be a finite number"
