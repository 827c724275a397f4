"""Effective diffusivity of a case from its pore structure (gas or liquid filled pores).

Orchestrates ``diffusivity`` (Fuller, Knudsen, Bosanquet, Wilke-Chang) for the
``transport.pore`` block of a case and for ``/v1/diffusivity``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from . import diffusivity as dif
from .diagnostics import Diagnostic
from .errors import PhysicsInputError
from .species import SPECIES, Species


@dataclass(frozen=True)
class PoreInput:
    """Pore structure and fluid data in SI.

    porosity [-], tortuosity [-], pore_diameter [m], temperature [K], pressure [Pa] or None,
    species / carrier: Species (gas phase), molecular_diffusivity [m^2/s] or None,
    phase: "gas" | "liquid"; liquid: solvent_viscosity [Pa s], solvent_molar_mass [kg/mol],
    association_factor [-], solute_molar_volume [m^3/mol].
    """

    porosity: float
    tortuosity: float
    pore_diameter: float | None
    temperature: float | None
    pressure: float | None = None
    species: Species | None = None
    carrier: Species | None = None
    molecular_diffusivity: float | None = None
    phase: str = "gas"
    liquid: dict = field(default_factory=dict)


@dataclass(frozen=True)
class PoreResult:
    molecular_diffusivity: float
    knudsen_diffusivity: float | None
    pore_diffusivity: float
    effective_diffusivity: float
    knudsen_number: float | None
    knudsen_number_basis: str | None
    regime: str
    molecular_method: str
    diagnostics: tuple[Diagnostic, ...]


def custom_species(name: str, molar_mass: float, diffusion_volume: float | None,
                   collision_diameter: float | None = None) -> Species:
    """A species given by its data instead of a table name."""
    return Species(name, name, molar_mass, diffusion_volume if diffusion_volume else 0.0,
                   collision_diameter, "given by the caller")


def resolve_pore(pore: PoreInput) -> PoreResult:
    """Molecular, Knudsen, pore and effective diffusivities for a pore block."""
    if pore.phase == "liquid":
        if pore.molecular_diffusivity is not None:
            dab, how = pore.molecular_diffusivity, "given"
        else:
            liquid = pore.liquid
            dab = dif.liquid_diffusivity_wilke_chang(
                pore.temperature, liquid["solvent_viscosity"], liquid["solvent_molar_mass"],
                liquid["association_factor"], liquid["solute_molar_volume"],
            )
            how = "wilke_chang"
        de = dif.effective_diffusivity(pore.porosity, pore.tortuosity, dab)
        return PoreResult(dab, None, dab, de, None, None, "liquid", how,
                          tuple(dif.pore_structure_diagnostics(pore.porosity, pore.tortuosity)))
    if pore.species is None:
        raise PhysicsInputError("species", None, "the diffusing species is needed for Knudsen diffusion")
    if pore.molecular_diffusivity is None and (
        pore.carrier is None or not pore.carrier.diffusion_volume or not pore.species.diffusion_volume
    ):
        raise PhysicsInputError(
            "molecular_diffusivity", None,
            "give it, or give the carrier gas and diffusion volumes to estimate it (Fuller)",
        )
    result = dif.pore_diffusion(
        pore.temperature, pore.pore_diameter, pore.porosity, pore.tortuosity,
        pore.species, pore.carrier, pore.pressure, pore.molecular_diffusivity,
    )
    how = "given" if pore.molecular_diffusivity is not None else "fuller"
    return PoreResult(
        result.molecular_diffusivity, result.knudsen_diffusivity, result.pore_diffusivity,
        result.effective_diffusivity, result.knudsen_number, result.knudsen_number_basis,
        result.regime, how, tuple(result.diagnostics),
    )


SPECIES_NAMES = tuple(SPECIES)
