"""Diffusivities for a catalyst pellet: molecular (gas and liquid), Knudsen, pore, effective.

Gas: Fuller binary diffusivity D_AB; Knudsen diffusivity D_K in a pore of diameter
d; the Bosanquet combination 1/D_pore = 1/D_AB + 1/D_K; the effective diffusivity
D_e = eps_p D_pore / tau of the pellet (porosity eps_p, tortuosity tau). Liquid:
Wilke-Chang. ``pore_diffusion`` assembles the whole chain for one case.

Regime (Knudsen number Kn = lambda / d, lambda the gas-kinetic mean free path):
Kn < 0.01 "molecular", Kn > 10 "knudsen", "transition" in between. These bounds are
common practice (e.g. Satterfield 1970 [5], ch. 2: Knudsen diffusion dominates when
the mean free path exceeds about ten pore diameters, bulk diffusion when it is below
about a hundredth; value from memory). When no collision diameter is known, Kn is
taken as the ratio D_AB / D_K, which equals lambda/d up to a kinetic-theory factor
of order one (both diffusivities are (1/3) x length x mean speed); the result says
which basis was used.

Pore structure outside porosity 0.2-0.8 or tortuosity 1.5-8 is returned as an
``INPUT_OUTSIDE_COMMON_RANGE`` diagnostic (common practice: the ranges met for
commercial pellets, e.g. Satterfield 1970 [5], ch. 1; not a published limit).

References
----------
1. Fuller, E. N., Schettler, P. D., Giddings, J. C. (1966). Ind. Eng. Chem. 58(5), 18.
2. Poling, B. E., Prausnitz, J. M., O'Connell, J. P. (2001). The Properties of Gases
   and Liquids, 5th ed., McGraw-Hill: eq. 11-4.4 (Fuller), eq. 11-9.1 (Wilke-Chang).
3. Wilke, C. R., Chang, P. (1955). Correlation of diffusion coefficients in dilute
   solutions. AIChE J. 1(2), 264-270.
4. Pollard, W. G., Present, R. D. (1948). Phys. Rev. 73, 762 (Bosanquet formula);
   Knudsen, M. (1909). Ann. Phys. 333, 75.
5. Satterfield, C. N. (1970). Mass Transfer in Heterogeneous Catalysis. MIT Press.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .diagnostics import Diagnostic, diagnostic
from .checks import positive_array, scalar_or_array
from .errors import PhysicsInputError
from .species import Species

GAS_CONSTANT = 8.314462618  # R [J/(mol K)], CODATA 2018 exact
BOLTZMANN = 1.380649e-23  # k_B [J/K], exact
STANDARD_ATMOSPHERE = 101325.0  # [Pa]

KNUDSEN_MOLECULAR_LIMIT = 0.01
KNUDSEN_KNUDSEN_LIMIT = 10.0
POROSITY_COMMON_RANGE = (0.2, 0.8)
TORTUOSITY_COMMON_RANGE = (1.5, 8.0)

# Wilke-Chang association factors of the solvent (Wilke & Chang 1955 [3]; Poling [2]).
ASSOCIATION_FACTORS = {"water": 2.6, "methanol": 1.9, "ethanol": 1.5, "unassociated": 1.0}


_positive = positive_array
_out = scalar_or_array


def binary_gas_diffusivity(temperature, pressure, molar_mass_a, molar_mass_b,
                           diffusion_volume_a, diffusion_volume_b):
    """Binary gas diffusivity D_AB [m^2/s] by the Fuller method.

    D_AB [cm^2/s] = 0.00143 T^1.75 / (P M_AB^0.5 (V_A^(1/3) + V_B^(1/3))^2),
    P [bar], M_AB = 2 / (1/M_A + 1/M_B) [g/mol] (Poling et al. eq. 11-4.4 [2]); in SI
    D_AB = 0.0143 T^1.75 / (P M_AB^0.5 (...)^2) with P in Pa and M_AB still in g/mol.
    The 1966 form [1], 1.00e-3 T^1.75 (1/M_A + 1/M_B)^0.5 / (P[atm] (...)^2), differs
    by 0.2 %.

    Parameters
    ----------
    temperature : T [K], > 0.
    pressure : P [Pa], > 0.
    molar_mass_a, molar_mass_b : [kg/mol], > 0.
    diffusion_volume_a, diffusion_volume_b : sums of atomic diffusion volumes [-]
        (see ``species``).

    Notes
    -----
    Low-pressure method (ideal gas); Poling et al. report an average error of about
    5 %. Not for polar/associating pairs at high accuracy or dense gases.
    """
    t = _positive("temperature", temperature)
    p = _positive("pressure", pressure)
    ma = _positive("molar_mass_a", molar_mass_a) * 1e3
    mb = _positive("molar_mass_b", molar_mass_b) * 1e3
    va = _positive("diffusion_volume_a", diffusion_volume_a)
    vb = _positive("diffusion_volume_b", diffusion_volume_b)
    m_ab = 2.0 / (1.0 / ma + 1.0 / mb)
    # 0.00143 cm^2/s * 1e-4 m^2/cm^2 * 1e5 Pa/bar = 0.0143
    d = 0.0143 * t**1.75 / (p * np.sqrt(m_ab) * (np.cbrt(va) + np.cbrt(vb)) ** 2)
    return _out(d, temperature, pressure, molar_mass_a, molar_mass_b)


def knudsen_diffusivity(pore_diameter, temperature, molar_mass):
    """Knudsen diffusivity D_K = (d/3) sqrt(8 R T / (pi M)) [m^2/s].

    pore_diameter d [m], temperature T [K], molar_mass M of the diffusing species
    [kg/mol]. (In cgs: D_K = 4850 d[cm] sqrt(T/M[g/mol]) cm^2/s, Satterfield [5].)
    """
    d = _positive("pore_diameter", pore_diameter)
    t = _positive("temperature", temperature)
    m = _positive("molar_mass", molar_mass)
    return _out(d / 3.0 * np.sqrt(8.0 * GAS_CONSTANT * t / (np.pi * m)), pore_diameter,
                temperature, molar_mass)


def pore_diffusivity(molecular_diffusivity, knudsen_diffusivity):
    """Bosanquet combination 1/D_pore = 1/D_AB + 1/D_K [m^2/s] (equimolar
    counter-diffusion or dilute reactant; Pollard & Present [4])."""
    dab = _positive("molecular_diffusivity", molecular_diffusivity)
    dk = _positive("knudsen_diffusivity", knudsen_diffusivity)
    return _out(dab * dk / (dab + dk), molecular_diffusivity, knudsen_diffusivity)


def effective_diffusivity(porosity, tortuosity, pore_diffusivity):
    """D_e = eps_p D_pore / tau [m^2/s]; porosity eps_p in (0, 1) [-], tortuosity
    tau >= 1 [-], pore diffusivity [m^2/s] (Satterfield [5], ch. 1)."""
    eps = np.asarray(porosity, dtype=float)
    tau = np.asarray(tortuosity, dtype=float)
    if not np.all(np.isfinite(eps)) or np.any((eps <= 0) | (eps >= 1)):
        raise PhysicsInputError("porosity", porosity, "must lie in (0, 1)")
    if not np.all(np.isfinite(tau)) or np.any(tau < 1):
        raise PhysicsInputError("tortuosity", tortuosity, "must be finite and >= 1")
    dp = _positive("pore_diffusivity", pore_diffusivity)
    return _out(eps * dp / tau, porosity, tortuosity, pore_diffusivity)


def pore_structure_diagnostics(porosity: float, tortuosity: float) -> tuple[Diagnostic, ...]:
    """INPUT_OUTSIDE_COMMON_RANGE diagnostics for porosity outside 0.2-0.8 or
    tortuosity outside 1.5-8 (common practice, Satterfield [5])."""
    out = []
    for name, value, (lo, hi) in (
        ("porosity", porosity, POROSITY_COMMON_RANGE),
        ("tortuosity", tortuosity, TORTUOSITY_COMMON_RANGE),
    ):
        if not lo <= value <= hi:
            out.append(diagnostic(
                "INPUT_OUTSIDE_COMMON_RANGE",
                f"{name} = {value:g} lies outside {lo:g}-{hi:g}, the range commonly met for "
                f"catalyst pellets; check the value.",
                f"transport.pore.{name}",
            ))
    return tuple(out)


def mean_free_path(temperature, pressure, collision_diameter):
    """Gas-kinetic (hard-sphere) mean free path lambda = k_B T / (sqrt(2) pi sigma^2 P) [m].

    temperature [K], pressure [Pa], collision_diameter sigma [m] of the gas filling
    the pores (the carrier). Chapman & Cowling; e.g. Bird, Stewart & Lightfoot,
    Transport Phenomena, 2nd ed., eq. 1.4-3.
    """
    t = _positive("temperature", temperature)
    p = _positive("pressure", pressure)
    s = _positive("collision_diameter", collision_diameter)
    return _out(BOLTZMANN * t / (np.sqrt(2.0) * np.pi * s * s * p), temperature, pressure,
                collision_diameter)


def knudsen_number(mean_free_path, pore_diameter):
    """Kn = lambda / d_pore [-]."""
    lam = _positive("mean_free_path", mean_free_path)
    d = _positive("pore_diameter", pore_diameter)
    return _out(lam / d, mean_free_path, pore_diameter)


def diffusion_regime(knudsen_number: float) -> str:
    """'molecular' (Kn < 0.01), 'knudsen' (Kn > 10) or 'transition' (common practice)."""
    if knudsen_number < KNUDSEN_MOLECULAR_LIMIT:
        return "molecular"
    if knudsen_number > KNUDSEN_KNUDSEN_LIMIT:
        return "knudsen"
    return "transition"


def liquid_diffusivity_wilke_chang(temperature, solvent_viscosity, solvent_molar_mass,
                                   association_factor, solute_molar_volume):
    """Dilute-solute liquid diffusivity by Wilke & Chang (1955) [3] [m^2/s].

    Published (cgs) form, Poling et al. eq. 11-9.1 [2]:
        D [cm^2/s] = 7.4e-8 (phi M_B)^0.5 T / (eta_B V_A^0.6),
    M_B [g/mol], eta_B [cP], V_A [cm^3/mol], T [K]. With SI inputs M_B = 1e3 M [kg/mol],
    eta_B = 1e3 mu [Pa s], V_A = 1e6 V [m^3/mol] and D = 1e-4 D[cm^2/s]; the constant
    becomes 7.4e-8 * 1e-4 * 1e3**0.5 / (1e3 * 1e6**0.6) = 5.878e-14 (computed below).

    Parameters
    ----------
    temperature : T [K].
    solvent_viscosity : mu [Pa s].
    solvent_molar_mass : M_B [kg/mol].
    association_factor : phi [-] (water 2.6, methanol 1.9, ethanol 1.5, unassociated 1.0).
    solute_molar_volume : V_A at the normal boiling point [m^3/mol].

    Notes
    -----
    Average error about 10 % (Poling et al.); dilute solute only.
    """
    t = _positive("temperature", temperature)
    mu = _positive("solvent_viscosity", solvent_viscosity)
    mb = _positive("solvent_molar_mass", solvent_molar_mass)
    phi = _positive("association_factor", association_factor)
    va = _positive("solute_molar_volume", solute_molar_volume)
    constant = 7.4e-8 * 1e-4 * 1e3**0.5 / (1e3 * 1e6**0.6)
    d = constant * np.sqrt(phi * mb) * t / (mu * va**0.6)
    return _out(d, temperature, solvent_viscosity, solvent_molar_mass, solute_molar_volume)


@dataclass(frozen=True)
class PoreDiffusion:
    """Result of ``pore_diffusion``; diffusivities [m^2/s], knudsen_number [-].

    knudsen_number_basis : "mean_free_path" (lambda/d from the carrier's sigma) or
        "diffusivity_ratio" (D_AB/D_K, when no sigma or pressure is available).
    regime : "molecular" | "transition" | "knudsen".
    """

    molecular_diffusivity: float
    knudsen_diffusivity: float
    pore_diffusivity: float
    effective_diffusivity: float
    knudsen_number: float
    knudsen_number_basis: str
    regime: str
    diagnostics: tuple[Diagnostic, ...] = field(default_factory=tuple)


def pore_diffusion(temperature: float, pore_diameter: float, porosity: float,
                   tortuosity: float, diffusing: Species, carrier: Species | None = None,
                   pressure: float | None = None,
                   molecular_diffusivity: float | None = None) -> PoreDiffusion:
    """Molecular, Knudsen, pore and effective diffusivity of ``diffusing`` in one pellet.

    D_AB is ``molecular_diffusivity`` when given, else the Fuller estimate for the
    pair (diffusing, carrier) at ``pressure`` [Pa]. D_K uses the diffusing species'
    molar mass. Kn = lambda/d with lambda from the carrier's collision diameter when
    carrier sigma and pressure are known, else D_AB/D_K (see module notes).
    temperature [K], pore_diameter [m], porosity [-], tortuosity [-].
    """
    if molecular_diffusivity is None:
        if carrier is None or pressure is None:
            raise PhysicsInputError(
                "molecular_diffusivity", None,
                "give it, or give the carrier gas and the pressure to estimate it",
            )
        dab = binary_gas_diffusivity(temperature, pressure, diffusing.molar_mass,
                                     carrier.molar_mass, diffusing.diffusion_volume,
                                     carrier.diffusion_volume)
    else:
        dab = float(_positive("molecular_diffusivity", molecular_diffusivity))
    dk = knudsen_diffusivity(pore_diameter, temperature, diffusing.molar_mass)
    dpore = pore_diffusivity(dab, dk)
    de = effective_diffusivity(porosity, tortuosity, dpore)
    if carrier is not None and carrier.collision_diameter is not None and pressure is not None:
        kn = knudsen_number(mean_free_path(temperature, pressure, carrier.collision_diameter),
                            pore_diameter)
        basis = "mean_free_path"
    else:
        kn = dab / dk
        basis = "diffusivity_ratio"
    return PoreDiffusion(
        molecular_diffusivity=dab, knudsen_diffusivity=dk, pore_diffusivity=dpore,
        effective_diffusivity=de, knudsen_number=kn, knudsen_number_basis=basis,
        regime=diffusion_regime(kn),
        diagnostics=pore_structure_diagnostics(porosity, tortuosity),
    )
