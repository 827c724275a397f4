"""Pellet shapes: the registry of geometries.

Each shape is one entry of ``SHAPES``: the names of its dimensions, its shape
exponent for the 1-D reaction-diffusion equation (slab 0, cylinder 1, sphere 2)
and a builder that turns the dimensions [m] into a ``PelletGeometry``.
Builders accept floats or numpy arrays (batch evaluation), so every quantity
below may be an array of the same shape as the inputs.

Lengths
-------
diffusion_length L [m]
    The shape's own length on which the Thiele modulus phi = L sqrt(k/D_e) is
    defined: sphere and cylinder radius, slab diffusion length (half the
    thickness with both faces exposed, the whole thickness with one).
characteristic_length V_p/S_p [m]
    Pellet volume over external (permeable) area: L/(m + 1) for the three ideal
    shapes. The generalized modulus is defined on it (Aris 1957).

References
----------
1. Aris, R. (1957). On shape factors for irregular particles - I. Chem. Eng. Sci.
   6(6), 262-268.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from .checks import positive_array
from .errors import PhysicsInputError


@dataclass(frozen=True)
class PelletGeometry:
    """Geometry of one pellet (or arrays of pellets of one shape).

    shape : registry name.
    shape_exponent : 0, 1, 2 for the 1-D shapes; None where no 1-D form exists.
    diffusion_length : the shape's own length for the Thiele modulus [m].
    characteristic_length : V_p / S_p [m].
    volume : pellet volume [m^3], None for shapes of infinite extent.
    external_area : permeable external area [m^2], None for infinite shapes.
    """

    shape: str
    shape_exponent: int | None
    diffusion_length: float | np.ndarray
    characteristic_length: float | np.ndarray
    volume: float | np.ndarray | None = None
    external_area: float | np.ndarray | None = None


@dataclass(frozen=True)
class ShapeSpec:
    """One registry entry: how to build a geometry from dimensions [m]."""

    name: str
    description: str
    dimensions: tuple[str, ...]
    shape_exponent: int | None
    build: Callable[..., PelletGeometry]
    optional: dict[str, object] = field(default_factory=dict)


def _positive(name: str, value):
    if type(value) is float or type(value) is int:  # the common scalar case, without numpy
        if not (math.isfinite(value) and value > 0):
            raise PhysicsInputError(name, value, "must be finite and > 0")
        return value
    positive_array(name, value)
    return value


def sphere_geometry(radius) -> PelletGeometry:
    """Sphere of radius R [m]: L = R, V_p/S_p = R/3, V = 4/3 pi R^3, S = 4 pi R^2."""
    _positive("radius", radius)
    r = radius
    return PelletGeometry(
        shape="sphere",
        shape_exponent=2,
        diffusion_length=r,
        characteristic_length=r / 3.0,
        volume=4.0 / 3.0 * np.pi * r**3,
        external_area=4.0 * np.pi * r**2,
    )


def cylinder_geometry(radius, length=None) -> PelletGeometry:
    """Cylinder of radius R [m]: infinite (no end faces, L = R, V_p/S_p = R/2), or with a
    length H [m] a finite cylinder with reacting ends (``industrial_shapes``)."""
    _positive("radius", radius)
    if length is not None:
        from .industrial_shapes import finite_cylinder_geometry

        return finite_cylinder_geometry(radius, length)
    return PelletGeometry(
        shape="cylinder",
        shape_exponent=1,
        diffusion_length=radius,
        characteristic_length=radius / 2.0,
    )


def slab_geometry(thickness, exposed_faces=2) -> PelletGeometry:
    """Slab of thickness t [m] with 1 or 2 permeable faces.

    Two faces: L = t/2 (symmetry plane in the middle). One face (a layer on an
    impermeable wall, e.g. a washcoat): L = t. In both cases V_p/S_p = L.
    """
    _positive("thickness", thickness)
    faces = np.asarray(exposed_faces)
    if not np.all((faces == 1) | (faces == 2)):
        raise PhysicsInputError("exposed_faces", exposed_faces, "must be 1 or 2")
    length = np.where(faces == 2, np.asarray(thickness) / 2.0, np.asarray(thickness))
    if np.ndim(length) == 0:
        length = float(length)
    return PelletGeometry(
        shape="slab",
        shape_exponent=0,
        diffusion_length=length,
        characteristic_length=length,
    )


SHAPES: dict[str, ShapeSpec] = {
    spec.name: spec
    for spec in (
        ShapeSpec(
            "sphere",
            "Sphere; every direction of the surface is permeable.",
            ("radius",),
            2,
            sphere_geometry,
        ),
        ShapeSpec(
            "cylinder",
            "Cylinder; infinitely long without a length, else with reacting end faces.",
            ("radius",),
            1,
            cylinder_geometry,
            optional={"length": None},
        ),
        ShapeSpec(
            "slab",
            "Flat plate; exposed_faces 2 (both faces) or 1 (layer on an impermeable wall).",
            ("thickness",),
            0,
            slab_geometry,
            optional={"exposed_faces": 2},
        ),
    )
}


def build_geometry(shape: str, **dimensions) -> PelletGeometry:
    """Build the geometry of a registered shape from its dimensions [m]."""
    try:
        spec = SHAPES[shape]
    except KeyError:
        raise PhysicsInputError(
            "shape", shape, f"unknown shape; choose one of {', '.join(sorted(SHAPES))}"
        ) from None
    return spec.build(**dimensions)


# Industrial shapes (appended; builders live in industrial_shapes.py, imported lazily because
# that module imports PelletGeometry from here).
def _hollow_cylinder(outer_radius, inner_radius, length=None) -> PelletGeometry:
    from .industrial_shapes import hollow_cylinder_geometry

    return hollow_cylinder_geometry(outer_radius, inner_radius, length)


def _extrudate(lobes, lobe_diameter, length=None) -> PelletGeometry:
    from .industrial_shapes import extrudate_geometry

    return extrudate_geometry(lobes, lobe_diameter, length)


def _custom(volume, external_area) -> PelletGeometry:
    from .industrial_shapes import custom_geometry

    return custom_geometry(volume, external_area)


SHAPES.update(
    {
        spec.name: spec
        for spec in (
            ShapeSpec(
                "hollow_cylinder",
                "Ring: both curved faces permeable; with a length the end faces react too.",
                ("outer_radius", "inner_radius"),
                None,
                _hollow_cylinder,
                optional={"length": None},
            ),
            ShapeSpec(
                "extrudate",
                "Multi-lobed extrudate (lobes 3|4 of diameter lobe_diameter); optional length.",
                ("lobes", "lobe_diameter"),
                None,
                _extrudate,
                optional={"length": None},
            ),
            ShapeSpec(
                "custom",
                "Any pellet from volume and external area: generalized-modulus estimate only.",
                ("volume", "external_area"),
                None,
                _custom,
            ),
        )
    }
)
