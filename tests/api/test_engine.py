"""The numerical engine through /v1/effectiveness: rate laws, several steady states, dead zones,
heat effects, the film and the solver budget, each against an independent computation."""

import math

import mpmath as mp
import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq


def _case(kinetics, radius="1 mm", de=1e-6, **extra):
    case = {"pellet": {"shape": "sphere", "radius": radius}, "kinetics": kinetics,
            "transport": {"effective_diffusivity": de}, "surface": {"concentration": 40}}
    case.update(extra)
    return case


def _shoot_sphere(phi2, rate):
    """Independent reference: shooting from the centre of a sphere with scipy's solve_ivp
    (DOP853, rtol 1e-12) on u'' + (2/x) u' = phi^2 f(u), u'(0) = 0, for every centre value
    u0 in (0, 1] that meets u(1) = 1; returns the effectiveness factors 3 u'(1) / (phi^2 f(1)).
    (Shooting method: e.g. Finlayson, Nonlinear Analysis in Chemical Engineering, 1980, ch. 3.)"""
    x0 = 1e-6

    def end(u0):
        du0 = phi2 * rate(u0) * x0 / 3.0  # series start u = u0 + phi^2 f(u0) x^2 / 6
        sol = solve_ivp(lambda x, y: [y[1], phi2 * rate(y[0]) - 2.0 * y[1] / x],
                        (x0, 1.0), [u0 + phi2 * rate(u0) * x0**2 / 6.0, du0],
                        method="DOP853", rtol=1e-12, atol=1e-14)
        return sol.y[0, -1], sol.y[1, -1]

    grid = np.logspace(-12, 0, 400)
    mismatch = [end(u0)[0] - 1.0 for u0 in grid]
    etas = []
    for a, b, fa, fb in zip(grid[:-1], grid[1:], mismatch[:-1], mismatch[1:]):
        if fa == 0 or fa * fb < 0:
            u0 = brentq(lambda z: end(z)[0] - 1.0, a, b, xtol=1e-15, rtol=1e-14)
            etas.append(3.0 * end(u0)[1] / (phi2 * rate(1.0)))
    return sorted(etas)


def test_three_steady_states_of_the_classic_non_isothermal_sphere(client):
    # Weisz & Hicks (1962), Chem. Eng. Sci. 17, 265: first order, gamma = 20, beta = 0.3 has three
    # steady states for moduli inside the S-shaped region; phi = 0.865 lies inside it.
    phi = 0.865
    k = phi**2 * 1e-6 / 1e-3**2
    body = client.post("/v1/effectiveness", json=_case(
        {"model": "power_law", "order": 1, "rate_constant": k},
        thermal={"prater_number": 0.3, "arrhenius_number": 20})).get_json()
    states = body["steady_states"]
    assert len(states) == 3
    assert [s["stable"] for s in states] == [True, False, True]
    beta, gamma = 0.3, 20.0
    reference = _shoot_sphere(
        phi**2, lambda u: u * np.exp(gamma * beta * (1 - u) / (1 + beta * (1 - u))))
    assert len(reference) == 3
    for state, eta in zip(states, reference):
        assert state["effectiveness_factor"] == pytest.approx(eta, rel=1e-5)
    assert body["effectiveness_factor"] == states[body["headline_state"]]["effectiveness_factor"]
    assert body["effectiveness_factor"] == max(s["effectiveness_factor"] for s in states if s["stable"])
    codes = {w["code"]: w for w in body["warnings"]}
    assert {"MULTIPLE_STEADY_STATES", "EFFECTIVENESS_ABOVE_ONE", "LARGE_TEMPERATURE_RISE"} <= set(codes)
    for code in ("MULTIPLE_STEADY_STATES", "EFFECTIVENESS_ABOVE_ONE"):
        assert codes[code]["severity"] == "caution"
        assert "licensed engineering practice" in codes[code]["message"]


def test_langmuir_hinshelwood_several_isothermal_states(client):
    # Strongly adsorbing Langmuir-Hinshelwood kinetics (exponent 2, K c_s = 20) has several
    # steady states without heat effects (Aris 1975, vol. 1, ch. 6; e.g. Luss 1971).
    K, cs, phi, L, de = 0.5, 40.0, 1.52, 1e-3, 1e-6
    k = phi**2 * de * (1 + K * cs) ** 2 / L**2  # phi^2 = L^2 r(c_s) / (D_e c_s)
    body = client.post("/v1/effectiveness", json=_case(
        {"model": "langmuir_hinshelwood", "rate_constant": k, "adsorption_constant": K,
         "exponent": 2})).get_json()
    states = body["steady_states"]
    assert len(states) == 3
    reference = _shoot_sphere(phi**2, lambda u: u * (1 + K * cs) ** 2 / (1 + K * cs * u) ** 2)
    assert len(reference) == 3
    for state, eta in zip(states, reference):
        assert state["effectiveness_factor"] == pytest.approx(eta, rel=1e-5)


@pytest.mark.parametrize("phi0", [1.5, 4.0, 12.0])
def test_zero_order_sphere_dead_zone(client, phi0):
    # Zero order in a sphere: u = 1 - phi0^2 (1 - x^2) / 6 while u > 0, i.e. phi0 <= sqrt(6);
    # beyond, a dead core of radius x_d with 1 - 3 x_d^2 + 2 x_d^3 = 6 / phi0^2 and eta = 1 - x_d^3
    # (Aris 1975, vol. 1, sec. 3.3; Levenspiel, Chemical Reaction Engineering, 3rd ed., ch. 18).
    k0 = phi0**2 * 1e-6 * 40 / 1e-3**2  # phi0^2 = R^2 k0 / (D_e c_s)
    body = client.post("/v1/effectiveness", json=_case(
        {"model": "power_law", "order": 0, "rate_constant": k0})).get_json()
    if phi0 <= math.sqrt(6):
        assert body["effectiveness_factor"] == pytest.approx(1.0, rel=1e-12)
        assert "dead_zone" not in body
    else:
        xd = brentq(lambda x: 1 - 3 * x**2 + 2 * x**3 - 6 / phi0**2, 0.0, 1.0, xtol=1e-15)
        assert body["effectiveness_factor"] == pytest.approx(1 - xd**3, rel=1e-6)
        assert body["dead_zone"]["fraction"] == pytest.approx(xd, rel=1e-6)
        assert body["dead_zone"]["radius"]["value"] == pytest.approx(xd * 1e-3, rel=1e-6)
        assert "DEAD_ZONE" in [w["code"] for w in body["warnings"]]


@pytest.mark.parametrize("kinetics", [
    {"model": "power_law", "order": 0.5, "rate_constant": 4e5},
    {"model": "power_law", "order": 2, "rate_constant": 2e4},
    {"model": "power_law", "order": 3, "rate_constant": 5e2},
    {"model": "langmuir_hinshelwood", "rate_constant": 5e6, "adsorption_constant": 0.05},
])
@pytest.mark.parametrize("pellet", [{"shape": "sphere", "radius": "5 mm"},
                                    {"shape": "cylinder", "radius": "5 mm"},
                                    {"shape": "slab", "thickness": "10 mm"}])
def test_generalized_modulus_makes_every_case_tend_to_one_over_modulus(client, kinetics, pellet):
    # Aris (1965) / Bischoff (1965) normalization: eta -> 1/Phi at large Phi for every shape
    # and rate law.
    case = _case(kinetics, de=1e-9)
    case["pellet"] = pellet
    body = client.post("/v1/effectiveness", json=case).get_json()
    assert body["generalized_modulus"] > 100
    assert body["effectiveness_factor"] * body["generalized_modulus"] == pytest.approx(
        1.0, abs=10.0 / body["generalized_modulus"])


@pytest.mark.parametrize("bi", [0.5, 5.0, 200.0])
def test_first_order_sphere_with_a_film_matches_the_robin_solution(client, bi):
    # Sphere, first order, film u'(1) = Bi (1 - u(1)): u = A sinh(phi x)/x with
    # A = Bi / (phi cosh phi + (Bi - 1) sinh phi), overall eta = 3 A (phi cosh phi - sinh phi)/phi^2
    # (Aris 1975, vol. 1, sec. 3.4), evaluated with mpmath at 40 digits.
    mp.mp.dps = 40
    radius, de, k = 1e-3, 1e-6, 25.0
    km = bi * de / radius
    case = _case({"model": "power_law", "order": 1, "rate_constant": k},
                 film={"mass_transfer_coefficient": km}, bulk={"concentration": 40})
    del case["surface"]
    body = client.post("/v1/effectiveness", json=case).get_json()
    phi = mp.mpf(radius) * mp.sqrt(mp.mpf(k) / mp.mpf(de))
    a = bi / (phi * mp.cosh(phi) + (bi - 1) * mp.sinh(phi))
    overall = 3 * a * (phi * mp.cosh(phi) - mp.sinh(phi)) / phi**2
    assert body["overall_effectiveness"] == pytest.approx(float(overall), rel=1e-10)
    # and the series-resistance form eta_o = eta / (1 + eta phi^2 / (3 Bi)) (Fogler, Elements of
    # Chemical Reaction Engineering, 5th ed., sec. 15.4)
    eta, p = body["effectiveness_factor"], body["thiele_modulus"]
    assert body["overall_effectiveness"] == pytest.approx(eta / (1 + eta * p**2 / (3 * bi)), rel=1e-12)
    assert body["film"]["mass_biot_number"] == pytest.approx(bi, rel=1e-12)
    assert body["observed_rate"]["value"] == pytest.approx(float(overall) * k * 40, rel=1e-10)
    assert body["surface_concentration"]["value"] == pytest.approx(40 * float(overall) / eta, rel=1e-10)


def test_maximum_temperature_rise_is_prater_times_surface_temperature(client):
    # Prater (1958), Chem. Eng. Sci. 8, 284: T_max - T_s = (-dH) D_e c_s / lambda_e = beta T_s.
    dh, de, cs, lam, ts = -150e3, 1e-6, 40.0, 0.4, 600.0
    case = _case({"model": "power_law", "order": 1, "rate_constant": 1.0},
                 thermal={"heat_of_reaction": dh, "activation_energy": 90e3,
                          "effective_thermal_conductivity": lam, "temperature": ts})
    body = client.post("/v1/effectiveness", json=case).get_json()
    beta = -dh * de * cs / (lam * ts)
    assert body["thermal"]["prater_number"] == pytest.approx(beta, rel=1e-14)
    assert body["thermal"]["arrhenius_number"] == pytest.approx(90e3 / (8.314462618 * ts), rel=1e-9)
    assert body["thermal"]["maximum_temperature_rise"]["value"] == pytest.approx(beta * ts, rel=1e-14)
    for state in body["steady_states"]:
        assert ts <= state["center_temperature"]["value"] <= ts * (1 + beta)


def test_tiny_budget_gives_503_and_a_batch_row_503(app):
    app.config["SOLVER_TIME_BUDGET"] = 1e-9
    client = app.test_client()
    case = _case({"model": "power_law", "order": 2, "rate_constant": 300.0})
    response = client.post("/v1/effectiveness", json=case)
    assert response.status_code == 503
    assert response.mimetype == "application/problem+json"
    assert "time budget" in response.get_json()["detail"]
    first_order = _case({"model": "power_law", "order": 1, "rate_constant": 12.0})
    body = client.post("/v1/effectiveness/batch", json={"cases": [first_order, case]}).get_json()
    assert [r["status"] for r in body["results"]] == [200, 503]


def test_states_close_to_the_fold_are_all_found(client):
    # Just past the upper fold of the S-curve (Weisz & Hicks 1962, gamma = 20, beta = 0.3) the
    # unstable and the upper stable state lie close together; a coarse scan of the centre value
    # can merge them. Reference: the independent solve_ivp shooting above.
    k = 0.39445
    phi2 = (1.5e-3) ** 2 * k / 1.2e-6
    case = _case({"model": "power_law", "order": 1, "rate_constant": k}, radius="1.5 mm", de=1.2e-6,
                 thermal={"prater_number": 0.3, "arrhenius_number": 20})
    states = client.post("/v1/effectiveness", json=case).get_json()["steady_states"]
    beta, gamma = 0.3, 20.0
    reference = _shoot_sphere(phi2, lambda u: u * np.exp(gamma * beta * (1 - u) / (1 + beta * (1 - u))))
    assert len(reference) == 3
    assert [s["stable"] for s in states] == [True, False, True]
    for state, eta in zip(states, reference):
        assert state["effectiveness_factor"] == pytest.approx(eta, rel=1e-5)


def test_a_batch_reports_budget_exhaustion_per_row(app):
    # Numerical rows share the batch's budget; once it is used up the remaining rows answer
    # 503 one by one, and the closed-form rows are answered regardless.
    app.config["BATCH_TIME_BUDGET"] = 1e-9
    client = app.test_client()
    numerical = _case({"model": "power_law", "order": 2, "rate_constant": 300.0})
    first_order = _case({"model": "power_law", "order": 1, "rate_constant": 12.0})
    body = client.post("/v1/effectiveness/batch",
                       json={"cases": [numerical, first_order, numerical]}).get_json()
    assert [r["status"] for r in body["results"]] == [503, 200, 503]
    assert "time budget" in body["results"][0]["errors"][0]["message"]


def test_exothermic_ring_reports_every_steady_state(client):
    """A ring (hollow cylinder, both faces at surface conditions) with heat effects is
    solved on its annulus, not estimated, and every steady state comes back with the
    caution. Reference: solve_ivp (DOP853) shooting from the inner face of
    (x u')' = phi^2 x u exp(gamma beta (1 - u)/(1 + beta (1 - u))) (Weisz & Hicks 1962
    kinetics, Prater relation), u(a) = u(1) = 1; the states are the roots over the slope."""
    from tests.physics.test_bvp import ring_states, thermal_F

    outer, inner, k, de = 2.5e-3, 0.5e-3, 0.18, 1e-6
    case = {"pellet": {"shape": "hollow_cylinder", "outer_radius": outer, "inner_radius": inner},
            "kinetics": {"model": "power_law", "order": 1, "rate_constant": k},
            "transport": {"effective_diffusivity": de}, "surface": {"concentration": 40},
            "thermal": {"prater_number": 0.3, "arrhenius_number": 20}}
    body = client.post("/v1/effectiveness", json=case).get_json()
    ref = ring_states(thermal_F, inner / outer, outer * math.sqrt(k / de))
    assert len(ref) == 3
    states = body["steady_states"]
    assert [s["effectiveness_factor"] for s in states] == pytest.approx(ref, rel=1e-5)
    assert [s["stable"] for s in states] == [True, False, True]
    codes = [w["code"] for w in body["warnings"]]
    assert "MULTIPLE_STEADY_STATES" in codes and "GENERALIZED_MODULUS_ESTIMATE" not in codes
    assert body["effectiveness_factor"] == pytest.approx(ref[2], rel=1e-5)  # stable, largest
