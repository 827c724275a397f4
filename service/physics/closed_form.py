"""Analytic effectiveness factors and concentration profiles, first-order isothermal kinetics.

The reaction-diffusion problem in dimensionless form, with xi = r/L the position
[-], u = c/c_s the concentration [-], phi = L*sqrt(k/D_e) the Thiele modulus on the
shape's own length L [-] and m the shape exponent (slab 0, infinite cylinder 1, sphere 2):

    u'' + (m/xi) u' = phi**2 u,   u'(0) = 0,   u(1) = 1,

    eta = (m + 1) u'(1) / phi**2.

Every function here holds full double precision for 1e-8 <= phi <= 1e8 (and beyond):
power series near zero where the textbook form cancels, exponentially scaled
Bessel functions and hyperbolics rearranged in exp(-2*phi) for large moduli, so
nothing overflows and no numpy warning is raised.

References
----------
1. Thiele, E. W. (1939). Relation between catalytic activity and size of particle.
   Ind. Eng. Chem. 31(7), 916-920.
2. Aris, R. (1975). The Mathematical Theory of Diffusion and Reaction in Permeable
   Catalysts, Vol. 1. Clarendon Press, Oxford. Ch. 3.
3. Fogler, H. S. (2016). Elements of Chemical Reaction Engineering, 5th ed.,
   Prentice Hall, Ch. 15 (sphere: eq. 15-32 and 15-34).
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
from scipy import special

from .errors import PhysicsInputError

_SERIES_LIMIT = 1.0  # below this modulus the sphere uses its power series


def _bernoulli_even(count: int) -> list[Fraction]:
    """B_0, B_2, ..., B_{2(count-1)} as exact fractions (Akiyama-Tanigawa algorithm)."""
    size = 2 * count
    row = [Fraction(0)] * size
    numbers = []
    for m in range(size):
        row[m] = Fraction(1, m + 1)
        for j in range(m, 0, -1):
            row[j - 1] = j * (row[j - 1] - row[j])
        numbers.append(row[0])
    numbers[1] = -numbers[1]  # sign convention irrelevant: only even indices are used
    return [numbers[2 * n] for n in range(count)]


def _sphere_series_coefficients(count: int = 24) -> np.ndarray:
    """Coefficients a_j of eta_sphere = sum_j a_j phi^(2j).

    From phi*coth(phi) = sum_n 2^(2n) B_2n phi^(2n) / (2n)!, so
    eta = 3 (phi coth phi - 1)/phi^2 = 3 sum_{n>=1} 2^(2n) B_2n phi^(2n-2) / (2n)!.
    """
    bern = _bernoulli_even(count + 1)
    coeffs = []
    factorial = Fraction(1)
    for n in range(1, count + 1):
        factorial = Fraction(1)
        for i in range(2, 2 * n + 1):
            factorial *= i
        coeffs.append(float(3 * Fraction(2) ** (2 * n) * bern[n] / factorial))
    return np.array(coeffs)


_SPHERE_COEFFS = _sphere_series_coefficients()
_SPHERE_COEFFS_REVERSED = [float(a) for a in _SPHERE_COEFFS[::-1]]


def _scalar_modulus(phi) -> float | None:
    """phi as a Python float when it is a finite scalar >= 0, else None (array path).

    The scalar paths below do the same IEEE operations as the array paths (Python
    float + - * / and the same numpy/scipy functions), so both give identical bits;
    they only skip numpy's per-call overhead (about 50 us for the sphere series).
    """
    if type(phi) is float or type(phi) is int:
        x = float(phi)
        if math.isfinite(x) and x >= 0:
            return x
    return None


def _as_modulus(phi) -> np.ndarray:
    arr = np.asarray(phi, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise PhysicsInputError("thiele_modulus", phi, "must be finite and >= 0")
    return arr


def _scalar_or_array(result: np.ndarray, template):
    return float(result) if np.ndim(template) == 0 else result


def effectiveness_first_order_slab(phi):
    """Effectiveness factor of a slab, first order: eta = tanh(phi)/phi.

    Parameters
    ----------
    phi : float or ndarray
        Thiele modulus on the diffusion length (half thickness when both faces
        are exposed) [-], phi >= 0.

    Returns
    -------
    eta : float or ndarray [-]

    Notes
    -----
    tanh is accurate to the last bit for every argument; phi = 0 returns 1.

    Examples
    --------
    >>> round(effectiveness_first_order_slab(1.0), 12)
    0.761594155956

    References: Thiele (1939), eq. for the flat plate; Aris (1975) eq. 3.10.
    """
    x = _scalar_modulus(phi)
    if x is not None:
        return float(np.tanh(x)) / x if x > 0 else 1.0
    x = _as_modulus(phi)
    with np.errstate(invalid="ignore", divide="ignore"):
        eta = np.where(x > 0, np.tanh(x) / np.where(x > 0, x, 1.0), 1.0)
    return _scalar_or_array(eta, phi)


def effectiveness_first_order_cylinder(phi):
    """Effectiveness factor of an infinite cylinder, first order.

    eta = 2 I1(phi) / (phi I0(phi)), evaluated as 2 i1e(phi) / (phi i0e(phi))
    with the exponentially scaled modified Bessel functions, so it neither
    overflows at large phi nor loses digits at small phi.

    Parameters
    ----------
    phi : float or ndarray
        Thiele modulus on the cylinder radius [-], phi >= 0.

    Returns
    -------
    eta : float or ndarray [-]

    Examples
    --------
    >>> round(effectiveness_first_order_cylinder(1.0), 12)
    0.892779931793

    References: Aris (1975) eq. 3.14; Carberry, Chemical and Catalytic Reaction
    Engineering (1976), Table 9.1.
    """
    x = _scalar_modulus(phi)
    if x is not None:
        return 2.0 * float(special.i1e(x)) / (x * float(special.i0e(x))) if x > 0 else 1.0
    x = _as_modulus(phi)
    safe = np.where(x > 0, x, 1.0)
    eta = np.where(x > 0, 2.0 * special.i1e(safe) / (safe * special.i0e(safe)), 1.0)
    return _scalar_or_array(eta, phi)


def effectiveness_first_order_sphere(phi):
    """Effectiveness factor of a sphere, first order.

    eta = (3/phi^2) (phi coth(phi) - 1).

    Below phi = 1 the power series 1 - phi^2/15 + 2 phi^4/315 - ... (24 terms,
    exact rational coefficients from the Bernoulli numbers) replaces the
    cancelling difference; above it coth is written as
    (1 + e^(-2 phi)) / (1 - e^(-2 phi)) with expm1, which never overflows.

    Parameters
    ----------
    phi : float or ndarray
        Thiele modulus on the sphere radius [-], phi >= 0.

    Returns
    -------
    eta : float or ndarray [-]

    Examples
    --------
    >>> round(effectiveness_first_order_sphere(1.0), 12)
    0.939105856498

    References: Thiele (1939); Fogler (2016) eq. 15-32.
    """
    x = _scalar_modulus(phi)
    if x is not None:
        if x < _SERIES_LIMIT:
            x2, series = x * x, 0.0
            for a in _SPHERE_COEFFS_REVERSED:
                series = series * x2 + a
            return series
        e2 = float(np.exp(-2.0 * x))
        coth = (1.0 + e2) / (-float(np.expm1(-2.0 * x)))
        return 3.0 * (coth - 1.0 / x) / x
    x = _as_modulus(phi)
    small = x < _SERIES_LIMIT
    x2 = np.where(small, x, 0.0) ** 2
    series = np.zeros_like(x2)
    for a in _SPHERE_COEFFS[::-1]:
        series = series * x2 + a
    big = np.where(small, _SERIES_LIMIT, x)
    e2 = np.exp(-2.0 * big)
    coth = (1.0 + e2) / (-np.expm1(-2.0 * big))
    direct = 3.0 * (coth - 1.0 / big) / big
    eta = np.where(small, series, direct)
    return _scalar_or_array(eta, phi)


def profile_first_order_slab(xi, phi):
    """Concentration profile c/c_s in a slab: cosh(phi xi)/cosh(phi).

    Written as exp(phi (xi - 1)) (1 + e^(-2 phi xi)) / (1 + e^(-2 phi)), which
    cannot overflow. xi = distance from the centre plane / diffusion length [-].
    """
    xi, x = _profile_args(xi, phi)
    return np.exp(x * (xi - 1.0)) * (1.0 + np.exp(-2.0 * x * xi)) / (1.0 + np.exp(-2.0 * x))


def profile_first_order_cylinder(xi, phi):
    """Concentration profile c/c_s in an infinite cylinder: I0(phi xi)/I0(phi).

    Evaluated as i0e(phi xi)/i0e(phi) exp(phi (xi - 1)). xi = r/R [-].
    """
    xi, x = _profile_args(xi, phi)
    return special.i0e(x * xi) / special.i0e(x) * np.exp(x * (xi - 1.0))


def profile_first_order_sphere(xi, phi):
    """Concentration profile c/c_s in a sphere: sinh(phi xi) / (xi sinh(phi)).

    Evaluated as exp(phi (xi - 1)) (1 - e^(-2 phi xi)) / (xi (1 - e^(-2 phi)))
    with expm1; at the centre the limit phi / sinh(phi). xi = r/R [-].
    """
    xi, x = _profile_args(xi, phi)
    if x == 0.0:
        return np.ones_like(xi)
    denominator = -np.expm1(-2.0 * x)
    safe_xi = np.where(xi > 0, xi, 1.0)
    # sinh(t)/t for small t keeps its digits through expm1: (1 - e^(-2t)) / t
    inner = np.where(xi > 0, -np.expm1(-2.0 * x * safe_xi) / safe_xi, 2.0 * x)
    return np.exp(x * (xi - 1.0)) * inner / denominator


def _profile_args(xi, phi):
    xi = np.asarray(xi, dtype=float)
    if np.any((xi < 0) | (xi > 1)) or not np.all(np.isfinite(xi)):
        raise PhysicsInputError("position", xi, "must lie in [0, 1]")
    x = float(_as_modulus(phi))
    return xi, x


FIRST_ORDER_EFFECTIVENESS = {
    0: effectiveness_first_order_slab,
    1: effectiveness_first_order_cylinder,
    2: effectiveness_first_order_sphere,
}

FIRST_ORDER_PROFILE = {
    0: profile_first_order_slab,
    1: profile_first_order_cylinder,
    2: profile_first_order_sphere,
}


def effectiveness_first_order(phi, shape_exponent: int):
    """eta(phi) for shape exponent 0 (slab), 1 (cylinder) or 2 (sphere)."""
    try:
        return FIRST_ORDER_EFFECTIVENESS[shape_exponent](phi)
    except KeyError:
        raise PhysicsInputError("shape_exponent", shape_exponent, "must be 0, 1 or 2") from None


def profile_first_order(xi, phi, shape_exponent: int):
    """c/c_s at positions xi [-] for shape exponent 0, 1 or 2."""
    try:
        return FIRST_ORDER_PROFILE[shape_exponent](xi, phi)
    except KeyError:
        raise PhysicsInputError("shape_exponent", shape_exponent, "must be 0, 1 or 2") from None


def thiele_modulus(length, rate_constant, effective_diffusivity):
    """Thiele modulus phi = L sqrt(k / D_e) [-] for a first-order rate constant k [1/s],
    a length L [m] and an effective diffusivity D_e [m^2/s]."""
    return np.asarray(length) * np.sqrt(np.asarray(rate_constant) / np.asarray(effective_diffusivity))
