"""Plain SI inputs of one pellet case, as the schemas hand them to the physics."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class Case:
    """One pellet case in SI units.

    shape : registry name in ``geometry.SHAPES``.
    dimensions : the shape's dimensions [m] (and counts such as ``exposed_faces``).
    model : registry name of the rate law.
    kinetic_parameters : the rate law's parameters in SI, rate per pellet volume
        (``rate_constant``, ``order``, ...).
    effective_diffusivity : D_e [m^2/s], or None when ``pore`` gives the pore structure.
    surface_concentration : c_s [mol/m^3].
    profile_points : number of profile positions to return (0: none).
    """

    shape: str
    dimensions: dict[str, float]
    model: str
    kinetic_parameters: dict[str, float]
    effective_diffusivity: float | None
    surface_concentration: float
    profile_points: int = 0
    pore: object | None = None  # transport.PoreInput
    extras: dict[str, object] = field(default_factory=dict)
