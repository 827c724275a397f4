"""Checks of service.physics.criteria: transport criteria against their published
derivations, falsified kinetics against mpmath-evaluated closed forms, and round trips
of the inversion helper."""

import math

import mpmath as mp
import numpy as np
import pytest

from service.physics import criteria as cr
from service.physics.errors import PhysicsInputError

R_GAS = 8.314462618


def _eta_sphere_mp(phi):
    # Thiele (1939) sphere, first order: eta = 3 (phi coth phi - 1)/phi^2, in mpmath.
    phi = mp.mpf(phi)
    return 3 * (phi * mp.coth(phi) - 1) / phi**2


@pytest.mark.parametrize("phi", [0.1, 1.0, 5.0, 50.0])
def test_weisz_prater_equals_eta_phi_squared(phi):
    # Source: Weisz & Prater (1954): for first order, C_WP = r_obs R^2/(D_e c_s) = eta phi^2
    # on the same length (here the sphere radius), eta from the Thiele closed form (mpmath).
    radius, de, cs = 2e-3, 1e-6, 40.0
    k = phi**2 * de / radius**2
    with mp.workdps(30):
        eta = float(_eta_sphere_mp(phi))
    c = cr.weisz_prater_modulus(eta * k * cs, radius, de, cs)
    assert c == pytest.approx(eta * phi**2, rel=1e-13)


def test_weisz_prater_boundary_means_small_limitation():
    # At the classic boundary C_WP = 1 (sphere radius; Weisz & Prater 1954, Fogler 2016
    # ch. 15) the first-order sphere has eta = 0.935 (evaluated with mpmath).
    with mp.workdps(30):
        phi = mp.findroot(lambda p: _eta_sphere_mp(p) * p**2 - 1, 1.0)
        assert float(_eta_sphere_mp(phi)) == pytest.approx(0.935, abs=0.001)


@pytest.mark.parametrize("m", [0, 1, 2])
@pytest.mark.parametrize("value_char", [0.01, 0.1, 0.12, 3.0])
def test_weisz_prater_bases_give_the_same_verdict(m, value_char):
    # V_p/S_p = L/(m+1) (Aris 1957): the two bases must agree on the verdict.
    lc, de, cs = 1e-3, 1e-6, 10.0
    rate = value_char * de * cs / lc**2
    a = cr.weisz_prater_criterion(rate, lc, de, cs, basis="characteristic", shape_exponent=m)
    b = cr.weisz_prater_criterion(rate, (m + 1) * lc, de, cs, basis="own", shape_exponent=m)
    assert a.value == pytest.approx(value_char, rel=1e-13)
    assert b.value == pytest.approx((m + 1) ** 2 * value_char, rel=1e-13)
    assert a.verdict == b.verdict == ("pass" if value_char < 1 / 9 else "fail")
    assert a.source and b.as_dict()["threshold"] == pytest.approx((m + 1) ** 2 / 9, rel=1e-15)


@pytest.mark.parametrize("order", [0.5, 1.0, 2.0])
@pytest.mark.parametrize("deviation, verdict", [(0.049, "pass"), (0.051, "fail")])
def test_mears_mass_is_the_five_percent_rule(order, deviation, verdict):
    # Source: Mears (1971) derivation: the film drop (c_b - c_s)/c_b = r_obs (R/3)/(k_m c_b)
    # changes an order-n rate by n (c_b - c_s)/c_b; 5 % allowed -> threshold 0.15.
    radius, km, cb = 1.5e-3, 0.05, 20.0
    drop = deviation / order  # (c_b - c_s)/c_b giving that rate deviation
    rate = km * cb * drop * 3.0 / radius  # film flux times S_p/V_p = 3/R
    rec = cr.mears_external_mass(rate, radius, order, km, cb)
    assert rec.value == pytest.approx(3.0 * deviation, rel=1e-13)
    assert rec.threshold == 0.15 and rec.verdict == verdict
    assert rec.name == "mears_external_mass" and "Mears" in rec.source


@pytest.mark.parametrize("deviation, verdict", [(0.04, "pass"), (0.06, "fail")])
def test_mears_heat_is_the_five_percent_rule(deviation, verdict):
    # Source: Mears (1971): film temperature rise dT = |dH| r_obs (R/3)/h changes an
    # Arrhenius rate by E dT/(R_g T_b^2); 5 % allowed -> threshold 0.15.
    radius, h, tb, e, dh = 2e-3, 150.0, 650.0, 90e3, -120e3
    d_t = deviation * R_GAS * tb**2 / e
    rate = h * d_t * 3.0 / (radius * abs(dh))
    rec = cr.mears_external_heat(rate, radius, dh, e, h, tb)
    assert rec.value == pytest.approx(3.0 * deviation, rel=1e-12)
    assert rec.verdict == verdict


def test_anderson_internal_heat_published_form():
    # Source: Anderson (1963) Chem. Eng. Sci. 18, 147: |dH| r R^2/(lambda_e T_s) < 0.75 R_g T_s/E.
    dh, r, radius, lam, ts, e = 150e3, 30.0, 2.5e-3, 0.3, 700.0, 100e3
    rec = cr.anderson_internal_heat(r, radius, -dh, e, lam, ts)
    assert rec.value == pytest.approx(dh * r * radius**2 / (lam * ts), rel=1e-14)
    assert rec.threshold == pytest.approx(0.75 * R_GAS * ts / e, rel=1e-14)
    assert rec.verdict == ("pass" if rec.value < rec.threshold else "fail")
    big = cr.anderson_internal_heat(1e4 * r, radius, dh, e, lam, ts)
    assert big.verdict == "fail"


def test_apparent_activation_energy_from_the_closed_form():
    # Source: Weisz & Prater (1954); Levenspiel (1999) ch. 18: E_app -> E/2 in strong pore
    # diffusion and -> E without it. Checked by differentiating ln(eta k) of the Thiele
    # sphere (mpmath, 40 digits) with k = A exp(-E/(R T)).
    e = 120e3

    def ln_rate(temp, a_factor):
        k = a_factor * mp.e ** (-e / (R_GAS * temp))
        phi = mp.sqrt(k)  # R^2/D_e = 1
        return mp.log(_eta_sphere_mp(phi) * k)

    with mp.workdps(40):
        cases = ((mp.mpf(10) ** 16, cr.apparent_activation_energy_strong_diffusion(e)),
                 (mp.mpf(1e-6), e))
        for a_factor, expected in cases:
            temp = mp.mpf(600)
            slope = mp.diff(lambda inv_t: ln_rate(1 / inv_t, a_factor), 1 / temp)
            assert float(-R_GAS * slope) == pytest.approx(expected, rel=2e-3)
    assert cr.apparent_activation_energy_strong_diffusion(e) == e / 2


@pytest.mark.parametrize("order", [0.0, 0.5, 1.0, 2.0, 3.0])
def test_apparent_order_from_the_asymptote(order):
    # Source: strong-diffusion asymptote of an order-n slab (Aris 1975, vol. 1; Levenspiel
    # 1999 ch. 18): r_obs = (1/L) sqrt(2 D_e k c_s^(n+1)/(n+1)); d ln r/d ln c_s.
    def ln_rate(ln_c):
        c = mp.e**ln_c
        return mp.log(mp.sqrt(2 * 1e-6 * 5.0 * c ** (order + 1) / (order + 1)) / 1e-3)

    with mp.workdps(30):
        slope = float(mp.diff(ln_rate, mp.log(7)))
    assert cr.apparent_order_strong_diffusion(order) == pytest.approx(slope, rel=1e-12)


# --- inversion helper ---------------------------------------------------------------

ROUND_TRIPS = [
    # (name, g, x_true): g monotone on x > 0, target = g(x_true)
    ("cube", lambda x: x**3, 0.37),
    ("cube_large", lambda x: x**3, 4.2e6),
    ("exp_decreasing", lambda x: math.exp(-x), 12.5),
    ("sphere_eta", lambda p: float(_eta_sphere_mp(p)), 3.7),
    ("sphere_observable_modulus", lambda p: float(_eta_sphere_mp(p) * mp.mpf(p) ** 2), 0.02),
    ("tanh_over_x", lambda x: math.tanh(x) / x, 250.0),
    ("log_increasing", lambda x: math.log(x), 1e-9),
]


@pytest.mark.parametrize("name, g, x_true", ROUND_TRIPS, ids=[r[0] for r in ROUND_TRIPS])
def test_inversion_round_trip(name, g, x_true):
    # Round trip: x -> g(x) -> invert -> x, to 1e-10 (Brent 1973 via scipy.optimize.brentq).
    res = cr.invert_monotone(g, g(x_true))
    assert res.success and res.status == 0
    assert res.x == pytest.approx(x_true, rel=1e-10)
    assert res.bracket[0] <= res.x <= res.bracket[1]
    assert res.function_calls < 200


def test_inversion_starting_far_away():
    res = cr.invert_monotone(lambda x: x**2, 4e-8, x0=1e6)
    assert res.success and res.x == pytest.approx(2e-4, rel=1e-10)


@pytest.mark.parametrize("g, target, status", [
    (lambda x: 1.0 / (1.0 + x), 2.0, 1),  # target above the range of g
    (lambda x: math.atan(x), 2.0, 1),  # bounded function never reaches pi/2 + ...
    (lambda x: float("nan"), 1.0, 2),
    (lambda x: x if x < 10 else float("inf"), 1e3, 2),
])
def test_inversion_reports_instead_of_raising(g, target, status):
    res = cr.invert_monotone(g, target)
    assert not res.success and res.status == status and res.x is None
    assert res.message == cr.INVERSION_STATUS[status]


def test_every_inversion_status_has_a_message_and_limits_are_checked():
    assert set(cr.INVERSION_STATUS) == {0, 1, 2, 3}
    assert all(isinstance(m, str) and m for m in cr.INVERSION_STATUS.values())
    with pytest.raises(PhysicsInputError):
        cr.invert_monotone(lambda x: x, 1.0, limits=(0.0, 1.0))
    with pytest.raises(PhysicsInputError):
        cr.invert_monotone(lambda x: x, float("nan"))


def test_intrinsic_rate_constant_from_observed_rate():
    # Use case (Weisz & Prater 1954): from r_obs find k with eta(phi(k)) k c_s = r_obs,
    # then check against the forward closed form evaluated by mpmath.
    radius, de, cs, k_true = 3e-3, 2e-7, 15.0, 40.0

    def observed(k):
        phi = radius * math.sqrt(k / de)
        return float(_eta_sphere_mp(phi)) * k * cs

    res = cr.invert_monotone(observed, observed(k_true))
    assert res.success and res.x == pytest.approx(k_true, rel=1e-10)
    assert np.isfinite(res.residual)


@pytest.mark.parametrize("m", [0, 1, 2])
@pytest.mark.parametrize("phi_true", [1e-4, 0.3, 2.0, 40.0, 3e4])
def test_first_order_inference_round_trip(m, phi_true):
    # Forward: eta from the classic closed forms in mpmath (Aris 1975: slab tanh(phi)/phi,
    # cylinder 2 I1/(phi I0), sphere 3 (phi coth phi - 1)/phi^2); r_obs = eta k c_s.
    length, de, cs = 2e-3, 1e-6, 25.0
    k_true = phi_true**2 * de / length**2
    with mp.workdps(40):
        p = mp.mpf(phi_true)
        eta = {0: mp.tanh(p) / p, 1: 2 * mp.besseli(1, p) / (p * mp.besseli(0, p)),
               2: 3 * (p * mp.coth(p) - 1) / p**2}[m]
        eta = float(eta)
    res = cr.intrinsic_rate_constant_first_order(eta * k_true * cs, length, de, cs, m)
    assert res.success and res.status == 0
    assert res.rate_constant == pytest.approx(k_true, rel=1e-10)
    assert res.effectiveness_factor == pytest.approx(eta, rel=1e-10)
    assert res.thiele_modulus == pytest.approx(phi_true, rel=1e-10)


def test_first_order_inference_zero_rate():
    res = cr.intrinsic_rate_constant_first_order(0.0, 1e-3, 1e-6, 10.0, 2)
    assert res.success and res.rate_constant == 0.0 and res.effectiveness_factor == 1.0
