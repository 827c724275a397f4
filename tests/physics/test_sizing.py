"""Checks of service.physics.sizing against fluids (Ergun), analytic sphericities and
mpmath round trips of the sizing inversion."""

import math

import fluids
import mpmath as mp
import numpy as np
import pytest

from service.physics import sizing
from service.physics.errors import PhysicsInputError

BEDS = [  # invented: u [m/s], rho [kg/m^3], mu [Pa s], eps [-], d_p [m]
    (1e-3, 1e3, 1e-3, 0.4, 8e-4),
    (0.8, 1.2, 1.8e-5, 0.38, 3e-3),
    (2.5, 12.0, 2.6e-5, 0.45, 6e-3),
    (0.05, 850.0, 4e-4, 0.36, 1.5e-3),
]


@pytest.mark.parametrize("u, rho, mu, eps, dp", BEDS)
def test_ergun_matches_fluids(u, rho, mu, eps, dp):
    # Source: fluids.Ergun (Bell, fluids library; Ergun 1952), pressure drop over L = 1 m.
    ref = fluids.Ergun(dp=dp, voidage=eps, vs=u, rho=rho, mu=mu, L=1.0)
    assert sizing.ergun_pressure_gradient(u, rho, mu, eps, dp) == pytest.approx(ref, rel=1e-12)


def test_ergun_fluids_documented_example_and_limits():
    # Source: fluids.Ergun docstring example: 1338.8671874999995 Pa.
    assert sizing.ergun_pressure_gradient(1e-3, 1e3, 1e-3, 0.4, 8e-4) == pytest.approx(
        1338.8671874999995, rel=1e-13)
    # No flow, no pressure drop; arrays evaluate element-wise.
    assert sizing.ergun_pressure_gradient(0.0, 1.0, 1e-5, 0.4, 1e-3) == 0.0
    arr = sizing.ergun_pressure_gradient(np.array([0.1, 1.0]), 1.2, 1.8e-5, 0.4, 3e-3)
    assert arr.shape == (2,)
    with pytest.raises(PhysicsInputError) as err:
        sizing.ergun_pressure_gradient(1.0, 1.2, 1.8e-5, 1.0, 3e-3)
    assert err.value.argument == "voidage"


def test_equivalent_diameter_and_sphericity():
    # Sphere: 6 V/S = d and psi = 1 (Wadell 1935). Cylinder with height = diameter:
    # psi = (3/2)^(2/3)/(3/2) = 0.874 (analytic; tabulated 0.874 in McCabe, Smith &
    # Harriott, Unit Operations, table of sphericities, value from memory).
    d = 3e-3
    v, s = math.pi * d**3 / 6, math.pi * d**2
    assert sizing.equivalent_particle_diameter(v, s) == pytest.approx(d, rel=1e-14)
    assert sizing.sphericity(v, s) == pytest.approx(1.0, rel=1e-14)
    vc, sc = math.pi * d**3 / 4, 1.5 * math.pi * d**2
    assert sizing.sphericity(vc, sc) == pytest.approx(0.874, abs=5e-4)
    # Convention: d_p = psi * d_v, d_v = (6 V/pi)^(1/3).
    dv = (6 * vc / math.pi) ** (1 / 3)
    assert sizing.equivalent_particle_diameter(vc, sc) == pytest.approx(
        sizing.sphericity(vc, sc) * dv, rel=1e-14)


def _eta_sphere(phi):
    # Thiele (1939) sphere, first order, evaluated in mpmath (independent of the project).
    phi = mp.mpf(phi)
    return float(3 * (phi * mp.coth(phi) - 1) / phi**2)


K, DE = 50.0, 1e-7  # invented first-order rate constant [1/s] and D_e [m^2/s]


def _eta_of_radius(radius):
    return _eta_sphere(radius * math.sqrt(K / DE))


@pytest.mark.parametrize("target", [0.99, 0.9, 0.5, 0.05])
def test_largest_size_round_trip(target):
    # Reference: phi* with eta(phi*) = target found by mpmath.findroot (30 digits);
    # the largest radius is phi* sqrt(D_e/k).
    res = sizing.largest_size_for_target_effectiveness(_eta_of_radius, target, (1e-6, 1e-1))
    assert res.success and res.status == 0
    with mp.workdps(30):
        phi = mp.findroot(lambda p: 3 * (p * mp.coth(p) - 1) / p**2 - target, 1.0)
    assert res.size == pytest.approx(float(phi) * math.sqrt(DE / K), rel=1e-10)
    assert res.effectiveness == pytest.approx(target, rel=1e-10)


def test_largest_size_outside_bounds():
    top = sizing.largest_size_for_target_effectiveness(_eta_of_radius, 0.5, (1e-7, 1e-5))
    assert top.success and top.status == 1 and top.size == 1e-5
    none = sizing.largest_size_for_target_effectiveness(_eta_of_radius, 0.9, (1e-2, 1e-1))
    assert not none.success and none.status == 2 and none.size is None
    bad = sizing.largest_size_for_target_effectiveness(lambda r: float("nan"), 0.9, (1e-4, 1e-2))
    assert not bad.success and bad.status == 3
    assert all(sizing.SIZING_STATUS[s] for s in range(5))
    with pytest.raises(PhysicsInputError):
        sizing.largest_size_for_target_effectiveness(_eta_of_radius, 1.5, (1e-4, 1e-2))
    with pytest.raises(PhysicsInputError):
        sizing.largest_size_for_target_effectiveness(_eta_of_radius, 0.5, (1e-2, 1e-4))


def test_tradeoff_table():
    # Rate per reactor volume = (1 - eps) eta r_s (pellet volume fraction of the bed);
    # pressure gradient from fluids.Ergun with d_p = 2 R for spheres.
    eps, rs = 0.4, 120.0
    sizes = [5e-4, 1e-3, 2e-3, 4e-3]
    rows = sizing.size_tradeoff_table(
        sizes, _eta_of_radius,
        lambda r: sizing.ergun_pressure_gradient(0.5, 1.2, 1.8e-5, eps, 2 * r), rs, eps)
    assert [r.size for r in rows] == sizes
    for row in rows:
        expected = (1 - eps) * _eta_of_radius(row.size) * rs
        assert row.rate_per_reactor_volume == pytest.approx(expected, rel=1e-14)
        ref = fluids.Ergun(dp=2 * row.size, voidage=eps, vs=0.5, rho=1.2, mu=1.8e-5)
        assert row.pressure_gradient == pytest.approx(ref, rel=1e-12)
    # The trade-off: bigger pellets lose activity and save pressure drop.
    assert all(a.effectiveness > b.effectiveness for a, b in zip(rows, rows[1:]))
    assert all(a.pressure_gradient > b.pressure_gradient for a, b in zip(rows, rows[1:]))
    assert set(rows[0].as_dict()) == {"size", "effectiveness_factor", "rate_per_reactor_volume",
                                      "pressure_gradient"}
