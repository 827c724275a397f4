"""Checks of service.physics.film against the ht library, published equations and
independent numerical solutions (scipy.integrate.solve_bvp)."""

import math

import ht
import numpy as np
import pytest
from scipy.integrate import solve_bvp

from service.physics import film
from service.physics.errors import PhysicsInputError

FLOWS = [  # invented gas and liquid cases: u, rho, mu, D_AB or lambda, d_p, eps
    (0.5, 1.2, 1.8e-5, 2.0e-5, 3e-3, 0.40),
    (2.0, 8.0, 2.5e-5, 5.0e-6, 6e-3, 0.38),
    (0.01, 998.0, 1.0e-3, 1.5e-9, 2e-3, 0.36),
]


@pytest.mark.parametrize("re, number", [(3.0, 0.7), (75.0, 1.0), (2000.0, 0.7), (500.0, 1200.0)])
def test_wakao_funazkri_matches_ht_wakao_kaguei_form(re, number):
    # Source: ht.Nu_Wakao_Kagei (Bell, ht library), Nu = 2 + 1.1 Pr^(1/3) Re^0.6 from
    # Wakao & Kaguei (1982); the mass form (Wakao & Funazkri 1978) has the same
    # constants with Sc in place of Pr.
    assert film.sherwood_wakao_funazkri(re, number) == pytest.approx(
        ht.Nu_Wakao_Kagei(re, number), rel=1e-13)
    assert film.nusselt_wakao_kaguei(re, number) == pytest.approx(
        ht.Nu_Wakao_Kagei(re, number), rel=1e-13)


def test_wakao_kaguei_documented_example():
    # Source: ht.Nu_Wakao_Kagei docstring example, Nu(Re=2000, Pr=0.7) = 95.40641328041248.
    assert film.nusselt_wakao_kaguei(2000.0, 0.7) == pytest.approx(95.40641328041248, rel=1e-13)


@pytest.mark.parametrize("u, rho, mu, _d, dp, eps", FLOWS)
def test_gnielinski_heat_matches_ht(u, rho, mu, _d, dp, eps):
    # Source: ht.Nu_packed_bed_Gnielinski (Gnielinski 1982 / VDI Heat Atlas 2010).
    lam, cp = 0.03, 1100.0
    pr = cp * mu / lam
    r = film.heat_transfer_coefficient(u, rho, mu, lam, cp, dp, eps, correlation="gnielinski")
    nu_ref = ht.Nu_packed_bed_Gnielinski(dp=dp, voidage=eps, vs=u, rho=rho, mu=mu, Pr=pr)
    assert r.groups["nusselt"] == pytest.approx(nu_ref, rel=1e-12)
    assert r.value == pytest.approx(nu_ref * lam / dp, rel=1e-12)


@pytest.mark.parametrize("u, rho, mu, dab, dp, eps", FLOWS)
def test_gnielinski_mass_by_analogy_with_ht(u, rho, mu, dab, dp, eps):
    # Source: ht.Nu_packed_bed_Gnielinski with Pr -> Sc (heat/mass analogy as stated
    # by Gnielinski 1982 and the VDI Heat Atlas).
    sc = mu / (rho * dab)
    r = film.mass_transfer_coefficient(u, rho, mu, dab, dp, eps, correlation="gnielinski")
    sh_ref = ht.Nu_packed_bed_Gnielinski(dp=dp, voidage=eps, vs=u, rho=rho, mu=mu, Pr=sc)
    assert r.value == pytest.approx(sh_ref * dab / dp, rel=1e-12)


@pytest.mark.parametrize("u, rho, mu, dab, dp, eps", FLOWS)
def test_dwivedi_upadhyay_j_factor_form(u, rho, mu, dab, dp, eps):
    # Source: Dwivedi & Upadhyay (1977), eps j_D = 0.765 Re^-0.82 + 0.365 Re^-0.386 with
    # j_D = (k_m/u) Sc^(2/3) (Chilton-Colburn definition); coefficients from memory.
    re = rho * u * dp / mu
    sc = mu / (rho * dab)
    j_d = (0.765 * re**-0.82 + 0.365 * re**-0.386) / eps
    r = film.mass_transfer_coefficient(u, rho, mu, dab, dp, eps, correlation="dwivedi_upadhyay")
    assert r.value == pytest.approx(j_d * u * sc ** (-2.0 / 3.0), rel=1e-12)


@pytest.mark.parametrize("re", [10.0, 30.0, 100.0, 300.0, 1000.0, 3000.0])
def test_two_mass_correlations_agree_for_gases(re):
    # Cross-check of two independent fits to packed-bed data (Wakao & Funazkri 1978;
    # Dwivedi & Upadhyay 1977): for gases (Sc 0.7-1) and eps = 0.4 they agree within
    # a few per cent over 10 < Re < 3000 (common practice: correlation scatter ~ 20 %).
    for sc in (0.7, 1.0):
        a = film.sherwood_wakao_funazkri(re, sc)
        b = film.sherwood_dwivedi_upadhyay(re, sc, 0.4)
        assert b == pytest.approx(a, rel=0.06)


def test_groups_and_definitions():
    # Definitions: Re = rho u d/mu, Sc = mu/(rho D), Sh = k d / D (e.g. Bird, Stewart &
    # Lightfoot, Transport Phenomena, 2nd ed., ch. 22).
    r = film.mass_transfer_coefficient(0.5, 1.2, 1.8e-5, 2e-5, 3e-3, 0.4)
    assert r.groups["reynolds"] == pytest.approx(1.2 * 0.5 * 3e-3 / 1.8e-5, rel=1e-15)
    assert r.groups["schmidt"] == pytest.approx(1.8e-5 / (1.2 * 2e-5), rel=1e-15)
    assert r.value * 3e-3 / 2e-5 == pytest.approx(r.groups["sherwood"], rel=1e-14)
    assert r.diagnostics == ()
    assert r.kind == "mass" and r.unit == "m/s"


def test_out_of_range_is_reported_not_raised():
    # Wakao & Funazkri fitted 3 < Re < 10000: Re = 0.6 is an extrapolation.
    r = film.mass_transfer_coefficient(0.01, 1.2, 1.8e-5, 2e-5, 9e-4, 0.4)
    assert r.groups["reynolds"] < 3
    assert [d.code for d in r.diagnostics] == ["CORRELATION_OUT_OF_RANGE"]
    assert r.diagnostics[0].severity == "warning"
    assert r.diagnostics[0].field == "reynolds_number"
    g = film.mass_transfer_coefficient(0.5, 1.2, 1.8e-5, 2e-5, 3e-3, 0.95, correlation="gnielinski")
    assert "voidage" in [d.field for d in g.diagnostics]


def test_every_registry_entry_is_complete():
    for registry, kind in ((film.MASS_TRANSFER_CORRELATIONS, "mass"),
                           (film.HEAT_TRANSFER_CORRELATIONS, "heat")):
        for name, corr in registry.items():
            assert corr.name == name and corr.kind == kind and corr.reference
            assert corr.reynolds_basis in ("superficial", "interstitial")
            assert math.isfinite(corr.number(100.0, 0.8, 0.4))


@pytest.mark.parametrize("kwargs, argument", [
    ({"correlation": "nope"}, "correlation"),
    ({"superficial_velocity": -1.0}, "superficial_velocity"),
    ({"voidage": 1.0}, "voidage"),
    ({"molecular_diffusivity": float("nan")}, "molecular_diffusivity"),
])
def test_bad_input_names_the_argument(kwargs, argument):
    args = dict(superficial_velocity=0.5, density=1.2, viscosity=1.8e-5,
                molecular_diffusivity=2e-5, particle_diameter=3e-3, voidage=0.4)
    args.update(kwargs)
    with pytest.raises(PhysicsInputError) as err:
        film.mass_transfer_coefficient(**args)
    assert err.value.argument == argument


@pytest.mark.parametrize("re, number, eps", [(0.0, 1.0, 0.4), (10.0, -1.0, 0.4), (10.0, 1.0, 1.2)])
def test_raw_correlations_reject_bad_groups(re, number, eps):
    with pytest.raises(PhysicsInputError):
        film.sherwood_gnielinski(re, number, eps)


def test_biot_numbers_by_definition():
    # Definitions Bi = k_m L / D_e and Bi_h = h L / lambda_e (Aris 1975, vol. 1).
    assert film.biot_number_mass(0.05, 1e-3, 1e-6) == pytest.approx(50.0, rel=1e-15)
    assert film.biot_number_heat(200.0, 1e-3, 0.4) == pytest.approx(0.5, rel=1e-15)


def _robin_bvp(phi, biot, m):
    """u'' + (m/x) u' = phi^2 u, u'(0) = 0, u'(1) = Bi (1 - u(1)), solved by scipy."""
    x = np.linspace(0.0, 1.0, 201)
    y0 = np.vstack([np.ones_like(x), np.zeros_like(x)])
    sing = np.array([[0.0, 0.0], [0.0, -float(m)]])
    sol = solve_bvp(
        lambda x, y: np.vstack([y[1], phi**2 * y[0]]),
        lambda ya, yb: np.array([ya[1], yb[1] - biot * (1.0 - yb[0])]),
        x, y0, S=sing if m else None, tol=1e-10, max_nodes=100000,
    )
    assert sol.success
    u1, du1 = sol.sol(1.0)
    return (m + 1) * du1 / phi**2, u1  # overall eta and c_s/c_b


def _eta_shape(phi, m):
    # Classic closed forms (Aris 1975, eqs. for slab, cylinder, sphere), first order.
    if m == 0:
        return math.tanh(phi) / phi
    if m == 1:
        from scipy.special import i0, i1
        return 2.0 * i1(phi) / (phi * i0(phi))
    return 3.0 * (phi / math.tanh(phi) - 1.0) / phi**2


@pytest.mark.parametrize("m", [0, 1, 2])
@pytest.mark.parametrize("phi, biot", [(0.5, 2.0), (2.0, 5.0), (6.0, 1.0), (3.0, 50.0)])
def test_overall_effectiveness_against_bvp_with_film(m, phi, biot):
    # Source: numerical solution of the reaction-diffusion equation with a film
    # boundary condition (scipy.integrate.solve_bvp, tol 1e-10); phi, Bi on the own length.
    eta_o_ref, us = _robin_bvp(phi, biot, m)
    eta = _eta_shape(phi, m)
    eta_o = film.overall_effectiveness_first_order_shape(eta, phi, biot, m)
    assert eta_o == pytest.approx(eta_o_ref, rel=1e-6)
    # Same case on V_p/S_p = L/(m+1): Phi = phi/(m+1), Bi_c = Bi/(m+1).
    eta_o_c = film.overall_effectiveness_first_order(eta, phi / (m + 1), biot / (m + 1))
    assert eta_o_c == pytest.approx(eta_o, rel=1e-13)
    # External share of the resistance = 1 - c_s/c_b.
    f_ext = film.external_resistance_fraction(eta, phi / (m + 1), biot / (m + 1))
    assert f_ext == pytest.approx(1.0 - us, rel=1e-5)


@pytest.mark.parametrize("phi, biot", [(0.3, 0.7), (2.0, 5.0), (40.0, 20.0)])
def test_sphere_overall_closed_form(phi, biot):
    # Source: Aris (1975) / Fogler (2016) ch. 15, sphere with external film:
    # eta_o = 3 (phi coth phi - 1) / (phi^2 (1 + (phi coth phi - 1)/Bi)).
    g = phi / math.tanh(phi) - 1.0
    ref = 3.0 * g / (phi**2 * (1.0 + g / biot))
    eta = _eta_shape(phi, 2)
    eta_o = film.overall_effectiveness_first_order_shape(eta, phi, biot, 2)
    assert eta_o == pytest.approx(ref, rel=1e-12)


def test_no_film_limit_and_arrays():
    # Analytic limit: Bi -> infinity gives eta_o = eta and no external resistance.
    assert film.overall_effectiveness_first_order(0.4, 3.0, math.inf) == 0.4
    assert film.external_resistance_fraction(0.4, 3.0, math.inf) == 0.0
    out = film.overall_effectiveness_first_order(np.array([1.0, 0.5]), np.array([0.1, 2.0]), 10.0)
    assert isinstance(out, np.ndarray) and out.shape == (2,)
    with pytest.raises(PhysicsInputError):
        film.overall_effectiveness_first_order(0.5, 1.0, 0.0)
