"""Pellet sizing: bed pressure drop, the largest pellet for a target effectiveness,
and the size trade-off table.

Particle diameter convention (Ergun)
------------------------------------
The Ergun equation is written for spheres; for other shapes the diameter used is
d_p = 6 V_p / S_p = psi d_v, the diameter of the sphere with the pellet's
volume-to-surface ratio: d_v = (6 V_p/pi)^(1/3) is the equivalent-volume sphere
diameter and psi = pi d_v^2 / S_p the sphericity (Wadell). ``equivalent_particle_diameter``
returns it from V_p and S_p (for the geometry registry: 6 x characteristic_length).

References
----------
1. Ergun, S. (1952). Fluid flow through packed columns. Chem. Eng. Prog. 48(2), 89-94.
2. Wadell, H. (1935). Volume, shape and roundness of quartz particles. J. Geol. 43,
   250-280 (sphericity).
3. Bird, R. B., Stewart, W. E., Lightfoot, E. N. (2002). Transport Phenomena, 2nd ed.,
   Wiley, sec. 6.4 (Ergun equation, 6 V_p/S_p diameter).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Iterable

import numpy as np

from .criteria import INVERSION_STATUS, invert_monotone
from .checks import positive_array, scalar_or_array
from .errors import PhysicsInputError


_positive = positive_array
_out = scalar_or_array


def ergun_pressure_gradient(superficial_velocity, density, viscosity, voidage,
                            particle_diameter):
    """Frictional pressure drop per bed length -dP/dz [Pa/m] (Ergun 1952 [1]):

    dP/L = 150 mu (1-eps)^2 u / (eps^3 d_p^2) + 1.75 (1-eps) rho u^2 / (eps^3 d_p).

    Parameters
    ----------
    superficial_velocity : u [m/s], >= 0.
    density : rho [kg/m^3], > 0.
    viscosity : mu [Pa s], > 0.
    voidage : eps [-], in (0, 1).
    particle_diameter : d_p = 6 V_p/S_p [m], > 0 (see module notes).

    Notes
    -----
    Fitted for 1 < Re/(1-eps) < 2300 (Re = rho u d_p/mu); over-predicts at high Re.

    Examples
    --------
    >>> round(ergun_pressure_gradient(1e-3, 1e3, 1e-3, 0.4, 8e-4), 3)
    1338.867
    """
    u = np.asarray(superficial_velocity, dtype=float)
    if not np.all(np.isfinite(u)) or np.any(u < 0):
        raise PhysicsInputError("superficial_velocity", superficial_velocity,
                                "must be finite and >= 0")
    rho = _positive("density", density)
    mu = _positive("viscosity", viscosity)
    eps = np.asarray(voidage, dtype=float)
    if not np.all(np.isfinite(eps)) or np.any((eps <= 0) | (eps >= 1)):
        raise PhysicsInputError("voidage", voidage, "must lie in (0, 1)")
    dp = _positive("particle_diameter", particle_diameter)
    solid = 1.0 - eps
    eps3 = eps**3
    gradient = (150.0 * mu * solid**2 * u / (eps3 * dp**2)
                + 1.75 * solid * rho * u**2 / (eps3 * dp))
    return _out(gradient, superficial_velocity, density, viscosity, voidage, particle_diameter)


def equivalent_particle_diameter(volume, external_area):
    """d_p = 6 V_p / S_p [m] = sphericity x equivalent-volume diameter; volume [m^3],
    external_area [m^2]."""
    return _out(6.0 * _positive("volume", volume) / _positive("external_area", external_area),
                volume, external_area)


def sphericity(volume, external_area):
    """psi = pi d_v^2 / S_p [-], d_v = (6 V_p/pi)^(1/3) (Wadell [2]); 1 for a sphere."""
    v = _positive("volume", volume)
    s = _positive("external_area", external_area)
    dv = np.cbrt(6.0 * v / np.pi)
    return _out(np.pi * dv * dv / s, volume, external_area)


SIZING_STATUS = {
    0: "converged: the largest size meeting the target lies inside the bounds",
    1: "every size up to the upper bound meets the target; the upper bound is returned",
    2: "no size down to the lower bound meets the target",
    3: "the effectiveness function returned a non-finite value",
    4: "the root finder did not converge",
}


@dataclass(frozen=True)
class SizeResult:
    """Largest size with eta(size) >= target.

    size [same unit as bounds, normally m] and effectiveness [-], None when no size
    qualifies (status 2, 3, 4). success is True for status 0 and 1.
    """

    size: float | None
    effectiveness: float | None
    success: bool
    status: int
    message: str
    function_calls: int


def largest_size_for_target_effectiveness(effectiveness_of_size: Callable[[float], float],
                                          target: float,
                                          bounds: tuple[float, float]) -> SizeResult:
    """Largest pellet size in ``bounds`` whose effectiveness factor is at least ``target``.

    effectiveness_of_size(size) must decrease with size (true for every isothermal
    normal-kinetics case). The size solves eta(size) = target to a relative tolerance
    of 1e-13 (``criteria.invert_monotone``).

    Parameters
    ----------
    effectiveness_of_size : callable size [m] -> eta [-].
    target : eta wanted, in (0, 1] [-].
    bounds : (smallest, largest) size considered [m], 0 < smallest < largest.
    """
    target = float(target)
    if not math.isfinite(target) or not 0 < target <= 1:
        raise PhysicsInputError("target", target, "must lie in (0, 1]")
    lo, hi = (float(b) for b in bounds)
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise PhysicsInputError("bounds", bounds, "need 0 < smallest < largest, finite")

    def done(status, size=None, eta=None, calls=0):
        return SizeResult(size, eta, status in (0, 1), status, SIZING_STATUS[status], calls)

    eta_hi = float(effectiveness_of_size(hi))
    if not math.isfinite(eta_hi):
        return done(3, calls=1)
    if eta_hi >= target:
        return done(1, hi, eta_hi, 1)
    inv = invert_monotone(effectiveness_of_size, target, x0=math.sqrt(lo * hi), limits=(lo, hi))
    calls = inv.function_calls + 1
    if inv.status == 0:
        return done(0, inv.x, inv.residual + target, calls)
    status = {1: 2, 2: 3, 3: 4}[inv.status]
    return done(status, calls=calls)


@dataclass(frozen=True)
class TradeoffRow:
    """One size: effectiveness [-], rate per reactor volume [mol/(m^3 s)],
    pressure gradient [Pa/m]."""

    size: float
    effectiveness: float
    rate_per_reactor_volume: float
    pressure_gradient: float

    def as_dict(self) -> dict:
        return {"size": self.size, "effectiveness_factor": self.effectiveness,
                "rate_per_reactor_volume": self.rate_per_reactor_volume,
                "pressure_gradient": self.pressure_gradient}


def size_tradeoff_table(sizes: Iterable[float], effectiveness_of_size: Callable[[float], float],
                        pressure_gradient_of_size: Callable[[float], float],
                        surface_rate: float, voidage: float) -> list[TradeoffRow]:
    """Trade-off of pellet size: activity against pressure drop.

    For each size: eta(size), the rate per reactor volume (1 - eps) eta r_s
    [mol/(m^3 s)] with r_s the intrinsic rate per pellet volume at surface
    conditions [mol/(m^3 s)] and eps the bed voidage [-], and -dP/dz(size) [Pa/m]
    (normally ``ergun_pressure_gradient`` with d_p from the size).
    """
    eps = float(voidage)
    if not math.isfinite(eps) or not 0 < eps < 1:
        raise PhysicsInputError("voidage", voidage, "must lie in (0, 1)")
    rs = float(surface_rate)
    if not math.isfinite(rs) or rs < 0:
        raise PhysicsInputError("surface_rate", surface_rate, "must be finite and >= 0")
    rows = []
    for size in sizes:
        s = float(_positive("size", size))
        eta = float(effectiveness_of_size(s))
        rows.append(TradeoffRow(s, eta, (1.0 - eps) * eta * rs,
                                float(pressure_gradient_of_size(s))))
    return rows


__all__ = [
    "INVERSION_STATUS", "SIZING_STATUS", "SizeResult", "TradeoffRow",
    "equivalent_particle_diameter", "ergun_pressure_gradient",
    "largest_size_for_target_effectiveness", "size_tradeoff_table", "sphericity",
]
