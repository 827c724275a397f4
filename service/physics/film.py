"""External (film) transfer between the fluid and a catalyst pellet in a packed bed.

Packed-bed correlations give the Sherwood number Sh = k_m d_p / D_AB (mass) or the
Nusselt number Nu = h d_p / lambda_f (heat) from the particle Reynolds number
Re = rho u d_p / mu (u the superficial velocity), the Schmidt number
Sc = mu / (rho D_AB) or the Prandtl number Pr = c_p mu / lambda_f. Correlations are
registry entries (``MASS_TRANSFER_CORRELATIONS``, ``HEAT_TRANSFER_CORRELATIONS``):
each carries its function, the basis of its Reynolds number, its validity range and
its reference. Outside that range the result carries a diagnostic
``CORRELATION_OUT_OF_RANGE`` (severity ``warning``): the number is still returned.

The film then couples to the pellet: Biot numbers Bi = k_m L / D_e (mass) and
Bi_h = h L / lambda_e (heat), and for first-order kinetics the overall
effectiveness factor referred to bulk conditions (see
``overall_effectiveness_first_order``).

References
----------
1. Wakao, N., Funazkri, T. (1978). Effect of fluid dispersion coefficients on
   particle-to-fluid mass transfer coefficients in packed beds. Chem. Eng. Sci.
   33(10), 1375-1384.
2. Wakao, N., Kaguei, S. (1982). Heat and Mass Transfer in Packed Beds. Gordon and
   Breach, New York.
3. Dwivedi, P. N., Upadhyay, S. N. (1977). Particle-fluid mass transfer in fixed and
   fluidized beds. Ind. Eng. Chem. Process Des. Dev. 16(2), 157-165.
4. Gnielinski, V. (1982). Berechnung des Waerme- und Stoffaustauschs in
   durchstroemten ruhenden Schuettungen. Verfahrenstechnik 16(1), 36-39; as given in
   VDI Heat Atlas, 2nd ed. (2010), and in the ``ht`` library (Bell, C., ht:
   Nu_packed_bed_Gnielinski), whose stated range is used here.
5. Aris, R. (1975). The Mathematical Theory of Diffusion and Reaction in Permeable
   Catalysts, Vol. 1. Clarendon Press, Oxford (external film, Biot number).
6. Fogler, H. S. (2016). Elements of Chemical Reaction Engineering, 5th ed.,
   Prentice Hall, Ch. 15 (overall effectiveness factor).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from .diagnostics import WARNING_CODES, Diagnostic
from .checks import positive_float, scalar_or_array
from .errors import PhysicsInputError

# Code emitted here (severity, meaning); to be listed in diagnostics.WARNING_CODES.
FILM_WARNING_CODES = {"CORRELATION_OUT_OF_RANGE": WARNING_CODES["CORRELATION_OUT_OF_RANGE"]}


_positive = positive_float


def _voidage(value) -> float:
    x = float(value)
    if not np.isfinite(x) or not 0 < x < 1:
        raise PhysicsInputError("voidage", value, "must lie in (0, 1)")
    return x


# --- dimensionless groups -------------------------------------------------------------


def particle_reynolds_number(superficial_velocity, density, viscosity, particle_diameter):
    """Re = rho u d_p / mu [-] on the superficial velocity u [m/s], density rho
    [kg/m^3], viscosity mu [Pa s] and particle diameter d_p [m]."""
    return density * superficial_velocity * particle_diameter / viscosity


def schmidt_number(viscosity, density, molecular_diffusivity):
    """Sc = mu / (rho D_AB) [-]; mu [Pa s], rho [kg/m^3], D_AB [m^2/s]."""
    return viscosity / (density * molecular_diffusivity)


def prandtl_number(heat_capacity, viscosity, thermal_conductivity):
    """Pr = c_p mu / lambda_f [-]; c_p [J/(kg K)], mu [Pa s], lambda_f [W/(m K)]."""
    return heat_capacity * viscosity / thermal_conductivity


# --- correlations: number(Re, Sc or Pr, voidage) with Re = rho u d_p / mu ---------------
# Scalars or arrays; Re and Sc/Pr must be > 0, voidage in (0, 1) where it is used.


def _check_groups(reynolds, number, voidage=None):
    for name, value in (("reynolds_number", reynolds), ("transport_number", number)):
        arr = np.asarray(value, dtype=float)
        if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
            raise PhysicsInputError(name, value, "must be finite and > 0")
    if voidage is not None:
        eps = np.asarray(voidage, dtype=float)
        if not np.all(np.isfinite(eps)) or np.any((eps <= 0) | (eps >= 1)):
            raise PhysicsInputError("voidage", voidage, "must lie in (0, 1)")


def sherwood_wakao_funazkri(reynolds, schmidt, voidage=None):
    """Sh = 2 + 1.1 Sc^(1/3) Re^0.6 (Wakao & Funazkri 1978 [1]; Wakao & Kaguei [2]).

    Re on the superficial velocity; no voidage dependence (argument ignored).
    Fitted for 3 < Re < 10000, gases and liquids.
    """
    _check_groups(reynolds, schmidt)
    return 2.0 + 1.1 * np.cbrt(schmidt) * reynolds**0.6


def nusselt_wakao_kaguei(reynolds, prandtl, voidage=None):
    """Nu = 2 + 1.1 Pr^(1/3) Re^0.6 (Wakao & Kaguei 1982 [2]); heat analogue of
    ``sherwood_wakao_funazkri``; Re on the superficial velocity."""
    _check_groups(reynolds, prandtl)
    return 2.0 + 1.1 * np.cbrt(prandtl) * reynolds**0.6


def sherwood_dwivedi_upadhyay(reynolds, schmidt, voidage):
    """Sh = j_D Re Sc^(1/3) with eps j_D = 0.765/Re^0.82 + 0.365/Re^0.386
    (Dwivedi & Upadhyay 1977 [3], fixed and fluidized beds, gases and liquids,
    0.01 < Re < 15000; Re on the superficial velocity). (Coefficients from memory.)"""
    _check_groups(reynolds, schmidt, voidage)
    j_d = (0.765 / reynolds**0.82 + 0.365 / reynolds**0.386) / voidage
    return j_d * reynolds * np.cbrt(schmidt)


def _gnielinski(reynolds, number, voidage):
    _check_groups(reynolds, number, voidage)
    re_psi = reynolds / voidage
    laminar = 0.664 * np.sqrt(re_psi) * np.cbrt(number)
    turbulent = 0.037 * re_psi**0.8 * number / (
        1.0 + 2.443 * re_psi**-0.1 * (number ** (2.0 / 3.0) - 1.0))
    single_sphere = 2.0 + np.hypot(laminar, turbulent)
    return (1.0 + 1.5 * (1.0 - voidage)) * single_sphere


def sherwood_gnielinski(reynolds, schmidt, voidage):
    """Sh = f_a (2 + sqrt(Sh_lam^2 + Sh_turb^2)), Re_psi = Re/eps,
    Sh_lam = 0.664 Re_psi^0.5 Sc^(1/3),
    Sh_turb = 0.037 Re_psi^0.8 Sc / (1 + 2.443 Re_psi^-0.1 (Sc^(2/3) - 1)),
    f_a = 1 + 1.5 (1 - eps) for beds of equal spheres (Gnielinski 1982 [4])."""
    return _gnielinski(reynolds, schmidt, voidage)


def nusselt_gnielinski(reynolds, prandtl, voidage):
    """Heat form of ``sherwood_gnielinski`` with Pr in place of Sc [4]."""
    return _gnielinski(reynolds, prandtl, voidage)


@dataclass(frozen=True)
class PackedBedCorrelation:
    """One registry entry.

    number(Re, Sc_or_Pr, voidage) -> Sh or Nu, with Re = rho u d_p / mu (superficial).
    reynolds_basis: "superficial" (range applies to Re) or "interstitial" (range
    applies to Re/eps). Ranges are (low, high) or None where the source states none.
    """

    name: str
    kind: str  # "mass" or "heat"
    number: Callable
    reynolds_basis: str
    reynolds_range: tuple[float, float] | None
    transport_range: tuple[float, float] | None  # Sc (mass) or Pr (heat)
    voidage_range: tuple[float, float] | None
    reference: str
    note: str = ""


MASS_TRANSFER_CORRELATIONS: dict[str, PackedBedCorrelation] = {
    c.name: c
    for c in (
        PackedBedCorrelation(
            "wakao_funazkri", "mass", sherwood_wakao_funazkri, "superficial", (3.0, 1.0e4),
            None, None,
            "Wakao & Funazkri (1978) Chem. Eng. Sci. 33, 1375; Wakao & Kaguei (1982)",
            "Re range 3-10000 as stated by the authors (from memory); no Sc or voidage range.",
        ),
        PackedBedCorrelation(
            "dwivedi_upadhyay", "mass", sherwood_dwivedi_upadhyay, "superficial", (0.01, 1.5e4),
            None, None,
            "Dwivedi & Upadhyay (1977) Ind. Eng. Chem. Process Des. Dev. 16, 157",
            "j-factor form; Re range 0.01-15000 (from memory).",
        ),
        PackedBedCorrelation(
            "gnielinski", "mass", sherwood_gnielinski, "interstitial", (0.1, 1.0e3),
            (0.4, 1.0e3), (0.26, 0.935),
            "Gnielinski (1982) Verfahrenstechnik 16, 36; VDI Heat Atlas (2010)",
            "Re/eps and Sc ranges as documented in ht.Nu_packed_bed_Gnielinski; voidage "
            "range from memory; f_a for equal spheres.",
        ),
    )
}

HEAT_TRANSFER_CORRELATIONS: dict[str, PackedBedCorrelation] = {
    c.name: c
    for c in (
        PackedBedCorrelation(
            "wakao_kaguei", "heat", nusselt_wakao_kaguei, "superficial", (3.0, 3.0e3),
            None, None,
            "Wakao & Kaguei (1982) Heat and Mass Transfer in Packed Beds",
            "Re range 3-3000 as documented in ht.Nu_Wakao_Kagei; source data are gases "
            "(Pr about 0.7), no Pr range stated.",
        ),
        PackedBedCorrelation(
            "gnielinski", "heat", nusselt_gnielinski, "interstitial", (0.1, 1.0e3),
            (0.4, 1.0e3), (0.26, 0.935),
            "Gnielinski (1982) Verfahrenstechnik 16, 36; VDI Heat Atlas (2010)",
            "Ranges as for the mass form.",
        ),
    )
}


@dataclass(frozen=True)
class FilmCoefficient:
    """A film coefficient with its groups.

    value : k_m [m/s] (kind "mass") or h [W/(m^2 K)] (kind "heat").
    groups : {"reynolds", "schmidt", "sherwood"} or {"reynolds", "prandtl", "nusselt"},
        Re on the superficial velocity.
    diagnostics : tuple of ``Diagnostic`` (CORRELATION_OUT_OF_RANGE, field one of
        "reynolds_number", "schmidt_number", "prandtl_number", "voidage").
    Scalar inputs only (the raw ``sherwood_*``/``nusselt_*`` functions take arrays).
    """

    value: float
    unit: str
    kind: str
    correlation: str
    reference: str
    groups: dict[str, float]
    diagnostics: tuple[Diagnostic, ...] = field(default_factory=tuple)


def _lookup(registry, name):
    try:
        return registry[name]
    except KeyError:
        raise PhysicsInputError(
            "correlation", name, f"unknown correlation; choose one of {', '.join(sorted(registry))}"
        ) from None


def _range_diagnostics(corr: PackedBedCorrelation, reynolds, transport, voidage, transport_name):
    out = []
    re_checked = reynolds / voidage if corr.reynolds_basis == "interstitial" else reynolds
    re_label = "Re/voidage" if corr.reynolds_basis == "interstitial" else "Re"
    transport_field = "schmidt_number" if transport_name == "Sc" else "prandtl_number"
    for label, value, bounds, fld in (
        (re_label, re_checked, corr.reynolds_range, "reynolds_number"),
        (transport_name, transport, corr.transport_range, transport_field),
        ("voidage", voidage, corr.voidage_range, "voidage"),
    ):
        if bounds is not None and not bounds[0] <= value <= bounds[1]:
            out.append(
                Diagnostic(
                    "CORRELATION_OUT_OF_RANGE",
                    FILM_WARNING_CODES["CORRELATION_OUT_OF_RANGE"][0],
                    f"{label} = {value:.4g} lies outside {bounds[0]:g}-{bounds[1]:g}, the range "
                    f"of the {corr.name} correlation; the coefficient is extrapolated.",
                    fld,
                )
            )
    return tuple(out)


def mass_transfer_coefficient(
    superficial_velocity, density, viscosity, molecular_diffusivity, particle_diameter, voidage,
    correlation: str = "wakao_funazkri",
) -> FilmCoefficient:
    """Fluid-to-particle mass transfer coefficient k_m = Sh D_AB / d_p [m/s].

    Parameters
    ----------
    superficial_velocity : u [m/s], > 0.
    density : fluid density rho [kg/m^3], > 0.
    viscosity : dynamic viscosity mu [Pa s], > 0.
    molecular_diffusivity : D_AB of the reactant in the fluid [m^2/s], > 0.
    particle_diameter : d_p [m], > 0 (for non-spheres 6 V_p/S_p, see sizing).
    voidage : bed voidage eps [-], in (0, 1).
    correlation : key of ``MASS_TRANSFER_CORRELATIONS``.

    Examples
    --------
    >>> r = mass_transfer_coefficient(0.5, 1.0, 2e-5, 2e-5, 3e-3, 0.4)
    >>> round(r.groups["sherwood"], 6)
    16.669977
    """
    corr = _lookup(MASS_TRANSFER_CORRELATIONS, correlation)
    u = _positive("superficial_velocity", superficial_velocity)
    rho = _positive("density", density)
    mu = _positive("viscosity", viscosity)
    dab = _positive("molecular_diffusivity", molecular_diffusivity)
    dp = _positive("particle_diameter", particle_diameter)
    eps = _voidage(voidage)
    re = particle_reynolds_number(u, rho, mu, dp)
    sc = schmidt_number(mu, rho, dab)
    sh = float(corr.number(re, sc, eps))
    return FilmCoefficient(
        value=sh * dab / dp, unit="m/s", kind="mass", correlation=corr.name,
        reference=corr.reference,
        groups={"reynolds": re, "schmidt": sc, "sherwood": sh},
        diagnostics=_range_diagnostics(corr, re, sc, eps, "Sc"),
    )


def heat_transfer_coefficient(
    superficial_velocity, density, viscosity, thermal_conductivity, heat_capacity,
    particle_diameter, voidage, correlation: str = "wakao_kaguei",
) -> FilmCoefficient:
    """Fluid-to-particle heat transfer coefficient h = Nu lambda_f / d_p [W/(m^2 K)].

    Parameters as ``mass_transfer_coefficient``, with thermal_conductivity lambda_f
    of the fluid [W/(m K)] and heat_capacity c_p [J/(kg K)] instead of D_AB;
    correlation is a key of ``HEAT_TRANSFER_CORRELATIONS``.
    """
    corr = _lookup(HEAT_TRANSFER_CORRELATIONS, correlation)
    u = _positive("superficial_velocity", superficial_velocity)
    rho = _positive("density", density)
    mu = _positive("viscosity", viscosity)
    lam = _positive("thermal_conductivity", thermal_conductivity)
    cp = _positive("heat_capacity", heat_capacity)
    dp = _positive("particle_diameter", particle_diameter)
    eps = _voidage(voidage)
    re = particle_reynolds_number(u, rho, mu, dp)
    pr = prandtl_number(cp, mu, lam)
    nu = float(corr.number(re, pr, eps))
    return FilmCoefficient(
        value=nu * lam / dp, unit="W/(m^2 K)", kind="heat", correlation=corr.name,
        reference=corr.reference,
        groups={"reynolds": re, "prandtl": pr, "nusselt": nu},
        diagnostics=_range_diagnostics(corr, re, pr, eps, "Pr"),
    )


# --- coupling to the pellet -------------------------------------------------------------


def biot_number_mass(mass_transfer_coefficient, length, effective_diffusivity):
    """Bi_m = k_m L / D_e [-]; k_m [m/s], L [m] (state which length), D_e [m^2/s]."""
    return mass_transfer_coefficient * length / effective_diffusivity


def biot_number_heat(heat_transfer_coefficient, length, effective_thermal_conductivity):
    """Bi_h = h L / lambda_e [-]; h [W/(m^2 K)], L [m], lambda_e [W/(m K)]."""
    return heat_transfer_coefficient * length / effective_thermal_conductivity


def _film_ratio(eta, modulus, biot):
    eta = np.asarray(eta, dtype=float)
    modulus = np.asarray(modulus, dtype=float)
    biot = np.asarray(biot, dtype=float)
    if np.any(~np.isfinite(eta)) or np.any(eta < 0):
        raise PhysicsInputError("effectiveness_factor", eta, "must be finite and >= 0")
    if np.any(~np.isfinite(modulus)) or np.any(modulus < 0):
        raise PhysicsInputError("modulus", modulus, "must be finite and >= 0")
    if np.any(np.isnan(biot)) or np.any(biot <= 0):
        raise PhysicsInputError("biot_number", biot, "must be > 0 (infinity: no film)")
    return eta * modulus * modulus / biot  # biot = inf gives 0


_out = scalar_or_array


def overall_effectiveness_first_order(eta, modulus, biot_number):
    """Overall effectiveness factor (rate over the rate at bulk conditions), first order.

    eta_o = eta / (1 + eta Phi^2 / Bi),

    with Phi = L_c sqrt(k/D_e) and Bi = k_m L_c / D_e BOTH on L_c = V_p/S_p (generalized
    basis). It follows from k_m S_p (c_b - c_s) = eta k c_s V_p for any shape
    (Aris 1975 [5]; Fogler [6]). On the shape's own length L = (m + 1) V_p/S_p use
    ``overall_effectiveness_first_order_shape``.

    Parameters
    ----------
    eta : internal effectiveness factor at surface conditions [-].
    modulus : Thiele modulus on V_p/S_p [-], >= 0.
    biot_number : mass Biot number on V_p/S_p [-], > 0 (inf for no film).
    """
    x = _film_ratio(eta, modulus, biot_number)
    return _out(np.asarray(eta, dtype=float) / (1.0 + x), eta, modulus, biot_number)


def overall_effectiveness_first_order_shape(eta, thiele_modulus, biot_number, shape_exponent):
    """As ``overall_effectiveness_first_order`` with phi and Bi on the shape's own length
    L (sphere and cylinder radius, slab diffusion length) and shape exponent m
    (slab 0, cylinder 1, sphere 2):

    eta_o = eta / (1 + eta phi^2 / ((m + 1) Bi)); sphere: eta / (1 + eta phi^2 / (3 Bi)).
    """
    if shape_exponent not in (0, 1, 2):
        raise PhysicsInputError("shape_exponent", shape_exponent, "must be 0, 1 or 2")
    x = _film_ratio(eta, thiele_modulus, biot_number) / (shape_exponent + 1)
    return _out(np.asarray(eta, dtype=float) / (1.0 + x), eta, thiele_modulus, biot_number)


def external_resistance_fraction(eta, modulus, biot_number):
    """Share of the overall resistance that lies in the film [-], first order:

    f_ext = (eta Phi^2/Bi) / (1 + eta Phi^2/Bi) = 1 - eta_o/eta = 1 - c_s/c_b,

    with Phi and Bi on V_p/S_p (the resistances 1/(k_m a) and 1/(eta k) in series,
    a = S_p/V_p). 0: no film limitation; 1: film controls.
    """
    x = _film_ratio(eta, modulus, biot_number)
    return _out(x / (1.0 + x), eta, modulus, biot_number)
