"""Plain SI inputs of one pellet case, as the schemas hand them to the physics."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class ThermalInput:
    """Heat effects: the dimensionless numbers, or the data they come from (SI).

    prater_number, arrhenius_number [-]; or heat_of_reaction [J/mol] (negative:
    exothermic), activation_energy [J/mol], effective_thermal_conductivity [W/(m K)].
    temperature [K]: at the surface (or None: with a film the bulk temperature is used).
    """

    prater_number: float | None = None
    arrhenius_number: float | None = None
    heat_of_reaction: float | None = None
    activation_energy: float | None = None
    effective_thermal_conductivity: float | None = None
    temperature: float | None = None


@dataclass(frozen=True)
class FilmInput:
    """External film: coefficients [m/s], [W/(m^2 K)], or flow data for correlations (SI)."""

    mass_transfer_coefficient: float | None = None
    heat_transfer_coefficient: float | None = None
    flow: dict = field(default_factory=dict)
    mass_correlation: str = "wakao_funazkri"
    heat_correlation: str = "wakao_kaguei"


@dataclass(frozen=True)
class Case:
    """One pellet case in SI units.

    shape : registry name in ``geometry.SHAPES``.
    dimensions : the shape's dimensions [m] (and counts such as ``exposed_faces``).
    model : registry name of the rate law (``kinetics.RATE_LAWS``).
    kinetic_parameters : the rate law's parameters in SI, rate per pellet volume
        (``rate_constant``, ``order``, ...).
    effective_diffusivity : D_e [m^2/s], or None when ``pore`` gives the pore structure.
    surface_concentration : c_s [mol/m^3]; None when a film is given (then bulk_*).
    profile_points : number of profile positions to return (0: none).
    thermal, film : optional heat effects and external film.
    bulk_concentration [mol/m^3], bulk_temperature [K] : bulk conditions with a film.
    """

    shape: str
    dimensions: dict[str, float]
    model: str
    kinetic_parameters: dict[str, float]
    effective_diffusivity: float | None
    surface_concentration: float | None
    profile_points: int = 0
    pore: object | None = None  # transport.PoreInput
    thermal: ThermalInput | None = None
    film: FilmInput | None = None
    bulk_concentration: float | None = None
    bulk_temperature: float | None = None
    extras: dict[str, object] = field(default_factory=dict)

    @property
    def reference_concentration(self) -> float:
        """The concentration the case is referred to: bulk with a film, else surface."""
        return self.bulk_concentration if self.film is not None else self.surface_concentration
