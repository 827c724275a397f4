"""Inversions over evaluate: intrinsic rate constant from an observed rate, lab-data
criteria, largest pellet for a target effectiveness. No Flask here."""

import math

import numpy as np
import pytest
from scipy import optimize, special

from service.physics import criteria
from service.physics.case import Case
from service.physics.diagnostics import WARNING_CODES
from service.physics.geometry import SHAPES
from service.physics.inversion import (
    DIMENSION_POWERS, Bed, ExternalConditions, HeatData, anderson_from_groups,
    apparent_reaction_order, intrinsic_rate_constant, lab_data_check, largest_pellet,
    scaled_dimensions, table_scales,
)
from service.physics.kinetics import LangmuirHinshelwood, PowerLaw

DE = 1.2e-6  # m^2/s  (invented demo data throughout)
CS = 40.0  # mol/m^3


# Independent first-order closed forms (Thiele 1939, Ind. Eng. Chem. 31, 916; Aris 1975, The
# Mathematical Theory of Diffusion and Reaction in Permeable Catalysts, Vol. 1, ch. 3), written
# out here from the textbook formulas, phi on the shape's own length.
def eta_sphere(phi):
    return 3.0 / phi**2 * (phi / math.tanh(phi) - 1.0)


def eta_slab(phi):
    return math.tanh(phi) / phi


def eta_cylinder(phi):
    return 2.0 / phi * special.i1e(phi) / special.i0e(phi)


SHAPE_CASES = [
    ("sphere", {"radius": 1.5e-3}, 1.5e-3, eta_sphere, 3),
    ("cylinder", {"radius": 1.5e-3}, 1.5e-3, eta_cylinder, 2),
    ("slab", {"thickness": 3e-3, "exposed_faces": 2}, 1.5e-3, eta_slab, 1),
]


def first_order_case(shape, dims, k=1.0):
    return Case(shape, dims, "power_law", {"order": 1.0, "rate_constant": k}, DE, CS)


@pytest.mark.parametrize("shape, dims, length, eta_of, _", SHAPE_CASES)
@pytest.mark.parametrize("k", [1e-3, 12.0, 3e4])  # kinetic, transition, diffusion regime
def test_rate_constant_from_an_independently_computed_rate(shape, dims, length, eta_of, _, k):
    phi = length * math.sqrt(k / DE)
    r_obs = eta_of(phi) * k * CS  # r_obs = eta k c_s (definition of eta, Aris 1975 ch. 3)
    inv = intrinsic_rate_constant(first_order_case(shape, dims), r_obs)
    assert inv.success and inv.status == 0
    assert inv.rate_constant == pytest.approx(k, rel=1e-11)
    assert abs(inv.relative_residual) < 1e-12
    assert inv.function_calls < 80


def test_unreachable_rate_is_a_result_not_an_exception():
    inv = intrinsic_rate_constant(first_order_case("sphere", {"radius": 1e-3}), 1e40)
    assert not inv.success and inv.status == 1
    assert inv.rate_constant is None and inv.highest_rate < 1e40


def test_bad_observed_rate_names_the_argument():
    from service.physics.errors import PhysicsInputError

    with pytest.raises(PhysicsInputError) as err:
        intrinsic_rate_constant(first_order_case("sphere", {"radius": 1e-3}), -1.0)
    assert err.value.argument == "observed_rate"


@pytest.mark.parametrize("shape, dims, length, eta_of, m_plus_1", SHAPE_CASES)
def test_weisz_prater_modulus_is_eta_times_modulus_squared(shape, dims, length, eta_of, m_plus_1):
    k = 12.0
    phi = length * math.sqrt(k / DE)
    eta = eta_of(phi)
    check = lab_data_check(first_order_case(shape, dims), eta * k * CS)
    # Weisz & Prater (1954), Adv. Catal. 6: for first order C_WP = eta phi^2 on the same
    # length; on V_p/S_p = L/(m+1) the modulus is Phi = phi/(m+1) (Aris 1957).
    assert check.weisz_prater_modulus == pytest.approx(eta * (phi / m_plus_1) ** 2, rel=1e-12)
    assert check.weisz_prater_modulus_own_length == pytest.approx(eta * phi**2, rel=1e-12)
    names = [c["name"] for c in check.criteria]
    assert names == ["weisz_prater_characteristic", "effectiveness_factor"]
    # The 1/9 threshold on V_p/S_p is the sphere's 1 on its radius (Fogler 2016, ch. 15).
    assert check.criteria[0]["threshold"] == pytest.approx(1 / 9, rel=1e-15)


@pytest.mark.parametrize("radius, verdict", [(5e-5, "pass"), (1.5e-3, "fail")])
def test_effectiveness_criterion_uses_095(radius, verdict):
    k = 12.0
    phi = radius * math.sqrt(k / DE)
    check = lab_data_check(first_order_case("sphere", {"radius": radius}),
                           eta_sphere(phi) * k * CS)
    (eta_check,) = [c for c in check.criteria if c["name"] == "effectiveness_factor"]
    assert eta_check["threshold"] == 0.95  # common practice
    assert eta_check["value"] == pytest.approx(eta_sphere(phi), rel=1e-12)
    assert eta_check["verdict"] == verdict


def test_external_and_heat_criteria_by_hand():
    radius, k, km, cb = 1.5e-3, 12.0, 0.05, 41.0
    r_obs = eta_sphere(radius * math.sqrt(k / DE)) * k * CS
    dh, e_act, lam, ts, h, tb = -1.2e5, 8.0e4, 0.4, 600.0, 150.0, 598.0
    check = lab_data_check(
        first_order_case("sphere", {"radius": radius}), r_obs,
        external=ExternalConditions(km, cb, h, tb),
        heat=HeatData(dh, e_act, lam, ts), heat_effects=True)
    by_name = {c["name"]: c for c in check.criteria}
    # Steady film balance k_m (c_b - c_s) S_p = r_obs V_p (Fogler 2016, ch. 14; chapter from memory).
    c_s = cb - r_obs * (radius / 3) / km
    assert check.surface_concentration == pytest.approx(c_s, rel=1e-14)
    # Mears (1971) eq. for the film: r_obs R n / (k_m c_b) < 0.15, n = 1.
    assert by_name["mears_external_mass"]["value"] == pytest.approx(
        r_obs * radius / (km * cb), rel=1e-12)
    # Anderson (1963): |dH| r_obs R^2 / (lambda_e T_s) < 0.75 R_g T_s / E.
    rg = 8.314462618
    assert by_name["anderson_internal_heat"]["value"] == pytest.approx(
        abs(dh) * r_obs * radius**2 / (lam * ts), rel=1e-12)
    assert by_name["anderson_internal_heat"]["threshold"] == pytest.approx(
        0.75 * rg * ts / e_act, rel=1e-12)
    # Mears (1971) heat: |dH| r_obs R E / (h T_b^2 R_g) < 0.15.
    assert by_name["mears_external_heat"]["value"] == pytest.approx(
        abs(dh) * r_obs * radius * e_act / (h * tb**2 * rg), rel=1e-12)
    (warning,) = check.diagnostics
    assert warning.code == "INVERSION_WITH_HEAT_EFFECTS" and warning.code in WARNING_CODES


def test_anderson_in_groups_is_the_dimensional_form():
    # beta = -dH D_e c_s/(lambda_e T_s) (Prater 1958), gamma = E/(R_g T_s): the ratio
    # value/threshold of Anderson (1963) equals |beta| gamma C_WP(R) / 0.75.
    r_obs, radius, dh, e_act, lam, ts = 250.0, 2e-3, -9e4, 7e4, 0.3, 550.0
    dimensional = criteria.anderson_internal_heat(r_obs, radius, dh, e_act, lam, ts)
    beta = -dh * DE * CS / (lam * ts)
    gamma = e_act / (criteria.GAS_CONSTANT * ts)
    groups = anderson_from_groups(r_obs * radius**2 / (DE * CS), beta, gamma)
    assert groups.value / groups.threshold == pytest.approx(
        dimensional.value / dimensional.threshold, rel=1e-12)
    assert groups.verdict == dimensional.verdict


@pytest.mark.parametrize("law, c, expected", [
    (PowerLaw(3.0, 2.0), 7.0, 2.0),  # d ln(k c^n)/d ln c = n (definition of order)
    (PowerLaw(3.0, 0.5), 7.0, 0.5),
    # r = k c/(1 + K c): d ln r/d ln c = 1/(1 + K c) (differentiating the LH form)
    (LangmuirHinshelwood(3.0, 0.2, 1), 7.0, 1 / (1 + 0.2 * 7.0)),
])
def test_apparent_reaction_order(law, c, expected):
    assert apparent_reaction_order(law, c) == pytest.approx(expected, rel=1e-12)


def test_every_registered_dimension_knows_how_it_scales():
    for spec in SHAPES.values():
        for name in (*spec.dimensions, *spec.optional):
            assert name in DIMENSION_POWERS, (spec.name, name)


def test_scaling_keeps_proportions_and_counts():
    dims = {"volume": 8e-9, "external_area": 2.4e-5}
    scaled = scaled_dimensions(dims, 2.0)
    # V ~ s^3, S ~ s^2, so V/S ~ s (geometric similarity)
    assert scaled == {"volume": 6.4e-8, "external_area": 9.6e-5}
    assert scaled_dimensions({"thickness": 1e-3, "exposed_faces": 1}, 3.0) == {
        "thickness": 3e-3, "exposed_faces": 1}


@pytest.mark.parametrize("target", [0.3, 0.8, 0.99])
def test_largest_sphere_against_an_independent_root(target):
    k = 12.0
    case = first_order_case("sphere", {"radius": 1.5e-3}, k)
    answer = largest_pellet(case, target)
    # phi* with eta_sphere(phi*) = target by scipy's brentq on the textbook formula
    # (Thiele 1939), R = phi* sqrt(D_e/k).
    phi = optimize.brentq(lambda p: eta_sphere(p) - target, 1e-3, 1e4, xtol=1e-15, rtol=1e-15)
    assert answer.status == "found"
    assert answer.largest.dimensions["radius"] == pytest.approx(phi * math.sqrt(DE / k), rel=1e-10)
    assert answer.largest.effectiveness_factor == pytest.approx(target, abs=1e-12)
    # Sphere: sphericity 1 (Wadell 1935), d_p = 2R.
    assert answer.sphericity == pytest.approx(1.0, rel=1e-14)
    assert answer.equivalent_particle_diameter == pytest.approx(
        2 * answer.largest.dimensions["radius"], rel=1e-14)


def test_statuses_at_both_ends_of_the_search():
    tiny_k = first_order_case("sphere", {"radius": 1.5e-3}, 1e-12)
    assert largest_pellet(tiny_k, 0.9).status == "every_size_meets_target"
    assert largest_pellet(first_order_case("sphere", {"radius": 1.5e-3}, 12.0),
                          1 - 1e-13).status == "target_not_reached"


def test_rows_rate_per_reactor_volume_and_scales():
    bed = Bed(0.4, 1.2, 1.8e-5, 0.5)
    scales = table_scales(0.1, 10.0, 5, "log")
    assert scales[0] == 0.1 and scales[-1] == pytest.approx(10.0, rel=1e-15)
    assert np.allclose(np.diff(np.log(scales)), math.log(100) / 4, rtol=1e-12)
    k = 12.0
    rows = largest_pellet(first_order_case("sphere", {"radius": 1.5e-3}, k), 0.5, bed, scales).rows
    for row in rows:
        phi = 1.5e-3 * row.scale * math.sqrt(k / DE)
        # rate per reactor volume = (1 - eps) eta r(c_s): the pellets fill 1 - eps of the bed
        # (definition of the bed voidage), each delivering eta r(c_s) per pellet volume.
        assert row.observed_rate_per_reactor_volume == pytest.approx(
            0.6 * eta_sphere(phi) * k * CS, rel=1e-12)


def test_solve_monotone_walks_one_way_and_steps_around_failures():
    from service.physics.inversion import solve_monotone

    calls = []

    def g(x):  # ln x (analytic, monotone), not computable on 10 < x < 20
        calls.append(x)
        return math.nan if 10 < x < 20 else math.log(x)

    root = solve_monotone(g, math.log(100.0), 1.0, (1e-6, 1e6), increasing=True)
    assert root.status == 0
    assert root.x == pytest.approx(100.0, rel=1e-13)  # exp(ln 100) = 100
    assert min(calls) >= 1.0  # never walked away from the target
    # A target beyond the limit in the walking direction: status 1 with the edge value.
    beyond = solve_monotone(g, math.log(1e7), 1.0, (1e-6, 1e6), increasing=True)
    assert (beyond.status, beyond.edge) == (1, 1e6)
