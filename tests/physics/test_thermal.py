"""Prater and Arrhenius numbers, the Prater temperature rise."""

import math

import numpy as np
import pytest
from scipy import constants

from service.physics import thermal
from service.physics.errors import PhysicsInputError


def test_prater_number_definition_and_sign():
    # Prater (1958), Chem. Eng. Sci. 8, 284: beta = (-dH) D_e c_s / (lambda_e T_s); invented data.
    dH, De, cs, lam, Ts = -120e3, 2.0e-6, 25.0, 0.35, 550.0
    beta = thermal.prater_number(dH, De, cs, lam, Ts)
    assert beta == pytest.approx(120e3 * 2.0e-6 * 25.0 / (0.35 * 550.0), rel=1e-15)
    assert thermal.prater_number(-dH, De, cs, lam, Ts) == pytest.approx(-beta, rel=1e-15)  # endothermic
    # Prater (1958): the largest rise T_max - T_s = (-dH) D_e c_s / lambda_e = beta T_s
    assert thermal.maximum_temperature_rise(beta, Ts) == pytest.approx(120e3 * 2.0e-6 * 25.0 / 0.35, rel=1e-14)


def test_arrhenius_number_uses_codata_gas_constant():
    # Reference: scipy.constants.R (CODATA 2018).
    assert thermal.GAS_CONSTANT == pytest.approx(constants.R, rel=1e-12)
    assert thermal.arrhenius_number(90e3, 600.0) == pytest.approx(90e3 / (constants.R * 600.0), rel=1e-12)


def test_prater_relation_and_film_surface_temperature():
    # Prater (1958) relation theta = 1 + beta (1 - u) at u_s = theta_s = 1.
    u = np.array([0.0, 0.3, 1.0])
    assert np.allclose(thermal.prater_temperature_ratio(u, 0.2), 1 + 0.2 * (1 - u), rtol=1e-15)
    # Film balances (Aris 1975, Ch. 4): k_m (c_b - c_s) (-dH) = h (T_s - T_b)
    # => theta_s - 1 = beta_b (Bi_m/Bi_h) (1 - u_s), with beta_b = (-dH) D_e c_b/(lambda T_b).
    dH, De, cb, lam, Tb, L, km, h = -1e5, 1e-6, 20.0, 0.4, 500.0, 2e-3, 0.05, 150.0
    us = 0.7
    Ts = Tb + km * (cb - cb * us) * (-dH) / h
    beta = thermal.prater_number(dH, De, cb, lam, Tb)
    theta_s = thermal.film_surface_temperature_ratio(us, beta, km * L / De, h * L / lam)
    assert theta_s == pytest.approx(Ts / Tb, rel=1e-13)
    assert thermal.film_surface_temperature_ratio(us, beta, 3.0, None) == 1.0
    assert float(thermal.arrhenius_factor(1.1, 20.0)) == pytest.approx(math.exp(20 * (1 - 1 / 1.1)), rel=1e-15)


@pytest.mark.parametrize("args", [(-1e5, 0.0, 1.0, 1.0, 500.0), (-1e5, 1e-6, 1.0, -1.0, 500.0),
                                  (float("nan"), 1e-6, 1.0, 1.0, 500.0)])
def test_prater_number_rejects_bad_input(args):
    with pytest.raises(PhysicsInputError):
        thermal.prater_number(*args)
    with pytest.raises(PhysicsInputError):
        thermal.arrhenius_number(-5.0, 300.0)
