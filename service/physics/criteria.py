"""Lab-data checks: was an observed rate free of transport limitations?

All rates are observed rates per PELLET volume r_obs [mol/(m^3 s)] (a rate per
catalyst mass times the pellet density, not the bed density), concentrations
[mol/m^3], temperatures [K], heats [J/mol], activation energies [J/mol].

Lengths
-------
* Classic form: the shape's own length L (sphere/cylinder radius R, slab diffusion
  length), as Weisz & Prater, Mears and Anderson wrote their criteria for spheres.
* Generalized form: L_c = V_p/S_p (= R/3 for a sphere); the service's convention.

Weisz-Prater threshold: Weisz & Prater [1] state C_WP = r_obs R^2/(D_e c_s) << 1 means
no pore-diffusion limitation and >> 1 strong limitation for a sphere of radius R; the
boundary value 1 on the radius (Fogler [6], ch. 15) is used. It is carried to any
length by the V_p/S_p equivalence (Aris 1957): threshold 1/9 on V_p/S_p (the sphere's
R/3) and (m + 1)^2/9 on the own length of shape exponent m (common practice,
derived, not a published number). At that boundary the first-order sphere has
eta = 0.935.

Mears [2] (external film, 5 % rate deviation): r_obs R n/(k_m c_b) < 0.15 and
|dH| r_obs R E/(h T_b^2 R_g) < 0.15, R the pellet radius. Anderson [3] (internal heat):
|dH| r_obs R^2/(lambda_e T_s) < 0.75 R_g T_s/E.

References
----------
1. Weisz, P. B., Prater, C. D. (1954). Interpretation of measurements in experimental
   catalysis. Adv. Catal. 6, 143-196.
2. Mears, D. E. (1971). Tests for transport limitations in experimental catalytic
   reactors. Ind. Eng. Chem. Process Des. Dev. 10(4), 541-547.
3. Anderson, J. B. (1963). A criterion for isothermal behaviour of a catalyst pellet.
   Chem. Eng. Sci. 18, 147-148.
4. Levenspiel, O. (1999). Chemical Reaction Engineering, 3rd ed., Wiley, ch. 18.
5. Brent, R. P. (1973). Algorithms for Minimization without Derivatives, ch. 4
   (scipy.optimize.brentq).
6. Fogler, H. S. (2016). Elements of Chemical Reaction Engineering, 5th ed., ch. 15.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np
from scipy import optimize

from .checks import nonnegative_float, positive_float
from .errors import PhysicsInputError

GAS_CONSTANT = 8.314462618  # R_g [J/(mol K)]

SOURCE_WEISZ_PRATER = "Weisz & Prater (1954) Adv. Catal. 6, 143"
SOURCE_MEARS = "Mears (1971) Ind. Eng. Chem. Process Des. Dev. 10, 541"
SOURCE_ANDERSON = "Anderson (1963) Chem. Eng. Sci. 18, 147"


@dataclass(frozen=True)
class Criterion:
    """One check: verdict "pass" when value < threshold, else "fail"."""

    name: str
    value: float
    threshold: float
    verdict: str
    source: str

    def as_dict(self) -> dict:
        return {"name": self.name, "value": self.value, "threshold": self.threshold,
                "verdict": self.verdict, "source": self.source}


def _criterion(name, value, threshold, source) -> Criterion:
    return Criterion(name, float(value), float(threshold),
                     "pass" if value < threshold else "fail", source)


_positive = positive_float
_nonnegative = nonnegative_float


def weisz_prater_modulus(observed_rate, length, effective_diffusivity, surface_concentration):
    """Observable (Weisz-Prater) modulus C_WP = r_obs L^2 / (D_e c_s) [-].

    observed_rate [mol/(m^3 pellet s)], length L [m] (own length or V_p/S_p: say which),
    effective_diffusivity [m^2/s], surface_concentration [mol/m^3]. For first order
    C_WP = eta phi^2 on the same length [1].
    """
    r = _nonnegative("observed_rate", observed_rate)
    return r * _positive("length", length) ** 2 / (
        _positive("effective_diffusivity", effective_diffusivity)
        * _positive("surface_concentration", surface_concentration))


def weisz_prater_criterion(observed_rate, length, effective_diffusivity, surface_concentration,
                           basis: str = "characteristic", shape_exponent: int = 2) -> Criterion:
    """Weisz-Prater check as a ``Criterion``.

    basis "characteristic": length is V_p/S_p, threshold 1/9 (any shape);
    basis "own": length is the shape's own length, threshold (m + 1)^2/9 (1 for the
    sphere radius, Weisz & Prater [1]). shape_exponent m: slab 0, cylinder 1, sphere 2.
    """
    if shape_exponent not in (0, 1, 2):
        raise PhysicsInputError("shape_exponent", shape_exponent, "must be 0, 1 or 2")
    if basis == "characteristic":
        threshold = 1.0 / 9.0
    elif basis == "own":
        threshold = (shape_exponent + 1) ** 2 / 9.0
    else:
        raise PhysicsInputError("basis", basis, "must be 'characteristic' or 'own'")
    value = weisz_prater_modulus(observed_rate, length, effective_diffusivity,
                                 surface_concentration)
    return _criterion(f"weisz_prater_{basis}", value, threshold,
                      SOURCE_WEISZ_PRATER + "; threshold on V_p/S_p by shape equivalence "
                      "(common practice)")


def mears_external_mass(observed_rate, radius, order, mass_transfer_coefficient,
                        bulk_concentration) -> Criterion:
    """Mears external mass-transfer criterion r_obs R n / (k_m c_b) < 0.15 [2].

    radius R [m] (pellet radius; V_p/S_p = R/3 is what the derivation uses: the film
    drop is r_obs (V_p/S_p)/k_m and n times it must stay below 5 %), order n [-] > 0,
    k_m [m/s], c_b [mol/m^3].
    """
    value = (_nonnegative("observed_rate", observed_rate) * _positive("radius", radius)
             * _positive("order", order)
             / (_positive("mass_transfer_coefficient", mass_transfer_coefficient)
                * _positive("bulk_concentration", bulk_concentration)))
    return _criterion("mears_external_mass", value, 0.15, SOURCE_MEARS)


def mears_external_heat(observed_rate, radius, heat_of_reaction, activation_energy,
                        heat_transfer_coefficient, bulk_temperature) -> Criterion:
    """Mears external heat-transfer criterion |dH| r_obs R E / (h T_b^2 R_g) < 0.15 [2].

    heat_of_reaction dH [J/mol] (sign ignored), activation_energy E [J/mol],
    h [W/(m^2 K)], bulk_temperature T_b [K], radius R [m].
    """
    dh = abs(float(heat_of_reaction))
    if not math.isfinite(dh):
        raise PhysicsInputError("heat_of_reaction", heat_of_reaction, "must be finite")
    tb = _positive("bulk_temperature", bulk_temperature)
    value = (dh * _nonnegative("observed_rate", observed_rate) * _positive("radius", radius)
             * _positive("activation_energy", activation_energy)
             / (_positive("heat_transfer_coefficient", heat_transfer_coefficient)
                * tb * tb * GAS_CONSTANT))
    return _criterion("mears_external_heat", value, 0.15, SOURCE_MEARS)


def anderson_internal_heat(observed_rate, radius, heat_of_reaction, activation_energy,
                           effective_thermal_conductivity, surface_temperature) -> Criterion:
    """Anderson internal heat criterion |dH| r_obs R^2/(lambda_e T_s) < 0.75 R_g T_s / E [3].

    The record's value is the left side, its threshold the right side.
    lambda_e [W/(m K)], surface_temperature T_s [K], radius R [m].
    """
    dh = abs(float(heat_of_reaction))
    if not math.isfinite(dh):
        raise PhysicsInputError("heat_of_reaction", heat_of_reaction, "must be finite")
    ts = _positive("surface_temperature", surface_temperature)
    value = (dh * _nonnegative("observed_rate", observed_rate) * _positive("radius", radius) ** 2
             / (_positive("effective_thermal_conductivity", effective_thermal_conductivity) * ts))
    threshold = 0.75 * GAS_CONSTANT * ts / _positive("activation_energy", activation_energy)
    return _criterion("anderson_internal_heat", value, threshold, SOURCE_ANDERSON)


def apparent_activation_energy_strong_diffusion(activation_energy):
    """E_app = E/2 [J/mol] in strong pore diffusion (Weisz & Prater [1]; Levenspiel [4])."""
    return _positive("activation_energy", activation_energy) / 2.0


def apparent_order_strong_diffusion(order):
    """n_app = (n + 1)/2 [-] in strong pore diffusion (Levenspiel [4], ch. 18), n >= 0."""
    return (_nonnegative("order", order) + 1.0) / 2.0


# --- robust inversion of a monotone function -----------------------------------------

INVERSION_STATUS = {
    0: "converged: the target was bracketed and the root found to the tolerance",
    1: "the target is not reached anywhere between the search limits",
    2: "the function returned a non-finite value while searching",
    3: "the root finder did not converge within its iteration limit",
}


@dataclass(frozen=True)
class InversionResult:
    """x with g(x) = target. x is None unless status is 0.

    residual : g(x) - target (None if no x). bracket : (low, high) searched last.
    function_calls : evaluations of g.
    """

    x: float | None
    success: bool
    status: int
    message: str
    residual: float | None
    bracket: tuple[float, float]
    function_calls: int


def invert_monotone(g: Callable[[float], float], target: float, x0: float = 1.0,
                    limits: tuple[float, float] = (1e-30, 1e30), factor: float = 4.0,
                    rtol: float = 1e-13, maxiter: int = 200) -> InversionResult:
    """Solve g(x) = target for x > 0, g monotone (increasing or decreasing).

    Starting from x0 [same unit as x], the bracket grows geometrically (by ``factor``
    per step, both ways) until g - target changes sign or ``limits`` are reached; the
    root is then found by Brent's method [5] in t = ln x, so the tolerance is relative
    in x: |dx|/x <= rtol (default 1e-13). Never raises for a target outside the range
    of g or for non-finite values of g: the status says so (``INVERSION_STATUS``).
    Exceptions raised by g itself propagate.
    """
    lo_lim, hi_lim = float(limits[0]), float(limits[1])
    if not (0 < lo_lim < hi_lim and math.isfinite(hi_lim)):
        raise PhysicsInputError("limits", limits, "need 0 < low < high < inf")
    x0 = min(max(_positive("x0", x0), lo_lim), hi_lim)
    target = float(target)
    if not math.isfinite(target):
        raise PhysicsInputError("target", target, "must be finite")
    if not factor > 1:
        raise PhysicsInputError("factor", factor, "must be > 1")
    calls = 0

    def f(x):
        nonlocal calls
        calls += 1
        return float(g(x)) - target

    def result(status, x=None, residual=None, bracket=(x0, x0)):
        return InversionResult(x, status == 0, status, INVERSION_STATUS[status], residual,
                               bracket, calls)

    f0 = f(x0)
    if not math.isfinite(f0):
        return result(2)
    if f0 == 0:
        return result(0, x0, 0.0)
    a, fa = x0, f0  # lower side
    b, fb = x0, f0  # upper side
    bracket = None
    while bracket is None and (a > lo_lim or b < hi_lim):
        if b < hi_lim:
            b_new = min(b * factor, hi_lim)
            fb_new = f(b_new)
            if not math.isfinite(fb_new):
                return result(2, bracket=(a, b_new))
            if fb_new == 0:
                return result(0, b_new, 0.0, (b, b_new))
            if (fb_new > 0) != (fb > 0):
                bracket = (b, b_new)
            b, fb = b_new, fb_new
        if bracket is None and a > lo_lim:
            a_new = max(a / factor, lo_lim)
            fa_new = f(a_new)
            if not math.isfinite(fa_new):
                return result(2, bracket=(a_new, b))
            if fa_new == 0:
                return result(0, a_new, 0.0, (a_new, a))
            if (fa_new > 0) != (fa > 0):
                bracket = (a_new, a)
            a, fa = a_new, fa_new
    if bracket is None:
        return result(1, bracket=(a, b))

    finite = True

    def f_log(t):
        nonlocal finite
        value = f(math.exp(t))
        if not math.isfinite(value):
            finite = False
            return 0.0  # stops brentq; reported below
        return value

    t_root, info = optimize.brentq(f_log, math.log(bracket[0]), math.log(bracket[1]),
                                   xtol=rtol, rtol=4 * np.finfo(float).eps, maxiter=maxiter,
                                   full_output=True, disp=False)
    if not finite:
        return result(2, bracket=bracket)
    if not info.converged:
        return result(3, bracket=bracket)
    x = math.exp(t_root)
    return result(0, x, f(x), bracket)


# --- first-order inference from an observed rate -------------------------------------


@dataclass(frozen=True)
class FirstOrderInference:
    """Intrinsic first-order rate constant inferred from an observed rate.

    rate_constant k [1/s] (per pellet volume), effectiveness_factor eta [-],
    thiele_modulus phi on the length given [-]; None when status != 0
    (status and message as ``INVERSION_STATUS``).
    """

    rate_constant: float | None
    effectiveness_factor: float | None
    thiele_modulus: float | None
    success: bool
    status: int
    message: str


def intrinsic_rate_constant_first_order(observed_rate, length, effective_diffusivity,
                                        surface_concentration,
                                        shape_exponent: int) -> FirstOrderInference:
    """Solve eta(phi) phi^2 = C_WP for phi (Weisz & Prater [1]), then k = phi^2 D_e/L^2.

    length L [m] is the shape's own length (sphere/cylinder radius, slab diffusion
    length) for shape exponent m = 2, 1, 0; isothermal first order, no film.
    eta(phi) phi^2 increases monotonically from 0, so any C_WP > 0 has one solution.
    """
    from .closed_form import effectiveness_first_order

    c_wp = weisz_prater_modulus(observed_rate, length, effective_diffusivity,
                                surface_concentration)
    if shape_exponent not in (0, 1, 2):
        raise PhysicsInputError("shape_exponent", shape_exponent, "must be 0, 1 or 2")
    if c_wp == 0:
        return FirstOrderInference(0.0, 1.0, 0.0, True, 0, INVERSION_STATUS[0])
    inv = invert_monotone(lambda p: effectiveness_first_order(p, shape_exponent) * p * p, c_wp,
                          x0=max(math.sqrt(c_wp), 1e-12), limits=(1e-150, 1e150))
    if not inv.success:
        return FirstOrderInference(None, None, None, False, inv.status, inv.message)
    phi = inv.x
    k = phi * phi * float(effective_diffusivity) / float(length) ** 2
    return FirstOrderInference(k, c_wp / (phi * phi), phi, True, 0, inv.message)
