"""2-D solvers: polar P1 finite elements for cross-sections, (r, z) finite volumes."""

import math

import numpy as np
import pytest
from scipy import integrate

from service.physics import cross_section as cs
from service.physics.closed_form import effectiveness_first_order_cylinder
from service.physics.errors import PhysicsInputError
from service.physics.industrial_shapes import (
    effectiveness_first_order_finite_cylinder,
    effectiveness_first_order_hollow_cylinder,
    extrudate_cross_section,
)


@pytest.mark.parametrize("phi", [0.3, 2.0, 10.0, 30.0])
def test_circle_reproduces_exact_infinite_cylinder(phi):
    # exact: eta = 2 I1(phi)/(phi I0(phi)) (Aris 1975, eq. 3.14), via closed_form (scaled Bessel)
    res = cs.solve_cross_section("circle", phi)
    assert res.success and res.method == "richardson"
    assert res.effectiveness_factor == pytest.approx(effectiveness_first_order_cylinder(phi), rel=1e-4)


@pytest.mark.parametrize("phi", [0.5, 5.0])
def test_circle_observed_order_is_two(phi):
    # P1 elements with lumped mass: eta error O(h^2) on smooth domains (Strang & Fix 2008)
    exact = effectiveness_first_order_cylinder(phi)
    errors = [abs(cs.solve_cross_section("circle", phi, n_theta=n, n_s=n, richardson=False)
                  .effectiveness_factor - exact) for n in (12, 24, 48)]
    orders = np.log2(np.array(errors[:-1]) / np.array(errors[1:]))
    assert orders == pytest.approx([2.0, 2.0], abs=0.15)


@pytest.mark.parametrize("shape, lobes", [("trilobe", 3), ("quadrilobe", 4)])
def test_lobed_mesh_area_converges_to_hand_calculated_area(shape, lobes):
    # exact section area d^2 (pi/2 + n sin(2 pi/n)/4) (hand calculation in
    # test_industrial_shapes), per symmetry sector: / (2 n); chords converge at h^2.
    exact = extrudate_cross_section(lobes, 1.0)["area"] / (2 * lobes)
    errs = [abs(cs.polar_mesh(shape, n, n)["area"] - exact) for n in (10, 20, 40)]
    assert errs[2] < errs[1] < errs[0]
    assert np.log2(errs[1] / errs[2]) == pytest.approx(2.0, abs=0.3)


@pytest.mark.parametrize("shape", ["trilobe", "quadrilobe"])
def test_lobed_section_converges_and_obeys_limits(shape):
    etas = [cs.solve_cross_section(shape, 3.0, n_theta=n, n_s=n, richardson=False)
            .effectiveness_factor for n in (16, 32, 64)]
    diffs = np.abs(np.diff(etas))
    assert np.log2(diffs[0] / diffs[1]) == pytest.approx(2.0, abs=0.25)  # graded mesh: order ~2
    # Richardson value within its own error estimate of a finer extrapolation
    res = cs.solve_cross_section(shape, 3.0)
    fine = cs.solve_cross_section(shape, 3.0, n_theta=80, n_s=80)
    assert res.effectiveness_factor == pytest.approx(fine.effectiveness_factor, abs=res.error_estimate)
    # limits (Aris 1957): eta -> 1 - O(phi^2) and eta -> 1/Phi = 2/phi on L_eq = 2 A/P
    assert cs.solve_cross_section(shape, 1e-4).effectiveness_factor == pytest.approx(1.0, abs=1e-8)
    assert cs.solve_cross_section(shape, 150.0).effectiveness_factor * 150.0 / 2 == pytest.approx(1.0, rel=0.01)


@pytest.mark.parametrize("shape", ["trilobe", "quadrilobe"])
def test_lobed_section_between_sphere_and_slab(shape):
    # at equal generalized modulus the slab has the highest and the sphere the lowest eta of
    # the classical shapes (Aris 1957, Fig. 1; Aris 1975 Ch. 3)
    phi = 2.0  # on L_eq; generalized modulus Phi = phi/2 = 1
    eta = cs.solve_cross_section(shape, phi).effectiveness_factor
    slab = math.tanh(1.0)
    sphere = 3.0 * (3.0 / math.tanh(3.0) - 1.0) / 9.0
    assert sphere < eta < slab


def _bvp_infinite_cylinder(phi, order):
    """Independent 1-D reference: scipy.integrate.solve_bvp on u'' + u'/x = phi^2 u^n."""
    def fun(x, y):
        return np.vstack([y[1], phi**2 * np.clip(y[0], 0, None) ** order])

    def bc(ya, yb):
        return np.array([ya[1], yb[0] - 1.0])

    x = np.linspace(0, 1, 200)
    sol = integrate.solve_bvp(fun, bc, x, np.vstack([np.ones_like(x), np.zeros_like(x)]),
                              S=np.array([[0, 0], [0, -1.0]]), tol=1e-10, max_nodes=100000)
    assert sol.success
    # eta = 2 u'(1)/phi^2 (flux balance, f(1) = 1)
    return 2.0 * sol.sol(1.0)[1] / phi**2


@pytest.mark.parametrize("order", [2.0, 0.5])
def test_circle_nonlinear_rate_matches_solve_bvp(order):
    phi = 1.5
    res = cs.solve_cross_section("circle", phi, rate=lambda u: np.clip(u, 0, None) ** order,
                                 rate_derivative=lambda u: order * np.clip(u, 1e-300, None) ** (order - 1))
    assert res.success and res.iterations > 2
    assert res.effectiveness_factor == pytest.approx(_bvp_infinite_cylinder(phi, order), rel=1e-4)


def test_linear_callable_equals_first_order_path():
    a = cs.solve_cross_section("trilobe", 2.5)
    b = cs.solve_cross_section("trilobe", 2.5, rate=lambda u: u, rate_derivative=lambda u: np.ones_like(u))
    assert b.effectiveness_factor == pytest.approx(a.effectiveness_factor, rel=1e-10)


# ----------------------------------------------------------------------------- (r, z)
@pytest.mark.parametrize("ld", [1.0, 3.0])
def test_finite_volume_cylinder_matches_series(ld):
    # series: eigen expansion in z (Aris 1975 Ch. 3), checked separately against mpmath-free
    # double series and independent finite differences
    res = cs.solve_finite_cylinder(2.0, ld, n_r=40, richardson=True)
    assert res.success
    assert res.effectiveness_factor == pytest.approx(effectiveness_first_order_finite_cylinder(2.0, ld), abs=1e-5)


def test_finite_volume_ring_matches_series():
    # ring R_i/R_o = 0.4, H = 2 R_o: phi on R_o = 2 -> on the half wall 2 * 0.3 = 0.6;
    # H/(R_o - R_i) = 2/0.6
    res = cs.solve_finite_cylinder(2.0, 1.0, n_r=40, radius_ratio=0.4, richardson=True)
    series = effectiveness_first_order_hollow_cylinder(0.6, 0.4, aspect=2.0 / 0.6)
    assert res.effectiveness_factor == pytest.approx(series, abs=1e-5)


def test_finite_volume_second_order_long_cylinder_matches_bvp():
    # long cylinder (H/D = 200): the ends add ~ R/(2H) = 0.25 % of the area, and their effect on
    # eta is a fraction of that; second-order kinetics vs the 1-D solve_bvp reference
    res = cs.solve_finite_cylinder(1.5, 200.0, rate=lambda u: u * u, rate_derivative=lambda u: 2 * u,
                                   n_r=40, n_z=400)
    assert res.success and res.iterations >= 3
    assert res.effectiveness_factor == pytest.approx(_bvp_infinite_cylinder(1.5, 2.0), rel=1e-3)


def test_status_messages_and_bad_input():
    assert set(cs.STATUS_MESSAGES) == {0, 1, 2, 3}
    beyond = cs.solve_cross_section("trilobe", 1e8)  # far beyond the mesh's boundary layer
    assert beyond.status == 3 and not beyond.success
    assert cs.solve_finite_cylinder(100.0, 1.0, n_r=40).status == 3
    assert all(isinstance(m, str) and m for m in cs.STATUS_MESSAGES.values())
    res = cs.solve_cross_section("circle", 3.0, rate=lambda u: u**2, rate_derivative=lambda u: 2 * u,
                                 max_iter=1, tol=1e-16)
    assert res.status == 1 and not res.success and res.message == cs.STATUS_MESSAGES[1]
    with pytest.raises(PhysicsInputError):
        cs.solve_cross_section("hexagon", 1.0)
    with pytest.raises(PhysicsInputError):
        cs.solve_cross_section("circle", -1.0)
    with pytest.raises(PhysicsInputError):
        cs.solve_finite_cylinder(1.0, -2.0)
    with pytest.raises(PhysicsInputError):
        cs.solve_finite_cylinder(1.0, 1.0, radius_ratio=1.0)
    with pytest.raises(PhysicsInputError):
        cs.solve_cross_section("circle", 1.0, rate=lambda u: u)
