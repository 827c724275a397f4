"""Heat effects inside a pellet: Prater and Arrhenius numbers, temperature rise.

Inside a pellet at steady state the heat and mass balances share the same
operator, so (Prater 1958)

    lambda_e (T - T_s) = (-dH) D_e (c_s - c),   T/T_s = 1 + beta (1 - c/c_s),

with the Prater number beta = (-dH) D_e c_s / (lambda_e T_s); the largest
possible rise (c -> 0) is beta T_s. This holds for any shape and Lewis number.

With an external film (Robin conditions for mass and heat, Biot numbers
Bi_m = k_m L/D_e and Bi_h = h L/lambda_e) the film balances give, in bulk
variables u = c/c_b and theta = T/T_b with beta_b on bulk values,

    theta_s = 1 + beta_b (Bi_m/Bi_h) (1 - u_s),   theta = theta_s + beta_b (u_s - u).

References
----------
1. Prater, C. D. (1958). The temperature produced by heat of reaction in the
   interior of porous particles. Chem. Eng. Sci. 8, 284-286.
2. Weisz, P. B., Hicks, J. S. (1962). The behaviour of porous catalyst particles
   in view of internal mass and heat diffusion effects. Chem. Eng. Sci. 17, 265-275.
3. Aris, R. (1975). The Mathematical Theory of Diffusion and Reaction in
   Permeable Catalysts, Vol. 1, Clarendon Press, Ch. 4.
"""

from __future__ import annotations

import math

import numpy as np

from .errors import PhysicsInputError

GAS_CONSTANT = 8.31446261815324  # J/(mol K), CODATA 2018 exact value (N_A k_B)


def _finite(name, value, positive=False):
    x = float(value)
    if not math.isfinite(x) or (positive and x <= 0):
        raise PhysicsInputError(name, value, "must be finite" + (" and > 0" if positive else ""))
    return x


def prater_number(heat_of_reaction, effective_diffusivity, surface_concentration,
                  effective_thermal_conductivity, surface_temperature) -> float:
    """Prater number beta = (-dH) D_e c_s / (lambda_e T_s) [-] (ref. 1).

    heat_of_reaction dH [J/mol] (negative = exothermic, giving beta > 0),
    effective_diffusivity D_e [m^2/s], surface_concentration c_s [mol/m^3],
    effective_thermal_conductivity lambda_e [W/(m K)], surface_temperature T_s [K].

    >>> round(prater_number(-1e5, 1e-6, 10.0, 0.5, 500.0), 12)
    0.004
    """
    dH = _finite("heat_of_reaction", heat_of_reaction)
    De = _finite("effective_diffusivity", effective_diffusivity, True)
    cs = _finite("surface_concentration", surface_concentration, True)
    lam = _finite("effective_thermal_conductivity", effective_thermal_conductivity, True)
    Ts = _finite("surface_temperature", surface_temperature, True)
    return -dH * De * cs / (lam * Ts)


def arrhenius_number(activation_energy, temperature) -> float:
    """Arrhenius number gamma = E/(R T) [-]; E [J/mol] >= 0, T [K] > 0."""
    E = _finite("activation_energy", activation_energy)
    if E < 0:
        raise PhysicsInputError("activation_energy", activation_energy, "must be >= 0")
    return E / (GAS_CONSTANT * _finite("temperature", temperature, True))


def maximum_temperature_rise(beta, surface_temperature) -> float:
    """Largest temperature rise inside the pellet, beta T_s [K] (ref. 1)."""
    return _finite("prater_number", beta) * _finite("surface_temperature", surface_temperature, True)


def prater_temperature_ratio(u, beta, u_surface=1.0, theta_surface=1.0):
    """theta = T/T_ref = theta_s + beta (u_s - u) [-]; u = c/c_ref [-] (ref. 1)."""
    return theta_surface + beta * (u_surface - np.asarray(u, dtype=float))


def film_surface_temperature_ratio(u_surface, beta, mass_biot, heat_biot):
    """theta_s = 1 + beta (Bi_m/Bi_h)(1 - u_s) from the two film balances [-]."""
    if heat_biot is None or math.isinf(heat_biot):
        return 1.0 + 0.0 * np.asarray(u_surface, dtype=float)
    return 1.0 + beta * (mass_biot / heat_biot) * (1.0 - np.asarray(u_surface, dtype=float))


def arrhenius_factor(theta, gamma):
    """k(T)/k(T_ref) = exp(gamma (1 - 1/theta)), theta = T/T_ref [-]."""
    return np.exp(gamma * (1.0 - 1.0 / np.asarray(theta, dtype=float)))
