"""Rate laws, their registry, the dimensionless form and the generalized modulus."""

import math

import numpy as np
import pytest
from scipy import integrate

from service.physics import kinetics
from service.physics.errors import PhysicsInputError

LAWS = [
    kinetics.PowerLaw(2.5, 0.0),
    kinetics.PowerLaw(2.5, 0.5),
    kinetics.PowerLaw(2.5, 1.0),
    kinetics.PowerLaw(0.3, 2.0),
    kinetics.PowerLaw(0.01, 3.0),
    kinetics.LangmuirHinshelwood(4.0, 0.2, 1),
    kinetics.LangmuirHinshelwood(4.0, 0.2, 2),
    kinetics.ReversibleFirstOrder(3.0, 1.5),
]


@pytest.mark.parametrize("law", LAWS, ids=repr)
def test_integral_matches_quadrature(law):
    # Reference: scipy.integrate.quad (adaptive Gauss-Kronrod) of the rate itself.
    ref, _ = integrate.quad(lambda c: float(law.rate(c)), 2.0, 9.0, epsabs=0, epsrel=1e-13)
    assert float(law.integral(2.0, 9.0)) == pytest.approx(ref, rel=1e-10)


@pytest.mark.parametrize("law", LAWS, ids=repr)
def test_derivative_matches_central_difference(law):
    # Reference: 4th-order central difference (Abramowitz & Stegun 25.3.6).
    c, h = 5.0, 1e-3
    r = lambda x: float(law.rate(x))
    ref = (-r(c + 2 * h) + 8 * r(c + h) - 8 * r(c - h) + r(c - 2 * h)) / (12 * h)
    assert float(law.derivative(c)) == pytest.approx(ref, rel=1e-9, abs=1e-12)


@pytest.mark.parametrize(
    "order, unit",
    [(1, "1/s"), (2, "m^3/(mol*s)"), (0, "mol/(m^3*s)"), (0.5, "mol^0.5/(m^1.5*s)"), (3, "m^6/(mol^2*s)")],
)
def test_power_law_rate_constant_unit(order, unit):
    # Dimensional analysis of r = k c^n: [k] = (mol/m^3)^(1-n) / s (Fogler 2016, Sec. 3.3).
    assert kinetics.power_law_rate_constant_unit(order) == unit
    assert kinetics.RATE_LAWS["power_law"].rate_constant_unit(order=order) == unit


@pytest.fixture(scope="module")
def ureg():
    pint = pytest.importorskip("pint")
    return pint.UnitRegistry()


@pytest.mark.parametrize("order", [0, 0.5, 1, 1.5, 2, 3])
def test_power_law_unit_parses_with_pint(order, ureg):
    # Reference: pint's own dimensional analysis (the web layer's parser).
    q = ureg(kinetics.power_law_rate_constant_unit(order))
    expected = (ureg("mol/m^3") ** (1 - order)) / ureg("s")
    assert q.dimensionality == expected.dimensionality


def test_registry_builds_every_model_and_rejects_unknown():
    params = {
        "power_law": dict(rate_constant=1.0, order=2),
        "langmuir_hinshelwood": dict(rate_constant=1.0, adsorption_constant=0.5, exponent=2),
        "reversible_first_order": dict(rate_constant=1.0, equilibrium_concentration=0.2),
    }
    assert set(params) == set(kinetics.RATE_LAWS)
    for name, p in params.items():
        spec = kinetics.RATE_LAWS[name]
        assert set(spec.fields) <= set(p) and spec.description
        law = kinetics.build_rate_law(name, **p)
        assert float(law.rate(1.0)) > 0
    with pytest.raises(PhysicsInputError) as err:
        kinetics.build_rate_law("michaelis", rate_constant=1.0)
    assert err.value.argument == "model"
    with pytest.raises(PhysicsInputError):
        kinetics.build_rate_law("power_law", rate_constant=1.0, order=-1)
    with pytest.raises(PhysicsInputError):
        kinetics.build_rate_law("langmuir_hinshelwood", rate_constant=1.0, adsorption_constant=1.0, exponent=3)


def test_generalized_modulus_first_order_reduces_to_thiele():
    # Aris (1965), Ind. Eng. Chem. Fundam. 4, 227: Phi = (V_p/S_p) sqrt(k/D_e) for first order.
    Lc, k, De = 0.5e-3, 12.0, 1.2e-6
    ref = Lc * math.sqrt(k / De)
    assert kinetics.generalized_modulus(Lc, kinetics.PowerLaw(k, 1), 40.0, De) == pytest.approx(ref, rel=1e-14)
    # reversible first order: the same with k (Bischoff 1965, AIChE J. 11, 351, eq. for r = k(c - c_eq))
    assert kinetics.generalized_modulus(Lc, kinetics.ReversibleFirstOrder(k, 10.0), 40.0, De) == pytest.approx(ref, rel=1e-14)


@pytest.mark.parametrize("n", [0.0, 0.5, 2.0, 3.0])
def test_generalized_modulus_power_law(n):
    # Bischoff (1965): Phi = (V_p/S_p) sqrt((n+1)/2 k c_s^(n-1)/D_e) for r = k c^n.
    Lc, k, De, cs = 1e-3, 0.7, 2e-6, 30.0
    ref = Lc * math.sqrt((n + 1) / 2 * k * cs ** (n - 1) / De)
    assert kinetics.generalized_modulus(Lc, kinetics.PowerLaw(k, n), cs, De) == pytest.approx(ref, rel=1e-13)


def test_normalized_rate_and_thiele_relation():
    law = kinetics.LangmuirHinshelwood(5.0, 0.3, 2)
    norm = kinetics.normalized_rate(law, 8.0)
    assert float(norm.f(1.0)) == pytest.approx(1.0, rel=1e-15)  # definition f(1) = 1
    # phi^2 = L^2 r(c_s)/(D_e c_s); Phi = phi/((m+1) sqrt(2 int f du)) (Bischoff 1965)
    L, De = 2e-3, 1e-6
    phi = math.sqrt(kinetics.thiele_modulus_squared(L, law, 8.0, De))
    Phi = kinetics.generalized_modulus(L / 3, law, 8.0, De)
    assert kinetics.generalized_from_thiele(phi, 2, norm) == pytest.approx(Phi, rel=1e-13)
    assert not kinetics.normalized_rate(kinetics.LangmuirHinshelwood(1.0, 2.0, 2), 5.0).is_monotone()
    with pytest.raises(PhysicsInputError):
        kinetics.normalized_rate(kinetics.ReversibleFirstOrder(1.0, 5.0), 4.0)


def test_arrhenius_wrapper():
    # Arrhenius law k(T)/k(T_s) = exp(E/R (1/T_s - 1/T)) with gamma = E/(R T_s) (any kinetics text).
    E, R, Ts, T = 80e3, 8.314462618, 500.0, 540.0
    law = kinetics.ArrheniusRate(kinetics.PowerLaw(2.0, 1), Ts, E / (R * Ts))
    ratio = float(law.rate(3.0, T) / law.rate(3.0, Ts))
    assert ratio == pytest.approx(math.exp(E / R * (1 / Ts - 1 / T)), rel=1e-13)
    assert law.rate_constant_unit() == "1/s"
    assert np.allclose(law.rate(np.array([1.0, 2.0]), Ts), [2.0, 4.0], rtol=1e-15)
