"""Closed-form first-order effectiveness factors and profiles against independent references."""

import mpmath as mp
import numpy as np
import pytest

from service.physics import closed_form as cf

mp.mp.dps = 40
MODULI = np.logspace(-8, 8, 33)


# Independent 40-digit references (mpmath), straight from the textbook formulas:
# slab tanh(phi)/phi, cylinder 2 I1/(phi I0), sphere 3/phi^2 (phi coth phi - 1)
# (Thiele 1939; Aris 1975, The Mathematical Theory of Diffusion and Reaction in
# Permeable Catalysts, Vol. 1, eqs. 3.10-3.16).
def _ref_eta(phi, m):
    p = mp.mpf(phi)
    if m == 0:
        return mp.tanh(p) / p
    if m == 1:
        return 2 * mp.besseli(1, p) / (p * mp.besseli(0, p))
    return 3 / p**2 * (p * mp.coth(p) - 1)


def _ref_profile(xi, phi, m):
    p, x = mp.mpf(phi), mp.mpf(xi)
    if m == 0:
        return mp.cosh(p * x) / mp.cosh(p)
    if m == 1:
        return mp.besseli(0, p * x) / mp.besseli(0, p)
    if x == 0:
        return p / mp.sinh(p)
    return mp.sinh(p * x) / (x * mp.sinh(p))


@pytest.mark.parametrize("m", [0, 1, 2])
@pytest.mark.parametrize("phi", MODULI)
def test_effectiveness_matches_40_digit_reference(phi, m):
    eta = cf.effectiveness_first_order(phi, m)
    ref = _ref_eta(phi, m)
    assert abs(eta - float(ref)) <= 1e-13 * float(ref)


@pytest.mark.parametrize("m", [0, 1, 2])
def test_vectorised_equals_scalar(m):
    etas = cf.effectiveness_first_order(MODULI, m)
    assert etas.shape == MODULI.shape
    for phi, eta in zip(MODULI, etas):
        assert eta == cf.effectiveness_first_order(float(phi), m)


@pytest.mark.parametrize("m", [0, 1, 2])
def test_limits(m):
    # Small modulus: eta -> 1 (no diffusion resistance); large modulus: eta -> (m+1)/phi
    # (Aris 1975, Vol. 1, sec. 3.2; Fogler, Elements of Chemical Reaction Engineering,
    # 5th ed., eq. 15-34 for the sphere: eta ~ 3/phi).
    assert cf.effectiveness_first_order(1e-8, m) == pytest.approx(1.0, abs=1e-15)
    assert cf.effectiveness_first_order(1e8, m) * 1e8 / (m + 1) == pytest.approx(1.0, rel=1e-7)
    assert cf.effectiveness_first_order(0.0, m) == 1.0


# Worked values from tabulated functions (values from memory): tanh 2 = 0.9640275801,
# coth 3 = 1.0049698233, I0(2) = 2.2795853023, I1(2) = 1.5906368546 (Abramowitz & Stegun,
# Handbook of Mathematical Functions, Tables 4.16 and 9.8), put into the textbook formulas.
@pytest.mark.parametrize(
    "m, phi, eta",
    [
        (0, 2.0, 0.9640275801 / 2.0),
        (1, 2.0, 2 * 1.5906368546 / (2.0 * 2.2795853023)),
        (2, 3.0, 3.0 / 9.0 * (3.0 * 1.0049698233 - 1.0)),
    ],
)
def test_worked_values_from_tables(m, phi, eta):
    assert cf.effectiveness_first_order(phi, m) == pytest.approx(eta, rel=1e-9)


@pytest.mark.parametrize("m", [0, 1, 2])
@pytest.mark.parametrize("phi", [1e-6, 0.3, 2.0, 40.0, 800.0, 1e5])
def test_profile_matches_reference(phi, m):
    xi = np.linspace(0.0, 1.0, 11)
    u = cf.profile_first_order(xi, phi, m)
    for x, value in zip(xi, u):
        ref = float(_ref_profile(x, phi, m))
        # Relative to the surface value 1: tiny centre values are compared in absolute terms.
        assert abs(value - ref) <= 1e-13 * max(ref, 1e-300) or abs(value - ref) < 1e-300
    assert u[-1] == pytest.approx(1.0, rel=1e-15)


@pytest.mark.parametrize("m", [0, 1, 2])
def test_profile_integral_gives_eta(m):
    # eta = (m+1) * int_0^1 u xi^m dxi: the volume average of the first-order rate
    # (definition of the effectiveness factor, Aris 1975 eq. 3.6).
    phi = 2.5
    xi = np.linspace(0.0, 1.0, 20001)
    u = cf.profile_first_order(xi, phi, m)
    f = u * xi**m
    average = (m + 1) * np.sum((f[1:] + f[:-1]) * np.diff(xi)) / 2.0
    assert average == pytest.approx(cf.effectiveness_first_order(phi, m), rel=1e-7)


def test_huge_modulus_raises_no_warning_and_no_nan():
    # pytest runs with warnings as errors: any overflow here would fail the test.
    for m in (0, 1, 2):
        eta = cf.effectiveness_first_order(np.array([1e300, 1e-300, 0.0]), m)
        assert np.all(np.isfinite(eta))
        u = cf.profile_first_order(np.linspace(0, 1, 5), 1e6, m)
        assert np.all(np.isfinite(u))


@pytest.mark.parametrize("bad", [-1.0, float("nan"), float("inf")])
def test_bad_modulus_raises_domain_error(bad):
    with pytest.raises(cf.PhysicsInputError) as info:
        cf.effectiveness_first_order(bad, 2)
    assert info.value.argument == "thiele_modulus"
