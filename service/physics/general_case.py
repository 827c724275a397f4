"""Cases beyond the isothermal first-order closed forms: any rate law, heat effects,
the external film; every steady state through ``bvp.solve_reaction_diffusion``.

Which solution serves which case
--------------------------------
* 1-D shapes (slab, infinite cylinder, sphere): the 1-D solver, every steady state, with
  heat and film as given. The infinite ring without a film (both faces at surface
  conditions, with or without heat effects): the 1-D solver on the annulus.
* Finite cylinder and finite ring, isothermal, no film: the 2-D (r, z) finite-volume
  solution of ``cross_section`` (one steady state).
* Any other combination (extrudates, custom shapes, 2-D shapes with heat or film): the
  1-D solver for the infinite cylinder with the pellet's V_p/S_p (L = 2 V_p/S_p), i.e.
  the generalized-modulus approximation (Aris 1957), flagged with its measured band.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import bvp, kinetics, thermal
from . import film as film_physics
from .case import Case
from .errors import PhysicsInputError, SolverBudgetExceeded
from .geometry import PelletGeometry


@dataclass
class ThermalNumbers:
    prater_number: float
    arrhenius_number: float
    temperature: float | None  # reference temperature [K] (surface, or bulk with a film)
    maximum_temperature_rise: float | None  # [K], beta * T_ref (Prater 1958)
    effective_thermal_conductivity: float | None


@dataclass
class FilmNumbers:
    mass_transfer_coefficient: float
    heat_transfer_coefficient: float | None
    mass_biot_number: float  # on the shape's own length L
    heat_biot_number: float | None
    particle_diameter: float | None
    correlations: dict = field(default_factory=dict)  # kind -> {name, reference, groups}
    diagnostics: list = field(default_factory=list)


@dataclass
class GeneralSolution:
    effectiveness_factor: float
    overall_effectiveness: float | None
    thiele_modulus: float
    generalized_modulus: float
    observed_rate: float
    method: str
    approximated: bool
    steady_states: list
    headline_index: int | None
    dead_zone_fraction: float | None
    solver: dict
    profile_position: np.ndarray | None = None
    profile_concentration: np.ndarray | None = None
    profile_temperature: np.ndarray | None = None
    surface_concentration: float | None = None
    surface_temperature: float | None = None
    thermal: ThermalNumbers | None = None
    film: FilmNumbers | None = None
    reference_temperature: float | None = None


def rate_law_of(case: Case):
    """The registered rate law of a case (SI parameters, per pellet volume)."""
    return kinetics.build_rate_law(case.model, **case.kinetic_parameters)


def thermal_numbers(case: Case, effective_diffusivity: float) -> ThermalNumbers | None:
    """Prater and Arrhenius numbers at the reference (surface, or bulk) conditions."""
    th = case.thermal
    if th is None:
        return None
    temperature = case.bulk_temperature if case.film is not None else th.temperature
    if th.prater_number is not None:
        beta, gamma = th.prater_number, th.arrhenius_number
    else:
        beta = thermal.prater_number(th.heat_of_reaction, effective_diffusivity,
                                     case.reference_concentration,
                                     th.effective_thermal_conductivity, temperature)
        gamma = thermal.arrhenius_number(th.activation_energy, temperature)
    rise = None if temperature is None else thermal.maximum_temperature_rise(beta, temperature)
    return ThermalNumbers(float(beta), float(gamma), temperature, rise,
                          th.effective_thermal_conductivity)


def film_numbers(case: Case, geometry: PelletGeometry, effective_diffusivity: float,
                 thermal_data: ThermalNumbers | None) -> FilmNumbers | None:
    """Film coefficients (given, or from packed-bed correlations) and Biot numbers."""
    fi = case.film
    if fi is None:
        return None
    length = float(geometry.diffusion_length)
    correlations, diagnostics = {}, []
    flow = fi.flow
    dp = flow.get("particle_diameter", 6.0 * float(geometry.characteristic_length)) if flow else None
    if fi.mass_transfer_coefficient is not None:
        k_m = fi.mass_transfer_coefficient
    else:
        coefficient = film_physics.mass_transfer_coefficient(
            flow["superficial_velocity"], flow["fluid_density"], flow["fluid_viscosity"],
            flow["molecular_diffusivity"], dp, flow["bed_voidage"], fi.mass_correlation)
        k_m = coefficient.value
        correlations["mass"] = {"name": coefficient.correlation,
                                "reference": coefficient.reference,
                                "groups": coefficient.groups}
        diagnostics += list(coefficient.diagnostics)
    h = fi.heat_transfer_coefficient
    if h is None and thermal_data is not None and flow and "fluid_thermal_conductivity" in flow:
        coefficient = film_physics.heat_transfer_coefficient(
            flow["superficial_velocity"], flow["fluid_density"], flow["fluid_viscosity"],
            flow["fluid_thermal_conductivity"], flow["fluid_heat_capacity"], dp,
            flow["bed_voidage"], fi.heat_correlation)
        h = coefficient.value
        correlations["heat"] = {"name": coefficient.correlation,
                                "reference": coefficient.reference,
                                "groups": coefficient.groups}
        diagnostics += list(coefficient.diagnostics)
    heat_biot = None
    if h is not None and thermal_data is not None and thermal_data.effective_thermal_conductivity:
        heat_biot = film_physics.biot_number_heat(h, length, thermal_data.effective_thermal_conductivity)
    return FilmNumbers(
        mass_transfer_coefficient=float(k_m),
        heat_transfer_coefficient=None if h is None else float(h),
        mass_biot_number=float(film_physics.biot_number_mass(k_m, length, effective_diffusivity)),
        heat_biot_number=None if heat_biot is None else float(heat_biot),
        particle_diameter=dp,
        correlations=correlations,
        diagnostics=diagnostics,
    )


def solve_general(case: Case, geometry: PelletGeometry, time_budget: float) -> GeneralSolution:
    """Solve a case by the numerical engine (see the module docstring for the routes)."""
    de = case.effective_diffusivity
    rate_law = rate_law_of(case)
    c_ref = case.reference_concentration
    th = thermal_numbers(case, de)
    fi = film_numbers(case, geometry, de, th)
    generalized = kinetics.generalized_modulus(geometry.characteristic_length, rate_law, c_ref, de)
    m = geometry.shape_exponent
    ring = case.shape == "hollow_cylinder" and case.dimensions.get("length") is None
    finite_cylinder = case.shape in ("cylinder", "hollow_cylinder") and m is None and not ring
    if (m is None and not ring and finite_cylinder and th is None and fi is None):
        solution = _finite_cylinder(case, geometry, rate_law, c_ref, de, generalized)
        if solution is not None:
            return solution
    approximated = m is None and not (ring and fi is None)
    if ring and not approximated:
        m, length = 1, case.dimensions["outer_radius"]
        inner = case.dimensions["inner_radius"] / case.dimensions["outer_radius"]
    elif approximated:
        m, length, inner = 1, 2.0 * float(geometry.characteristic_length), 0.0
    else:
        length, inner = float(geometry.diffusion_length), 0.0
    mass_biot = None if fi is None else fi.mass_biot_number * length / float(geometry.diffusion_length)
    heat_biot = None
    if fi is not None and fi.heat_biot_number is not None:
        heat_biot = fi.heat_biot_number * length / float(geometry.diffusion_length)
    res = bvp.solve_reaction_diffusion(
        rate_law, m, length, de, c_ref,
        mass_biot=mass_biot,
        prater_number=0.0 if th is None else th.prater_number,
        arrhenius_number=0.0 if th is None else th.arrhenius_number,
        temperature=None if th is None else th.temperature,
        heat_biot=heat_biot,
        inner_radius_fraction=inner,
        profile_points=case.profile_points if not approximated else 0,
        time_budget=time_budget,
    )
    if res.status == "budget_exceeded":
        raise SolverBudgetExceeded(time_budget, "numerical solve")
    if not res.success:
        raise PhysicsInputError("(case)", None, f"the numerical solver failed: {res.message}")
    headline = res.steady_states[res.headline_index]
    overall = res.overall_effectiveness
    r_ref = float(rate_law.rate(c_ref))  # rate at the reference conditions (T_ref)
    observed = (overall if overall is not None else res.effectiveness_factor) * r_ref
    phi = np.sqrt(kinetics.thiele_modulus_squared(geometry.diffusion_length, rate_law, c_ref, de))
    solution = GeneralSolution(
        effectiveness_factor=float(res.effectiveness_factor),
        overall_effectiveness=None if overall is None else float(overall),
        thiele_modulus=float(phi),
        generalized_modulus=float(generalized),
        observed_rate=float(observed),
        method=res.method,
        approximated=approximated,
        steady_states=list(res.steady_states),
        headline_index=res.headline_index,
        dead_zone_fraction=res.dead_zone_fraction,
        solver={"status": res.status, "message": res.message, "residual": res.residual,
                "error_estimate": res.error_estimate, "nodes": res.nodes, "search": res.search,
                "elapsed": res.elapsed},
        surface_concentration=headline.surface_concentration,
        surface_temperature=headline.surface_temperature,
        thermal=th,
        film=fi,
        reference_temperature=None if th is None else th.temperature,
    )
    if res.profile is not None:
        solution.profile_position = np.asarray(res.profile["position"]) * length
        solution.profile_concentration = np.asarray(res.profile["concentration"])
        if res.profile.get("temperature") is not None:
            solution.profile_temperature = np.asarray(res.profile["temperature"])
    return solution


def _finite_cylinder(case, geometry, rate_law, c_ref, de, generalized) -> GeneralSolution | None:
    """Finite cylinder or finite ring, isothermal, no film: the 2-D (r, z) solution
    (Richardson-extrapolated on n_r = max(16, 4 phi) cells: measured against an 80-cell
    solution about 1e-6 relative at modulus 1, 4e-5 at 3, 1e-4 at 6), or None
    when the modulus is beyond what the grid resolves."""
    from .cross_section import solve_finite_cylinder

    norm = kinetics.normalized_rate(rate_law, c_ref)
    outer = case.dimensions.get("radius", case.dimensions.get("outer_radius"))
    inner = case.dimensions.get("inner_radius", 0.0) / outer
    phi_outer = float(np.sqrt(kinetics.thiele_modulus_squared(outer, rate_law, c_ref, de)))
    # cells resolve the boundary layer up to phi ~ n_r / 3; beyond 80 cells the thin-layer
    # regime is left to the generalized-modulus route (None)
    n_r = int(max(16, np.ceil(4.0 * phi_outer)))
    if n_r > 80:
        return None
    solution = solve_finite_cylinder(phi_outer, case.dimensions["length"] / (2.0 * outer),
                                     rate=norm.f, rate_derivative=norm.dfdu, radius_ratio=inner,
                                     n_r=n_r, richardson=True)
    if solution.status == 3:
        return None
    if not solution.success:
        raise PhysicsInputError("(case)", None,
                                f"the 2-D solution did not converge: {solution.message}")
    eta = float(solution.effectiveness_factor)
    phi = np.sqrt(kinetics.thiele_modulus_squared(geometry.diffusion_length, rate_law, c_ref, de))
    return GeneralSolution(
        effectiveness_factor=eta, overall_effectiveness=None, thiele_modulus=float(phi),
        generalized_modulus=float(generalized), observed_rate=eta * float(rate_law.rate(c_ref)),
        method="numerical", approximated=False, steady_states=[], headline_index=None,
        dead_zone_fraction=None,
        solver={"status": "converged" if solution.status == 0 else str(solution.status),
                "message": solution.message, "residual": solution.residual,
                "error_estimate": solution.error_estimate, "nodes": solution.nodes,
                "search": "single", "elapsed": None},
    )
