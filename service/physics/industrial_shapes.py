"""Industrial pellet shapes: rings, finite cylinders, lobed extrudates, custom pellets.

Geometry (volume, external area, V_p/S_p, diffusion length) of every shape and the
first-order isothermal effectiveness factor where an analytic form or a converged
series exists. The 2-D numerical solutions (lobed cross-sections, finite (r, z)
cylinders, any rate law) live in ``cross_section``.

Moduli reported (a = sqrt(k/D_e) [1/m] throughout)
-------------------------------------------------
* ``thiele_modulus`` phi = a * L on the shape's ``diffusion_length`` L:
  hollow cylinder: wall half-thickness (R_o - R_i)/2; cylinder (finite or not):
  radius R; extrudate: 2 A/P of the cross-section (equals R for a circle).
* ``generalized_modulus`` Phi = a * V_p/S_p (Aris 1957) for every shape.
  For first order eta -> 1/Phi at large Phi for every shape.

Finite length, first order (any cross-section X times [-H/2, H/2], all faces reacting)
--------------------------------------------------------------------------------
Expanding u = c/c_s in cos(beta_n z), beta_n = (2n+1) pi / H, and using
sum_n g_n a^2/(a^2 + beta_n^2) = 1 - tanh(aH/2)/(aH/2) with g_n = 8/((2n+1)^2 pi^2):

    eta = tanh(aH/2)/(aH/2) + sum_{n>=0} g_n a^2/b_n^2 eta_X(b_n),  b_n^2 = a^2 + beta_n^2,

where eta_X(b) is the first-order effectiveness of the infinitely long
cross-section at a = b. Terms fall like n^-5; 128 are summed directly and the
tail by the midpoint Euler-Maclaurin formula (integral on Gauss-Legendre panels
in log n plus the f' and f''' corrections), which leaves ~1e-13 relative.

References
----------
1. Aris, R. (1957). On shape factors for irregular particles - I. Chem. Eng. Sci. 6, 262-268.
2. Aris, R. (1975). The Mathematical Theory of Diffusion and Reaction in Permeable
   Catalysts, Vol. 1. Clarendon Press, Oxford. Ch. 3 (finite cylinder, ring).
3. Gunn, D. J. (1967). Diffusion and chemical reaction in catalysis and absorption.
   Chem. Eng. Sci. 22, 1439-1455 (finite cylinder series).
4. Abramowitz, M., Stegun, I. A. (1964). Handbook of Mathematical Functions, 9.6.10,
   9.6.13 (I0 and K0 series); Euler-Maclaurin formula 23.1.30.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
from scipy import interpolate, special

from .closed_form import effectiveness_first_order_cylinder, effectiveness_first_order_slab
from .cross_section import solve_cross_section
from .checks import positive_array, scalar_or_array
from .errors import PhysicsInputError
from .geometry import PelletGeometry

__all__ = [
    "hollow_cylinder_geometry",
    "finite_cylinder_geometry",
    "extrudate_geometry",
    "extrudate_cross_section",
    "custom_geometry",
    "effectiveness_first_order_hollow_cylinder",
    "effectiveness_first_order_finite_cylinder",
    "effectiveness_first_order_finite_length",
    "effectiveness_first_order_extrudate",
    "effectiveness_generalized_modulus_estimate",
    "GENERALIZED_MODULUS_ERROR_BAND",
    "GENERALIZED_MODULUS_BAND_RANGE",
    "FirstOrderShapeResult",
    "effectiveness_first_order_pellet",
]


# --------------------------------------------------------------------------- inputs
_positive = positive_array


def _modulus(name, value) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise PhysicsInputError(name, value, "must be finite and >= 0")
    return arr


_out = scalar_or_array


# --------------------------------------------------------------------------- geometry
def hollow_cylinder_geometry(outer_radius, inner_radius, length=None) -> PelletGeometry:
    """Ring (hollow cylinder), both curved faces permeable; end faces too when ``length`` is given.

    diffusion_length = (R_o - R_i)/2 (wall half-thickness) [m].
    Infinite: V_p/S_p = pi (R_o^2 - R_i^2) / (2 pi (R_o + R_i)) = (R_o - R_i)/2.
    Length H: V = pi (R_o^2 - R_i^2) H, S = 2 pi (R_o + R_i) H + 2 pi (R_o^2 - R_i^2).

    Parameters: outer_radius R_o [m], inner_radius R_i [m] (0 < R_i < R_o), length H [m] or None.
    """
    ro = _positive("outer_radius", outer_radius)
    ri = _positive("inner_radius", inner_radius)
    if np.any(ri >= ro):
        raise PhysicsInputError("inner_radius", inner_radius, "must be smaller than outer_radius")
    half_wall = (ro - ri) / 2.0
    if length is None:
        return PelletGeometry("hollow_cylinder", None, _out(half_wall, outer_radius),
                              _out(half_wall, outer_radius))
    h = _positive("length", length)
    volume = np.pi * (ro**2 - ri**2) * h
    area = 2.0 * np.pi * (ro + ri) * h + 2.0 * np.pi * (ro**2 - ri**2)
    t = outer_radius
    return PelletGeometry("hollow_cylinder", None, _out(half_wall, t), _out(volume / area, t),
                          _out(volume, t), _out(area, t))


def finite_cylinder_geometry(radius, length) -> PelletGeometry:
    """Cylinder of radius R and length H [m] with reacting end faces.

    diffusion_length = R; V = pi R^2 H; S = 2 pi R H + 2 pi R^2; V_p/S_p = R H / (2 (R + H)).
    """
    r = _positive("radius", radius)
    h = _positive("length", length)
    volume = np.pi * r**2 * h
    area = 2.0 * np.pi * r * h + 2.0 * np.pi * r**2
    return PelletGeometry("cylinder", None, _out(r, radius), _out(volume / area, radius),
                          _out(volume, radius), _out(area, radius))


def extrudate_cross_section(lobes: int, lobe_diameter: float) -> dict:
    """Exact area and perimeter of the lobed cross-section (the standard used here).

    Definition: ``lobes`` (n = 3 or 4) circles of diameter d whose centres sit on a
    circle of radius d/2 around the pellet axis, at angles 2 pi k / n. Every lobe
    passes through the axis, adjacent lobes overlap, the centre is filled and the
    section is star-shaped about the axis with boundary radius
    R(theta) = d * max_k cos(theta - 2 pi k / n) (polar equation of a circle through
    the origin). Adjacent outer arcs meet in a re-entrant corner at radius
    d cos(pi/n) on the bisector theta = pi/n (+ 2 pi k/n).

    Each lobe contributes the arc |theta - theta_k| <= pi/n of the polar circle,
    i.e. the central angle 4 pi/n of its own circle (seen from its centre):
        P = n * (d/2) * (4 pi / n) = 2 pi d,
        A = n * (1/2) int_{-pi/n}^{pi/n} d^2 cos^2 t dt = n d^2/2 (pi/n + sin(2 pi/n)/2)
          = d^2 (pi/2 + n sin(2 pi / n)/4).
    Trilobe: A = d^2 (pi/2 + 3 sqrt(3)/8); quadrilobe: A = d^2 (pi/2 + 1).

    Returns dict: area [m^2], perimeter [m], equivalent_radius 2A/P [m],
    circumscribed_radius d [m], corner_radius d cos(pi/n) [m].
    """
    if lobes not in (3, 4):
        raise PhysicsInputError("lobes", lobes, "must be 3 or 4")
    d = _positive("lobe_diameter", lobe_diameter)
    area = d**2 * (np.pi / 2.0 + lobes * np.sin(2.0 * np.pi / lobes) / 4.0)
    perimeter = 2.0 * np.pi * d
    return {"area": area, "perimeter": perimeter, "equivalent_radius": 2.0 * area / perimeter,
            "circumscribed_radius": d, "corner_radius": d * np.cos(np.pi / lobes)}


def extrudate_geometry(lobes, lobe_diameter, length=None) -> PelletGeometry:
    """Lobed extrudate (see ``extrudate_cross_section`` for the section).

    diffusion_length = 2 A/P (the radius of the circle with the same A/P);
    infinite: V_p/S_p = A/P; length H: V = A H, S = P H + 2 A.
    """
    xs = extrudate_cross_section(lobes, lobe_diameter)
    t = lobe_diameter
    if length is None:
        return PelletGeometry("extrudate", None, _out(xs["equivalent_radius"], t),
                              _out(xs["area"] / xs["perimeter"], t))
    h = _positive("length", length)
    volume = xs["area"] * h
    area = xs["perimeter"] * h + 2.0 * xs["area"]
    return PelletGeometry("extrudate", None, _out(xs["equivalent_radius"], t),
                          _out(volume / area, t), _out(volume, t), _out(area, t))


def custom_geometry(volume, external_area) -> PelletGeometry:
    """Any pellet from its volume V [m^3] and permeable external area S [m^2].

    diffusion_length = characteristic_length = V/S (only the generalized modulus exists).
    """
    v = _positive("volume", volume)
    s = _positive("external_area", external_area)
    ls = v / s
    return PelletGeometry("custom", None, _out(ls, volume), _out(ls, volume),
                          _out(v, volume), _out(s, volume))


# --------------------------------------------------------------------------- ring
def _i0_difference_scaled(xo, xi):
    """exp(-xo) (I0(xo) - I0(xi)) without cancellation (series below xo = 2)."""
    direct = special.i0e(xo) - special.i0e(xi) * np.exp(xi - xo)
    small = xo < 2.0
    if np.any(small):
        yo = (np.where(small, xo, 0.0) / 2.0) ** 2
        yi = (np.where(small, xi, 0.0) / 2.0) ** 2
        total = np.zeros_like(yo)
        po, pi_, fact2 = np.ones_like(yo), np.ones_like(yi), 1.0
        for k in range(1, 30):
            po, pi_ = po * yo, pi_ * yi
            fact2 *= float(k * k)
            total = total + (po - pi_) / fact2
        direct = np.where(small, np.exp(-np.where(small, xo, 0.0)) * total, direct)
    return direct


def _ring_eta(a, ro, ri):
    """First-order eta of an infinite ring, arrays a [1/m] > 0, ro, ri [m] (broadcast)."""
    xo, xi = a * ro, a * ri
    e = np.exp(-(xo - xi))
    k0o, k0i, k1o, k1i = special.k0e(xo), special.k0e(xi), special.k1e(xo), special.k1e(xi)
    i0o, i0i, i1o, i1i = special.i0e(xo), special.i0e(xi), special.i1e(xo), special.i1e(xi)
    p = k0i - k0o * e                      # e^{xi} (K0(xi) - K0(xo))
    q = _i0_difference_scaled(xo, xi)      # e^{-xo} (I0(xo) - I0(xi))
    det = i0o * k0i - i0i * k0o * e * e    # -e^{-(xo-xi)} (I0(xi)K0(xo) - I0(xo)K0(xi))
    g_out = (i1o * p - e * k1o * q) / det  # u'(R_o)/a
    g_in = (e * i1i * p - k1i * q) / det   # u'(R_i)/a  (< 0)
    return 2.0 * (ro * g_out - ri * g_in) / (a * (ro - ri) * (ro + ri))


def effectiveness_first_order_hollow_cylinder(thiele_modulus, radius_ratio, aspect=None):
    """First-order effectiveness factor of a ring (hollow cylinder).

    Infinite length (aspect None), with a = sqrt(k/D_e), u = A I0(a r) + B K0(a r),
    u(R_i) = u(R_o) = 1:

        eta = 2 (R_o u'(R_o) - R_i u'(R_i)) / (a^2 (R_o^2 - R_i^2)),

    evaluated with exponentially scaled I0, I1, K0, K1 (all growing factors
    cancelled analytically) and the series of I0(xo) - I0(xi) below xo = 2, so it
    holds double precision for 1e-8 <= phi <= 1e8 with no overflow.
    With ``aspect`` = H / (R_o - R_i) (length over wall thickness) the end faces
    react too and the finite-length series of the module docstring is used.

    Parameters
    ----------
    thiele_modulus : float or ndarray
        phi = a (R_o - R_i)/2, on the wall half-thickness [-], >= 0.
    radius_ratio : float
        R_i / R_o [-], 0 < ratio < 1 (validated 1e-3 ... 0.99).
    aspect : float or None
        H / (R_o - R_i) [-] > 0, or None for an infinitely long ring.

    Returns
    -------
    eta : float or ndarray [-]

    References: Aris (1975) Ch. 3 (hollow cylinder); Abramowitz & Stegun 9.6.
    """
    phi = _modulus("thiele_modulus", thiele_modulus)
    kappa = float(np.asarray(radius_ratio, dtype=float))
    if not (np.isfinite(kappa) and 0.0 < kappa < 1.0):
        raise PhysicsInputError("radius_ratio", radius_ratio, "must lie in (0, 1)")
    ro, ri = 2.0 / (1.0 - kappa), 2.0 * kappa / (1.0 - kappa)  # wall half-thickness = 1

    def eta_x(b):
        return _ring_eta(b, ro, ri)

    if aspect is None:
        pos = phi > 0
        eta = np.ones_like(phi)
        if np.any(pos):
            eta[pos] = eta_x(phi[pos])
        return _out(eta, thiele_modulus)
    h = float(_positive("aspect", aspect)) * 2.0
    eta = np.array([_finite_length(eta_x, float(p), h) for p in np.atleast_1d(phi)])
    return _out(eta.reshape(phi.shape), thiele_modulus)


# --------------------------------------------------------------------------- finite length
_N_DIRECT = 128
_GL_X, _GL_W = np.polynomial.legendre.leggauss(16)


def _finite_length(eta_x, a: float, h: float, n_direct: int = _N_DIRECT) -> float:
    """eta of cross-section X times [-h/2, h/2], first order, a [1/length], h [length]."""
    if a == 0.0:
        return 1.0
    alpha = a * h

    def term(y):  # y = 2n + 1 (real, > 0)
        beta = np.pi * y / h
        b = np.sqrt(a * a + beta * beta)
        return 8.0 * alpha**2 / (np.pi**2 * y**2 * (alpha**2 + (np.pi * y) ** 2)) * eta_x(b)

    y = 2.0 * np.arange(n_direct)[::-1] + 1.0
    direct = np.sum(term(y))
    # tail: sum_{n>=N} f(n) = int_{N-1/2}^inf f dx + f'(N-1/2)/24 - 7 f'''(N-1/2)/5760 + ...
    y0 = 2.0 * n_direct
    tau_end = max(0.0, np.log(max(alpha / (np.pi * y0), 1.0))) + 10.0
    edges = np.arange(0.0, tau_end + 0.5, 0.5)
    mid, half = (edges[1:] + edges[:-1]) / 2.0, (edges[1:] - edges[:-1]) / 2.0
    tau = (mid[:, None] + half[:, None] * _GL_X[None, :]).ravel()
    w = (half[:, None] * _GL_W[None, :]).ravel()
    yy = y0 * np.exp(tau)
    integral = np.sum(w * term(yy) * yy) / 2.0          # dx = dy/2 = y dtau / 2
    x0 = n_direct - 0.5                                  # f'(x) by 5-point difference, step 1
    fx = term(2.0 * (x0 + np.array([-2.0, -1.0, 1.0, 2.0])) + 1.0)
    deriv = (fx[0] - 8.0 * fx[1] + 8.0 * fx[2] - fx[3]) / 12.0
    third = (fx[3] - 2.0 * fx[2] + 2.0 * fx[1] - fx[0]) / 2.0
    tail = integral + deriv / 24.0 - 7.0 * third / 5760.0
    return float(effectiveness_first_order_slab(alpha / 2.0) + (direct + tail))


def effectiveness_first_order_finite_length(eta_cross_section, thiele_modulus, length_ratio):
    """First-order eta of any prism (cross-section X, length H, reacting ends).

    eta = tanh(aH/2)/(aH/2) + sum_n g_n a^2/b_n^2 eta_X(b_n) (module docstring).

    Parameters
    ----------
    eta_cross_section : callable
        eta_X(phi) of the infinitely long section, vectorized, phi on the same
        length L as ``thiele_modulus``.
    thiele_modulus : float or ndarray
        phi = a L [-] >= 0.
    length_ratio : float
        H / L [-] > 0.
    """
    phi = _modulus("thiele_modulus", thiele_modulus)
    h = float(_positive("length_ratio", length_ratio))
    eta = np.array([_finite_length(eta_cross_section, float(p), h) for p in np.atleast_1d(phi)])
    return _out(eta.reshape(phi.shape), thiele_modulus)


def effectiveness_first_order_finite_cylinder(thiele_modulus, length_over_diameter):
    """First-order eta of a cylinder of radius R, length H, all faces reacting.

    eta = tanh(aH/2)/(aH/2) + sum_n g_n (a^2/b_n^2) 2 I1(b_n R)/(b_n R I0(b_n R)),
    beta_n = (2n+1) pi/H, b_n^2 = a^2 + beta_n^2, g_n = 8/((2n+1)^2 pi^2);
    the I1/I0 ratio with scaled Bessel functions (closed_form). Converged to ~1e-14.

    Parameters
    ----------
    thiele_modulus : float or ndarray
        phi = R sqrt(k/D_e), on the radius [-] >= 0.
    length_over_diameter : float
        H / (2R) [-] > 0.

    References: Aris (1975) Ch. 3; Gunn (1967).
    """
    phi = _modulus("thiele_modulus", thiele_modulus)
    h = 2.0 * float(_positive("length_over_diameter", length_over_diameter))
    eta = np.array([_finite_length(effectiveness_first_order_cylinder, float(p), h)
                    for p in np.atleast_1d(phi)])
    return _out(eta.reshape(phi.shape), thiele_modulus)


# --------------------------------------------------------------------------- extrudates
_LOBE_SHAPE = {3: "trilobe", 4: "quadrilobe"}
_FE_LIMIT = 200.0          # above this phi the large-modulus asymptote replaces the 2-D solve
_TABLE_PHI = np.logspace(-2.0, np.log10(_FE_LIMIT), 30)


def _lobes(lobes) -> int:
    if lobes not in (3, 4):
        raise PhysicsInputError("lobes", lobes, "must be 3 or 4")
    return int(lobes)


# eta_X / eta_circle at _TABLE_PHI (phi on L_eq) from solve_cross_section (P1, Richardson 40/80),
# generated by _extrudate_table_values(lobes) and re-checked by the tests; and the coefficient c
# of the large-modulus asymptote eta = (2/phi)(1 - c/phi) matched at phi = _FE_LIMIT.
_EXTRUDATE_RATIO = {
    3: np.array([
    1.000000114955614, 1.000000227593499, 1.0000004506052866, 1.0000008921668826,
    1.0000017665356005, 1.0000034982512314, 1.0000069291942746, 1.000013731469959,
    1.000027236163463, 1.0000541167128598, 1.0001078751372054, 1.0002162467252118,
    1.0004371442056985, 1.0008910143931087, 1.0018073260003957, 1.0034940003586894,
    1.0059292088338594, 1.008020039461686, 1.008232087134071, 1.0067519072413507,
    1.004975237079643, 1.0035637087140974, 1.0025379921587227, 1.0018052648767313,
    1.0012843126895823, 1.00091464118855, 1.0006527236104483, 1.0004676265269559,
    1.0003375320803318, 1.000247208179872,
    ]),
    4: np.array([
    0.9999993765082165, 0.999998765645465, 0.9999975563680346, 0.9999951626741415,
    0.9999904253531605, 0.9999810531506103, 0.9999625245324962, 0.9999259451958149,
    0.9998539299272299, 0.9997129255053387, 0.9994398141911709, 0.9989219883454071,
    0.9979804349889709, 0.9964028942073415, 0.9941506983708818, 0.9918356351906231,
    0.9909432159087045, 0.9925235984112151, 0.9954141972077648, 0.9976464762591984,
    0.9987877038895994, 0.9993225509374478, 0.9995956380265297, 0.9997476977176375,
    0.9998378411423955, 0.9998940116513177, 0.9999306196374239, 0.9999556563729683,
    0.9999738998816082, 0.9999884997635421,
    ]),
}
_EXTRUDATE_ASYMPTOTE = {3: 0.4513102730705931, 4: 0.502922439620801}


def _extrudate_table_values(lobes: int):
    """Recompute the table (ratio array, asymptote coefficient) from 2-D solves (~1-3 s)."""
    shape = _LOBE_SHAPE[lobes]
    eta = np.array([solve_cross_section(shape, p).effectiveness_factor for p in _TABLE_PHI])
    ratio = eta / effectiveness_first_order_cylinder(_TABLE_PHI)
    c_asym = (1.0 - eta[-1] * _FE_LIMIT / 2.0) * _FE_LIMIT
    return ratio, float(c_asym)


@functools.lru_cache(maxsize=4)
def _extrudate_table(lobes: int):
    """Cubic spline of ln phi -> eta_X/eta_circle through the stored table, and c."""
    spline = interpolate.CubicSpline(np.log(_TABLE_PHI), _EXTRUDATE_RATIO[lobes])
    return spline, _EXTRUDATE_ASYMPTOTE[lobes]


def _extrudate_eta_interpolated(lobes: int, phi):
    spline, c_asym = _extrudate_table(lobes)
    phi = np.asarray(phi, dtype=float)
    lo, hi = _TABLE_PHI[0], _TABLE_PHI[-1]
    inside = np.clip(phi, lo, hi)
    # below the table both etas are 1 - M phi^2 + ...: the ratio tends to 1 like phi^2
    low = 1.0 + (spline(np.log(lo)) - 1.0) * (np.minimum(phi, lo) / lo) ** 2
    ratio = np.where(phi < lo, low, spline(np.log(inside)))
    safe = np.where(phi > hi, phi, 2.0 * hi)
    return np.where(phi > hi, 2.0 / safe * (1.0 - c_asym / safe),
                    ratio * effectiveness_first_order_cylinder(phi))


def effectiveness_first_order_extrudate(thiele_modulus, lobes, length_ratio=None,
                                        direct_solve: bool = False):
    """First-order eta of a lobed extrudate (section of ``extrudate_cross_section``).

    Infinite length: the 2-D P1 finite-element solution of the section
    (``cross_section.solve_cross_section``, Richardson-extrapolated, relative error ~1e-5),
    read from a stored table: a cubic spline in ln phi of eta_X/eta_circle through 30
    such solutions (1e-2 <= phi <= 200, regenerated by ``_extrudate_table_values``; below
    1e-2 the ratio tends to 1 like phi^2, as both etas are 1 - M phi^2 + ...) and, above phi = 200,
    the asymptote eta = (2/phi)(1 - c/phi) with c matched to the 2-D solution at
    phi = 200 (relative error < 2e-5, measured by us against finer 2-D solves).
    ``direct_solve`` runs the 2-D solve instead (phi <= 200; ~30-70 ms per value).
    Finite length H (``length_ratio`` = H / L_eq): the finite-length series of the module
    docstring with the tabulated eta_X (same accuracy).

    Parameters
    ----------
    thiele_modulus : phi = L_eq sqrt(k/D_e), L_eq = 2A/P = the diffusion length [-] >= 0.
    lobes : 3 or 4.
    length_ratio : H / L_eq [-] > 0 or None (infinitely long).
    direct_solve : bool, solve the 2-D problem for each value (infinite length only).
    """
    n = _lobes(lobes)
    phi = _modulus("thiele_modulus", thiele_modulus)
    flat = np.atleast_1d(phi).ravel()
    if length_ratio is not None:
        h = float(_positive("length_ratio", length_ratio))
        eta = np.array([_finite_length(lambda b: _extrudate_eta_interpolated(n, b), float(p), h)
                        for p in flat])
    elif direct_solve:
        eta = np.array([solve_cross_section(_LOBE_SHAPE[n], float(p)).effectiveness_factor
                        if p <= _FE_LIMIT else float(_extrudate_eta_interpolated(n, p))
                        for p in flat])
    else:
        eta = _extrudate_eta_interpolated(n, flat)
    return _out(eta.reshape(phi.shape), thiele_modulus)


# --------------------------------------------------------------------------- custom shapes
# Measured by us (tests/physics/test_industrial_shapes.py re-measures it): the largest
# relative deviation |eta_exact/eta_ref - 1| of the exact first-order eta of sphere, slab,
# infinite cylinder, rings (R_i/R_o 0.2 ... 0.8), finite cylinders (H/D 0.5 ... 3) and
# trilobe/quadrilobe extrudates from the reference eta_ref = the infinite cylinder evaluated at
# the same generalized modulus Phi (phi = 2 Phi), for 0.05 <= Phi <= 20. Measured maximum
# 0.119 (the slab and thin rings, near Phi = 1); sphere 0.04, finite cylinders <= 0.065,
# lobed extrudates < 0.01.
GENERALIZED_MODULUS_ERROR_BAND = 0.12
GENERALIZED_MODULUS_BAND_RANGE = (0.05, 20.0)


def effectiveness_generalized_modulus_estimate(generalized_modulus):
    """First-order eta estimated from the generalized modulus Phi = (V_p/S_p) sqrt(k/D_e).

    eta ~ 2 I1(2 Phi) / (2 Phi I0(2 Phi)), the infinite cylinder at the same Phi (the middle
    of the slab-sphere family; exact for Phi -> 0 and Phi -> inf to leading order for every
    shape, Aris 1957). Between, the error of any real shape is a few per cent:
    ``GENERALIZED_MODULUS_ERROR_BAND`` (relative) is the band measured by us against exact shapes.

    Parameters: generalized_modulus Phi [-] >= 0. Returns eta [-].
    """
    big_phi = _modulus("generalized_modulus", generalized_modulus)
    return _out(np.asarray(effectiveness_first_order_cylinder(2.0 * big_phi)), generalized_modulus)


# --------------------------------------------------------------------------- one entry point
@dataclass(frozen=True)
class FirstOrderShapeResult:
    """First-order effectiveness of one pellet, with the moduli it was computed from.

    effectiveness_factor [-]; thiele_modulus phi = L sqrt(k/D_e) on diffusion_length L [m];
    generalized_modulus Phi = (V_p/S_p) sqrt(k/D_e) on characteristic_length V_p/S_p [m];
    method: "closed_form" | "series" | "numerical" | "asymptotic" |
    "generalized_modulus_estimate"; approximate: True for a modelling approximation
    (asymptotic extrudate, custom estimate); error_band: stated relative error of a
    numerical or approximate result (None for closed forms and exact series).
    """

    effectiveness_factor: float
    thiele_modulus: float
    diffusion_length: float
    generalized_modulus: float
    characteristic_length: float
    method: str
    approximate: bool
    error_band: float | None


_EXTRUDATE_BAND = 2e-5  # measured by us: tabulated/asymptotic 2-D result vs finer 2-D solves


def effectiveness_first_order_pellet(shape: str, rate_constant: float, effective_diffusivity: float,
                                     **dimensions) -> FirstOrderShapeResult:
    """First-order eta of any registered shape from dimensional inputs (scalars).

    Parameters
    ----------
    shape : "sphere", "slab", "cylinder", "hollow_cylinder", "extrudate" or "custom".
    rate_constant : k [1/s] (per pellet volume) > 0.
    effective_diffusivity : D_e [m^2/s] > 0.
    dimensions : the shape's dimensions [m] as in ``geometry.SHAPES`` (sphere: radius;
        slab: thickness, exposed_faces; cylinder: radius, length=None; hollow_cylinder:
        outer_radius, inner_radius, length=None; extrudate: lobes, lobe_diameter,
        length=None; custom: volume, external_area).
    """
    from .closed_form import effectiveness_first_order
    from .geometry import build_geometry

    k = float(_positive("rate_constant", rate_constant))
    de = float(_positive("effective_diffusivity", effective_diffusivity))
    a = np.sqrt(k / de)
    length = dimensions.get("length")
    if shape == "cylinder" and length is not None:
        geo = finite_cylinder_geometry(dimensions["radius"], length)
    else:
        geo = build_geometry(shape, **dimensions)
    big_l, ls = float(geo.diffusion_length), float(geo.characteristic_length)
    phi, big_phi = a * big_l, a * ls
    approximate, band = False, None
    if shape in ("sphere", "slab") or (shape == "cylinder" and length is None):
        eta, method = effectiveness_first_order(phi, geo.shape_exponent), "closed_form"
    elif shape == "cylinder":
        eta = effectiveness_first_order_finite_cylinder(phi, length / (2.0 * big_l))
        method = "series"
    elif shape == "hollow_cylinder":
        ratio = dimensions["inner_radius"] / dimensions["outer_radius"]
        aspect = None if length is None else length / (2.0 * big_l)
        eta = effectiveness_first_order_hollow_cylinder(phi, ratio, aspect)
        method = "closed_form" if length is None else "series"
    elif shape == "extrudate":
        lr = None if length is None else length / big_l
        eta = effectiveness_first_order_extrudate(phi, dimensions["lobes"], lr)
        band = _EXTRUDATE_BAND
        if length is not None:
            method = "series"
        elif phi <= _FE_LIMIT:
            method = "numerical"
        else:
            method, approximate = "asymptotic", True
    else:  # custom
        eta = effectiveness_generalized_modulus_estimate(big_phi)
        method, approximate, band = "generalized_modulus_estimate", True, GENERALIZED_MODULUS_ERROR_BAND
    return FirstOrderShapeResult(float(eta), float(phi), big_l, float(big_phi), ls, method,
                                 approximate, band)
