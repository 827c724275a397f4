"""Rate laws: the registry, their dimensionless form and the generalized modulus.

Every rate law is a rate per pellet volume r(c) [mol/(m^3 s)] of the reactant
concentration c [mol/m^3] with SI constants (the web layer converts per-mass
constants with the pellet density before calling). Each one knows

    rate(c), derivative(c) = dr/dc, integral(c_low, c_high) = int r dc (analytic),
    equilibrium_concentration (0 when irreversible), rate_constant_unit().

Dimensionless form used by the solvers (``service.physics.bvp``)
----------------------------------------------------------------
u = c / c_s (c_s the surface concentration, or the bulk one with a film),
f(u) = r(c_s u) / r(c_s) so that f(1) = 1, and the Thiele modulus on the
shape's own length L

    phi^2 = L^2 r(c_s) / (D_e c_s),       u'' + (m/xi) u' = phi^2 f(u).

For first order this is phi = L sqrt(k/D_e).

Generalized modulus (Aris 1965, Bischoff 1965)
----------------------------------------------
    Phi = (V_p/S_p) r(c_s) / sqrt(2 D_e int_{c_eq}^{c_s} r(c) dc)

so that eta -> 1/Phi at large modulus for every shape and rate law; for the
three ideal shapes V_p/S_p = L/(m+1) and Phi = phi / ((m+1) sqrt(2 int_{u_eq}^1 f du)).

Temperature
-----------
``ArrheniusRate`` wraps a rate law whose constant is given at T_s:
k(T) = k_s exp(gamma (1 - T_s/T)), gamma = E/(R T_s).

References
----------
1. Bischoff, K. B. (1965). Effectiveness factors for general reaction rate
   forms. AIChE J. 11(2), 351-355.
2. Aris, R. (1965). A normalization for the Thiele modulus. Ind. Eng. Chem.
   Fundam. 4(2), 227-229.
3. Froment, G. F., Bischoff, K. B. (1990). Chemical Reactor Analysis and Design,
   2nd ed., Wiley, Ch. 3 (Langmuir-Hinshelwood rate forms).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

from .errors import PhysicsInputError


def _check(name: str, value, low: float = 0.0, inclusive: bool = True) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise PhysicsInputError(name, value, "must be a number") from None
    if not math.isfinite(x) or (x < low if inclusive else x <= low):
        raise PhysicsInputError(name, value, f"must be finite and {'>=' if inclusive else '>'} {low:g}")
    return x


def _power(base: str, exponent: float) -> str:
    if exponent == 1:
        return base
    return f"{base}^{exponent:g}"


def power_law_rate_constant_unit(order: float) -> str:
    """SI unit of k in r = k c^n: (mol/m^3)^(1-n)/s, as a string pint can parse.

    >>> power_law_rate_constant_unit(2), power_law_rate_constant_unit(0)
    ('m^3/(mol*s)', 'mol/(m^3*s)')
    >>> power_law_rate_constant_unit(0.5)
    'mol^0.5/(m^1.5*s)'
    """
    e = 1.0 - float(order)  # exponent of mol; the exponent of m is -3 e
    if e == 0:
        return "1/s"
    if e > 0:
        return f"{_power('mol', e)}/({_power('m', 3 * e)}*s)"
    return f"{_power('m', -3 * e)}/({_power('mol', -e)}*s)"


@dataclass(frozen=True)
class PowerLaw:
    """r = k c^n, n >= 0; k [(mol/m^3)^(1-n)/s]. Irreversible (c_eq = 0)."""

    rate_constant: float
    order: float
    equilibrium_concentration: float = 0.0

    def rate(self, c):
        c = np.maximum(c, 0.0)
        return self.rate_constant * (np.ones_like(c) if self.order == 0 else c**self.order)

    def derivative(self, c):
        """dr/dc; 0 below c = 0 where the rate is held at 0 (consistent with ``rate``)."""
        n = self.order
        c = np.asarray(c, dtype=float)
        if n == 0:
            return np.zeros_like(c)
        cp = np.maximum(c, 0.0)
        if n < 1:
            with np.errstate(divide="ignore"):
                return np.where(c > 0, self.rate_constant * n * cp ** (n - 1), np.where(c == 0, np.inf, 0.0))
        return np.where(c >= 0, self.rate_constant * n * cp ** (n - 1), 0.0)

    def integral(self, c_low, c_high):
        n = self.order
        lo, hi = np.maximum(c_low, 0.0), np.maximum(c_high, 0.0)
        return self.rate_constant * (hi ** (n + 1) - lo ** (n + 1)) / (n + 1)

    def rate_constant_unit(self) -> str:
        return power_law_rate_constant_unit(self.order)


@dataclass(frozen=True)
class LangmuirHinshelwood:
    """r = k c / (1 + K c)^m, m = 1 or 2; k [1/s], K [m^3/mol]. Irreversible."""

    rate_constant: float
    adsorption_constant: float
    exponent: int = 1
    equilibrium_concentration: float = 0.0

    def rate(self, c):
        c = np.maximum(c, 0.0)
        return self.rate_constant * c / (1.0 + self.adsorption_constant * c) ** self.exponent

    def derivative(self, c):
        """dr/dc; 0 below c = 0 where the rate is held at 0 (consistent with ``rate``)."""
        c = np.asarray(c, dtype=float)
        cp = np.maximum(c, 0.0)
        K, m = self.adsorption_constant, self.exponent
        return np.where(c >= 0, self.rate_constant * (1.0 + K * cp - m * K * cp) / (1.0 + K * cp) ** (m + 1), 0.0)

    def integral(self, c_low, c_high):
        k, K = self.rate_constant, self.adsorption_constant

        def antiderivative(c):
            c = np.maximum(c, 0.0)
            if K == 0:
                return 0.5 * k * c * c
            x = K * c
            if self.exponent == 1:  # int c/(1+Kc) dc = (Kc - ln(1+Kc))/K^2
                return k * (x - np.log1p(x)) / K**2
            return k * (np.log1p(x) - x / (1.0 + x)) / K**2  # int c/(1+Kc)^2 dc

        return antiderivative(c_high) - antiderivative(c_low)

    def rate_constant_unit(self) -> str:
        return "1/s"


@dataclass(frozen=True)
class ReversibleFirstOrder:
    """r = k (c - c_eq); k [1/s], c_eq [mol/m^3]."""

    rate_constant: float
    equilibrium_concentration: float

    def rate(self, c):
        return self.rate_constant * (np.asarray(c, dtype=float) - self.equilibrium_concentration)

    def derivative(self, c):
        return self.rate_constant * np.ones_like(np.asarray(c, dtype=float))

    def integral(self, c_low, c_high):
        ce = self.equilibrium_concentration
        return 0.5 * self.rate_constant * ((np.asarray(c_high) - ce) ** 2 - (np.asarray(c_low) - ce) ** 2)

    def rate_constant_unit(self) -> str:
        return "1/s"


def _build_power_law(rate_constant, order):
    return PowerLaw(_check("rate_constant", rate_constant, 0.0, False), _check("order", order))


def _build_langmuir_hinshelwood(rate_constant, adsorption_constant, exponent=1):
    if exponent not in (1, 2):
        raise PhysicsInputError("exponent", exponent, "must be 1 or 2")
    return LangmuirHinshelwood(
        _check("rate_constant", rate_constant, 0.0, False),
        _check("adsorption_constant", adsorption_constant),
        int(exponent),
    )


def _build_reversible(rate_constant, equilibrium_concentration):
    return ReversibleFirstOrder(
        _check("rate_constant", rate_constant, 0.0, False),
        _check("equilibrium_concentration", equilibrium_concentration),
    )


@dataclass(frozen=True)
class RateLawSpec:
    """One registry entry: parameter names, builder, unit of the rate constant."""

    name: str
    description: str
    fields: tuple[str, ...]
    build: Callable[..., object]
    rate_constant_unit: Callable[..., str]
    optional: tuple[str, ...] = ()


RATE_LAWS: dict[str, RateLawSpec] = {
    spec.name: spec
    for spec in (
        RateLawSpec(
            "power_law",
            "r = k c^n, order n >= 0 (dead zone near the centre for n < 1).",
            ("rate_constant", "order"),
            _build_power_law,
            lambda order=1.0, **_: power_law_rate_constant_unit(order),
        ),
        RateLawSpec(
            "langmuir_hinshelwood",
            "r = k c / (1 + K c)^m, m = 1 or 2; k [1/s], K [m^3/mol].",
            ("rate_constant", "adsorption_constant"),
            _build_langmuir_hinshelwood,
            lambda **_: "1/s",
            optional=("exponent",),
        ),
        RateLawSpec(
            "reversible_first_order",
            "r = k (c - c_eq); k [1/s], c_eq the equilibrium concentration [mol/m^3].",
            ("rate_constant", "equilibrium_concentration"),
            _build_reversible,
            lambda **_: "1/s",
        ),
    )
}


def build_rate_law(model: str, **parameters):
    """Build a registered rate law from its SI parameters."""
    try:
        spec = RATE_LAWS[model]
    except KeyError:
        raise PhysicsInputError("model", model, f"unknown rate law; choose one of {', '.join(sorted(RATE_LAWS))}") from None
    return spec.build(**parameters)


@dataclass(frozen=True)
class NormalizedRate:
    """Dimensionless kinetics f(u) = r(c_s u)/r(c_s), u = c/c_s.

    Attributes: rate_law, surface_concentration [mol/m^3], u_eq = c_eq/c_s [-],
    surface_rate r(c_s) [mol/(m^3 s)].
    """

    rate_law: object
    surface_concentration: float
    surface_rate: float
    u_eq: float

    def f(self, u):
        return self.rate_law.rate(self.surface_concentration * np.asarray(u, dtype=float)) / self.surface_rate

    def dfdu(self, u):
        c_s = self.surface_concentration
        return self.rate_law.derivative(c_s * np.asarray(u, dtype=float)) * c_s / self.surface_rate

    def integral(self, u_low=None, u_high=1.0) -> float:
        """int_{u_low}^{u_high} f du [-] (u_low defaults to u_eq)."""
        lo = self.u_eq if u_low is None else u_low
        c_s = self.surface_concentration
        return float(self.rate_law.integral(c_s * lo, c_s * u_high)) / (c_s * self.surface_rate)

    def linear_coefficient(self) -> float | None:
        """lim_{u -> u_eq} f(u)/(u - u_eq) [-], or None when f is not linear there
        (power law n != 1): used to start shooting in the linear region."""
        law = self.rate_law
        if isinstance(law, PowerLaw):
            return float(self.dfdu(0.0)) if law.order == 1 else None
        return float(self.dfdu(self.u_eq))

    def is_monotone(self) -> bool:
        """True when f is non-decreasing on [u_eq, 1] (then the isothermal
        steady state is unique: comparison principle)."""
        law = self.rate_law
        if isinstance(law, LangmuirHinshelwood) and law.exponent == 2:
            return law.adsorption_constant * self.surface_concentration <= 1.0
        return True


def normalized_rate(rate_law, surface_concentration) -> NormalizedRate:
    """Dimensionless form of ``rate_law`` about the surface concentration [mol/m^3]."""
    c_s = _check("surface_concentration", surface_concentration, 0.0, False)
    ce = float(rate_law.equilibrium_concentration)
    if c_s <= ce:
        raise PhysicsInputError("surface_concentration", surface_concentration,
                                f"must exceed the equilibrium concentration {ce:g} mol/m^3")
    r_s = float(rate_law.rate(c_s))
    if not r_s > 0:
        raise PhysicsInputError("surface_concentration", surface_concentration, "gives no reaction rate")
    return NormalizedRate(rate_law, c_s, r_s, ce / c_s)


def thiele_modulus_squared(length, rate_law, surface_concentration, effective_diffusivity) -> float:
    """phi^2 = L^2 r(c_s) / (D_e c_s) [-]; L [m], c_s [mol/m^3], D_e [m^2/s]."""
    L = _check("length", length, 0.0, False)
    De = _check("effective_diffusivity", effective_diffusivity, 0.0, False)
    c_s = _check("surface_concentration", surface_concentration, 0.0, False)
    return L * L * float(rate_law.rate(c_s)) / (De * c_s)


def generalized_modulus(characteristic_length, rate_law, surface_concentration, effective_diffusivity) -> float:
    """Generalized modulus Phi = (V_p/S_p) r(c_s) / sqrt(2 D_e int_{c_eq}^{c_s} r dc) [-].

    Parameters
    ----------
    characteristic_length : V_p/S_p [m], > 0.
    rate_law : a registered rate law (SI constants).
    surface_concentration : c_s [mol/m^3], > c_eq.
    effective_diffusivity : D_e [m^2/s], > 0.

    For first order it reduces to (V_p/S_p) sqrt(k/D_e); eta -> 1/Phi as Phi -> inf
    for every shape and rate law with a positive rate above c_eq (refs 1, 2).

    >>> round(generalized_modulus(1e-3, PowerLaw(4.0, 1), 10.0, 1e-6), 12)
    2.0
    """
    Lc = _check("characteristic_length", characteristic_length, 0.0, False)
    De = _check("effective_diffusivity", effective_diffusivity, 0.0, False)
    norm = normalized_rate(rate_law, surface_concentration)
    integral = float(rate_law.integral(rate_law.equilibrium_concentration, norm.surface_concentration))
    return Lc * norm.surface_rate / math.sqrt(2.0 * De * integral)


def generalized_from_thiele(phi: float, shape_exponent: int, norm: NormalizedRate) -> float:
    """Phi = phi / ((m+1) sqrt(2 int_{u_eq}^1 f du)) for the ideal shapes [-]."""
    return phi / ((shape_exponent + 1) * math.sqrt(2.0 * norm.integral()))


@dataclass(frozen=True)
class ArrheniusRate:
    """Rate law whose constant follows k(T) = k_s exp(gamma (1 - T_s/T)).

    base : rate law with its constant at the reference temperature T_s [K];
    arrhenius_number : gamma = E/(R T_s) [-].
    """

    base: object
    reference_temperature: float
    arrhenius_number: float

    @property
    def equilibrium_concentration(self) -> float:
        return self.base.equilibrium_concentration

    def temperature_factor(self, T):
        return np.exp(self.arrhenius_number * (1.0 - self.reference_temperature / np.asarray(T, dtype=float)))

    def rate(self, c, T):
        return self.base.rate(c) * self.temperature_factor(T)

    def derivative(self, c, T):
        return self.base.derivative(c) * self.temperature_factor(T)

    def rate_constant_unit(self) -> str:
        return self.base.rate_constant_unit()
