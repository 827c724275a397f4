"""Numerical reaction-diffusion solver: closed forms, dead zones, multiplicity, film, ring."""

import math
import time

import numpy as np
import pytest
from scipy import integrate, optimize, special

from service.physics import bvp, closed_form, kinetics
from service.physics.errors import PhysicsInputError

SHAPES = [0, 1, 2]


def solve(law, m, **kw):
    return bvp.solve_reaction_diffusion(law, m, 1.0, 1.0, 1.0, **kw)


# ----------------------------------------------------------------- independent references
def shooting_states(F, m, phi, u_low=1e-9, points=50):
    """Every steady state of u'' + (m/s) u' = F(u) on s in [0, phi], u(phi) = 1, by plain
    shooting: solve_ivp (DOP853, rtol 1e-12) from the centre value u0 to the point s* where
    u = 1; the states are the roots of s*(u0) = phi (scan of ln u0, then brentq).
    Returns [(u0, eta)] with eta = (m + 1) u'(s*)/phi (surface flux form)."""

    def shot(u0, rtol=1e-12):
        s0 = 1e-7
        f0 = F(u0)
        y0 = [u0 + f0 * s0**2 / (2 * (m + 1)), f0 * s0 / (m + 1)]
        hit = lambda s, y: y[0] - 1.0
        hit.terminal = True
        sol = integrate.solve_ivp(lambda s, y: [y[1], F(y[0]) - m * y[1] / s], [s0, 60.0], y0,
                                  method="DOP853", rtol=rtol, atol=1e-4 * rtol * u0, events=hit)
        return sol.t_events[0][0], sol.y_events[0][0][1]

    grid = np.linspace(math.log(u_low), math.log(1 - 1e-6), points)
    d = np.array([shot(math.exp(z), 1e-7)[0] - phi for z in grid])  # coarse scan, polished below
    states = []
    for k in np.nonzero(d[:-1] * d[1:] < 0)[0]:
        z = optimize.brentq(lambda z: shot(math.exp(z))[0] - phi, grid[k], grid[k + 1], xtol=1e-14, rtol=1e-14)
        s_star, slope = shot(math.exp(z))
        states.append((math.exp(z), (m + 1) * slope / phi))
    return states


# ----------------------------------------------------------------- first order vs closed forms
@pytest.mark.parametrize("m", SHAPES)
@pytest.mark.parametrize("phi", [1e-3, 0.05, 0.7, 3.0, 30.0, 300.0, 1e3])
def test_numerical_first_order_matches_closed_form(m, phi):
    # Thiele (1939), Ind. Eng. Chem. 31, 916; Aris (1975) eqs. 3.10/3.14: tanh(phi)/phi,
    # 2 I1/(phi I0), 3 (phi coth phi - 1)/phi^2 (service.physics.closed_form).
    res = solve(kinetics.PowerLaw(phi**2, 1), m, force_numerical=True)
    assert res.success and res.method == "numerical" and res.status == "converged"
    assert res.effectiveness_factor == pytest.approx(closed_form.effectiveness_first_order(phi, m), rel=1e-6)
    assert res.residual < 1e-9


def test_closed_form_path_and_textbook_slab():
    # Thiele (1939): slab eta = tanh(phi)/phi, written here directly.
    res = solve(kinetics.PowerLaw(4.0, 1), 0, profile_points=11)
    assert res.method == "closed_form" and res.status == "closed_form"
    assert res.effectiveness_factor == pytest.approx(math.tanh(2.0) / 2.0, rel=1e-14)
    x = res.profile["position"]
    assert res.profile["concentration"] == pytest.approx(np.cosh(2 * x) / np.cosh(2.0), rel=1e-12)


def test_reversible_first_order_is_shifted_first_order():
    # Bischoff (1965): r = k (c - c_eq) behaves as first order in (c - c_eq) with phi = L sqrt(k/D_e).
    law = kinetics.ReversibleFirstOrder(9.0, 0.25)
    res = solve(law, 2, force_numerical=True)
    assert res.effectiveness_factor == pytest.approx(3 * (3 / math.tanh(3) - 1) / 9, rel=1e-6)


# ----------------------------------------------------------------- zero order, dead zones
def slab_dead_zone(phi):  # Aris (1975) Ch. 3: u = phi^2 (x - x_d)^2 / 2, x_d = 1 - sqrt(2)/phi
    return max(1 - math.sqrt(2) / phi, 0.0)


def sphere_dead_zone(phi):  # Aris (1975) Ch. 3: (1 - x_d)^2 (1 + 2 x_d) = 6/phi^2, cubic roots
    if phi**2 <= 6:
        return 0.0
    roots = np.roots([2.0, -3.0, 0.0, 1.0 - 6.0 / phi**2])
    real = [r.real for r in roots if abs(r.imag) < 1e-12 and 0 <= r.real < 1]
    return min(real)


@pytest.mark.parametrize("phi", [1.0, 1.5, 2.0, 3.0, 10.0, 100.0])
@pytest.mark.parametrize("m, dead", [(0, slab_dead_zone), (2, sphere_dead_zone)])
def test_zero_order_dead_zone_analytic(m, dead, phi):
    # eta = reacting volume fraction 1 - x_d^(m+1) (zero order rate is uniform where c > 0).
    xd = dead(phi)
    res = solve(kinetics.PowerLaw(phi**2, 0), m)
    assert res.method == "closed_form"
    assert res.effectiveness_factor == pytest.approx(1 - xd ** (m + 1), rel=1e-6, abs=1e-12)
    assert (res.dead_zone_fraction or 0.0) == pytest.approx(xd, abs=1e-9)


@pytest.mark.parametrize("m, dead", [(0, slab_dead_zone), (2, sphere_dead_zone)])
@pytest.mark.parametrize("phi", [1.5, 4.0, 20.0])
def test_zero_order_numerical_path(m, dead, phi):
    # Same analytic dead-zone solutions (Aris 1975, Ch. 3), through the numerical solver:
    # the rate is discontinuous at the front, so the mesh error is larger (tolerance 1e-4, dead zone 5e-3).
    xd = dead(phi)
    res = solve(kinetics.PowerLaw(phi**2, 0), m, force_numerical=True)
    assert res.success and res.method == "numerical"
    assert res.effectiveness_factor == pytest.approx(1 - xd ** (m + 1), rel=1e-4)
    assert (res.dead_zone_fraction or 0.0) == pytest.approx(xd, abs=5e-3)


def test_half_order_dead_zone_slab_analytic():
    # Slab, order n < 1: the front solution u = (p^2 (1-n)^2/(2(1+n)))^(1/(1-n)) (x - x_d)^(2/(1-n))
    # (Aris 1975, Ch. 3, first integral of u'' = phi^2 u^n) gives x_d = 1 - (2(1+n))^(1/2)/(phi (1-n)).
    n, phi = 0.5, 20.0
    xd = 1 - math.sqrt(2 * (1 + n)) / (phi * (1 - n))
    res = solve(kinetics.PowerLaw(phi**2, n), 0)
    # eta = (m+1) u'(1)/phi^2 with u'(1) = phi sqrt(2/(n+1)) (first integral)
    assert res.effectiveness_factor == pytest.approx(math.sqrt(2 / (n + 1)) / phi, rel=1e-5)
    assert res.dead_zone_fraction == pytest.approx(xd, abs=2e-3)


# ----------------------------------------------------------------- large generalized modulus
LARGE_LAWS = [
    ("order 0.5", lambda s: kinetics.PowerLaw(s, 0.5)),
    ("order 1", lambda s: kinetics.PowerLaw(s, 1.0)),
    ("order 2", lambda s: kinetics.PowerLaw(s, 2.0)),
    ("order 3", lambda s: kinetics.PowerLaw(s, 3.0)),
    ("LH m=1 K=2", lambda s: kinetics.LangmuirHinshelwood(s, 2.0, 1)),
    ("LH m=2 K=0.5", lambda s: kinetics.LangmuirHinshelwood(s, 0.5, 2)),
]


@pytest.mark.parametrize("m", SHAPES)
@pytest.mark.parametrize("name, make", LARGE_LAWS, ids=[n for n, _ in LARGE_LAWS])
def test_eta_times_generalized_modulus_tends_to_one(name, make, m):
    # Aris (1965), Bischoff (1965): eta -> 1/Phi for every shape and rate law; at Phi = 1e3 the
    # curvature correction m/(2(m+1)Phi) <= 3.4e-4 keeps eta Phi within 1e-3 of 1.
    Lc = 1.0 / (m + 1)
    unit = kinetics.generalized_modulus(Lc, make(1.0), 1.0, 1.0)
    law = make((1e3 / unit) ** 2)
    assert kinetics.generalized_modulus(Lc, law, 1.0, 1.0) == pytest.approx(1e3, rel=1e-12)
    res = solve(law, m, force_numerical=True)
    assert res.success
    assert res.effectiveness_factor * 1e3 == pytest.approx(1.0, abs=1e-3)


# ----------------------------------------------------------------- multiplicity
def test_langmuir_hinshelwood_isothermal_multiplicity():
    # Strongly adsorbing LH, r = k c/(1 + K c)^2, K c_s = 20, sphere (Aris 1975, Ch. 4:
    # isothermal multiplicity for non-monotone kinetics). Reference: plain solve_ivp shooting.
    K, phi = 20.0, 1.52
    F = lambda u: u * (1 + K) ** 2 / (1 + K * u) ** 2
    ref = shooting_states(F, 2, phi, u_low=1e-5)
    assert len(ref) == 3
    res = solve(kinetics.LangmuirHinshelwood(phi**2 * (1 + K) ** 2, K, 2), 2)
    assert res.success and res.search == "scan"
    assert len(res.steady_states) == 3
    ref = sorted(ref, key=lambda s: s[1])
    for st, (u0, eta) in zip(res.steady_states, ref):
        assert st.effectiveness_factor == pytest.approx(eta, rel=1e-5)
        assert st.center_concentration == pytest.approx(u0, rel=2e-3)
    assert [s.stable for s in res.steady_states] == [True, False, True]


WH = dict(prater_number=0.3, arrhenius_number=20.0, temperature=600.0)


def thermal_F(u, beta=0.3, gamma=20.0):  # Weisz & Hicks (1962): u exp(gamma beta (1-u)/(1 + beta (1-u)))
    return u * math.exp(gamma * beta * (1 - u) / (1 + beta * (1 - u)))


def test_weisz_hicks_three_steady_states():
    # Weisz & Hicks (1962), Chem. Eng. Sci. 17, 265: sphere, gamma = 20, beta = 0.3 has an S-shaped
    # eta(phi) curve; inside it three states. Reference: solve_ivp (DOP853, rtol 1e-12) shooting.
    phi = 0.865
    ref = sorted(shooting_states(thermal_F, 2, phi, u_low=1e-4), key=lambda s: s[1])
    assert len(ref) == 3
    res = solve(kinetics.PowerLaw(phi**2, 1), 2, **WH)
    assert res.success and len(res.steady_states) == 3
    for st, (u0, eta) in zip(res.steady_states, ref):
        assert st.effectiveness_factor == pytest.approx(eta, rel=1e-5)
        assert st.center_concentration == pytest.approx(u0, rel=1e-4)
        # Prater (1958): T_centre = T_s (1 + beta (1 - u_centre))
        assert st.center_temperature == pytest.approx(600.0 * (1 + 0.3 * (1 - u0)), rel=1e-6)
    # middle branch of the S-curve unstable, outer branches stable (Aris 1975, Ch. 4, unit Lewis number)
    assert [s.stable for s in res.steady_states] == [True, False, True]
    # headline rule: the stable state with the largest eta
    assert res.headline_index == 2 and res.effectiveness_factor == res.steady_states[2].effectiveness_factor
    assert all(s.effectiveness_factor > 1 for s in res.steady_states)


def test_weisz_hicks_single_state_eta_above_one():
    # Weisz & Hicks (1962): beyond the S-region (phi = 1.2) a single ignited state with eta > 1.
    phi = 1.2
    ref = shooting_states(thermal_F, 2, phi, u_low=1e-4)
    res = solve(kinetics.PowerLaw(phi**2, 1), 2, **WH)
    assert len(ref) == 1 and len(res.steady_states) == 1
    assert res.effectiveness_factor > 1
    assert res.effectiveness_factor == pytest.approx(ref[0][1], rel=1e-5)


# ----------------------------------------------------------------- external film and ring
@pytest.mark.parametrize("phi, biot", [(0.3, 0.5), (2.0, 5.0), (8.0, 20.0), (40.0, 100.0)])
def test_film_first_order_sphere_overall_effectiveness(phi, biot):
    # Aris (1975), Ch. 3 (sphere with an external film): eta_o = eta/(1 + eta phi^2/(3 Bi_m)),
    # eta from Thiele (1939): 3 (phi coth phi - 1)/phi^2.
    eta = 3 * (phi / math.tanh(phi) - 1) / phi**2
    ref = eta / (1 + eta * phi**2 / (3 * biot))
    res = solve(kinetics.PowerLaw(phi**2, 1), 2, mass_biot=biot, force_numerical=True)
    assert res.success and res.method == "numerical"
    assert res.overall_effectiveness == pytest.approx(ref, rel=1e-8)
    assert res.effectiveness_factor == pytest.approx(eta, rel=1e-8)
    assert res.steady_states[0].surface_concentration == pytest.approx(ref / eta, rel=1e-8)


@pytest.mark.parametrize("a", [0.2, 0.5, 0.8])
@pytest.mark.parametrize("phi", [0.3, 3.0, 30.0])
def test_ring_first_order_matches_bessel_solution(a, phi):
    # Hollow cylinder, both faces at c_s: u = A I0(phi x) + B K0(phi x), u(a) = u(1) = 1;
    # eta = 2 (u'(1) - a u'(a)) / (phi^2 (1 - a^2)) (Aris 1975, Ch. 3; scipy.special iv/kv).
    M = np.array([[special.iv(0, phi * a), special.kv(0, phi * a)], [special.iv(0, phi), special.kv(0, phi)]])
    A, B = np.linalg.solve(M, [1.0, 1.0])
    du = lambda x: phi * (A * special.iv(1, phi * x) - B * special.kv(1, phi * x))
    ref = 2 * (du(1.0) - a * du(a)) / (phi**2 * (1 - a * a))
    res = bvp.solve_reaction_diffusion(kinetics.PowerLaw(phi**2, 1), 1, 1.0, 1.0, 1.0, inner_radius_fraction=a)
    assert res.success
    assert res.effectiveness_factor == pytest.approx(ref, rel=1e-6)


def ring_states(F, a, phi, points=400):
    """Every steady state of (x u')' = phi^2 x F(u) on x in [a, 1], u(a) = u(1) = 1, by
    plain shooting from the inner face: solve_ivp (DOP853, rtol 1e-11) from u'(a) = q to
    x = 1; the states are the roots of u(1; q) = 1 (scan of q, then brentq).
    Returns [eta] with eta = 2 (u'(1) - a u'(a)) / (phi^2 (1 - a^2) F(1)), the mean rate
    over the wall's cross-section relative to the surface rate (the ODE integrated)."""

    def emptied(x, y):  # the shot used up the reactant: too steep a start, u(1) < 1
        return y[0] - 1e-9

    emptied.terminal = True

    def shot(q):
        sol = integrate.solve_ivp(lambda x, y: [y[1], phi**2 * F(y[0]) - y[1] / x], [a, 1.0],
                                  [1.0, q], method="DOP853", rtol=1e-11, atol=1e-13,
                                  events=emptied)
        if sol.status == 1:
            return -1.0, math.nan
        return sol.y[0, -1] - 1.0, sol.y[1, -1]

    qs = -np.linspace(1e-6, 3.0 * phi * math.sqrt(F(1.0)) * 2, points)
    d = np.array([shot(q)[0] for q in qs])
    etas = []
    for k in np.nonzero(d[:-1] * d[1:] < 0)[0]:
        q = optimize.brentq(lambda q: shot(q)[0], qs[k], qs[k + 1], xtol=1e-14, rtol=1e-14)
        etas.append(2 * (shot(q)[1] - a * q) / (phi**2 * (1 - a * a) * F(1.0)))
    return sorted(etas)


@pytest.mark.parametrize("a, phi, count", [(0.2, 1.75, 3), (0.5, 3.0, 3), (0.2, 1.5, 1)])
def test_ring_langmuir_hinshelwood_every_steady_state(a, phi, count):
    # A ring (both faces at c_s) with strongly adsorbing LH kinetics, r = k c/(1 + K c)^2,
    # K c_s = 20, has several steady states like the full shapes (Aris 1975, Ch. 4, isothermal
    # multiplicity for non-monotone kinetics). Reference: plain solve_ivp shooting from the
    # inner face (ring_states above); states, count and stability (outer branches stable).
    K = 20.0
    F = lambda u: u * (1 + K) ** 2 / (1 + K * u) ** 2
    ref = ring_states(F, a, phi)
    assert len(ref) == count
    res = bvp.solve_reaction_diffusion(kinetics.LangmuirHinshelwood(phi**2 * (1 + K) ** 2, K, 2), 1,
                                       1.0, 1.0, 1.0, inner_radius_fraction=a)
    assert res.success and res.search == "scan"
    assert [s.effectiveness_factor for s in res.steady_states] == pytest.approx(ref, rel=1e-5)
    if count == 3:
        assert [s.stable for s in res.steady_states] == [True, False, True]


def test_ring_weisz_hicks_three_steady_states():
    # An exothermic ring (Weisz & Hicks (1962) kinetics, gamma = 20, beta = 0.3; both faces at
    # surface conditions so the Prater relation holds): three states inside the S-region.
    # Reference: solve_ivp shooting from the inner face.
    a, phi = 0.3, 1.2
    ref = ring_states(thermal_F, a, phi)
    assert len(ref) == 3
    res = bvp.solve_reaction_diffusion(kinetics.PowerLaw(phi**2, 1), 1, 1.0, 1.0, 1.0,
                                       inner_radius_fraction=a, **WH)
    assert res.success and len(res.steady_states) == 3
    assert [s.effectiveness_factor for s in res.steady_states] == pytest.approx(ref, rel=1e-5)
    assert [s.stable for s in res.steady_states] == [True, False, True]


# ----------------------------------------------------------------- result object contract
def test_budget_exceeded_returns_quickly():
    t0 = time.monotonic()
    res = solve(kinetics.PowerLaw(0.865**2, 1), 2, time_budget=1e-5, **WH)
    assert time.monotonic() - t0 < 0.5
    assert res.status == "budget_exceeded" and not res.success
    assert res.message == bvp.STATUS_MESSAGES["budget_exceeded"]


def test_every_status_has_a_message():
    # Style rule 5 (one message table): every status the solver can return has a sentence.
    for status, message in bvp.STATUS_MESSAGES.items():
        assert isinstance(message, str) and message.endswith(".") and len(message) > 10
    assert bvp.SUCCESS_STATUSES <= set(bvp.STATUS_MESSAGES)
    import inspect
    import re
    used = set(re.findall(r'"([a-z_]+)"', inspect.getsource(bvp)))
    statuses = {"converged", "closed_form", "asymptotic", "budget_exceeded", "not_converged", "partially_converged"}
    assert statuses <= set(bvp.STATUS_MESSAGES) and statuses & used


def test_profile_and_fields():
    res = solve(kinetics.PowerLaw(9.0, 2), 2, profile_points=21)
    assert res.success and res.headline_index == 0 and res.nodes > 100
    prof = res.profile
    assert len(prof["position"]) == 21 and prof["concentration"][-1] == pytest.approx(1.0, rel=1e-14)
    assert prof["temperature"] is None and res.dead_zone_fraction is None
    assert np.all(np.diff(prof["concentration"]) > 0)


@pytest.mark.parametrize("kw", [dict(shape_exponent=3), dict(length=-1.0), dict(inner_radius_fraction=0.5),
                                dict(prater_number=-2.0), dict(time_budget=0.0)])
def test_bad_input_raises(kw):
    args = dict(rate_law=kinetics.PowerLaw(1.0, 1), shape_exponent=2, length=1.0,
                effective_diffusivity=1.0, concentration=1.0)
    args.update(kw)
    with pytest.raises(PhysicsInputError):
        bvp.solve_reaction_diffusion(**args)


@pytest.mark.parametrize("bim, bih", [(100.0, 20.0), (50.0, 25.0)])
def test_thermal_film_balances(bim, bih):
    # Film balances (Aris 1975, Ch. 4): mass Bi_m (1 - u_s) = eta_o phi^2/(m+1) (surface flux =
    # pellet rate), heat theta_s = 1 + beta (Bi_m/Bi_h)(1 - u_s); eta_o = eta F(u_s, theta_s) with
    # the Arrhenius factor exp(gamma (1 - 1/theta_s)).
    phi, beta, gamma, Tb = 0.6, 0.1, 20.0, 500.0
    res = bvp.solve_reaction_diffusion(kinetics.PowerLaw(phi**2, 1), 2, 1.0, 1.0, 1.0, mass_biot=bim,
                                       heat_biot=bih, prater_number=beta, arrhenius_number=gamma, temperature=Tb)
    assert res.success and res.steady_states
    for st in res.steady_states:
        us, theta_s = st.surface_concentration, st.surface_temperature / Tb
        assert bim * (1 - us) == pytest.approx(st.overall_effectiveness * phi**2 / 3, rel=1e-6)
        assert theta_s == pytest.approx(1 + beta * bim / bih * (1 - us), rel=1e-12)
        assert st.overall_effectiveness == pytest.approx(
            st.effectiveness_factor * us * math.exp(gamma * (1 - 1 / theta_s)), rel=1e-6)


def test_asymptotic_path_within_its_bound():
    # Bischoff (1965): eta -> 1/Phi; the solver switches to the asymptote above Phi = 1e6 and
    # reports a relative error bound 1/Phi.
    law = kinetics.PowerLaw(1e14, 2)
    Phi = kinetics.generalized_modulus(1 / 3, law, 1.0, 1.0)
    res = solve(law, 2)
    assert res.method == "asymptotic" and res.status == "asymptotic" and res.success
    assert abs(res.effectiveness_factor * Phi - 1) <= res.error_estimate


def test_hard_case_returns_a_result_object():
    # Solver contract (scipy solve_bvp style): non-convergence is a status, never an exception.
    res = bvp.solve_reaction_diffusion(kinetics.PowerLaw(1.0, 1), 0, 1.0, 1.0, 1.0, mass_biot=50.0, heat_biot=10.0,
                                       prater_number=0.6, arrhenius_number=30.0, temperature=500.0, time_budget=5.0)
    assert res.status in bvp.STATUS_MESSAGES and res.message == bvp.STATUS_MESSAGES[res.status]
    assert res.success == (res.status in bvp.SUCCESS_STATUSES)
    assert res.success == bool(res.steady_states)
