"""Checks of service.physics.diffusivity and species against published worked examples,
experimental data, the original equation forms and kinetic-theory limits."""

import math

import numpy as np
import pytest

from service.physics import diffusivity as dif
from service.physics.errors import PhysicsInputError
from service.physics.species import (SPECIES, diffusion_volume_from_atoms, species)

BAR = 1e5
ATM = 101325.0


def test_fuller_worked_example_allyl_chloride_in_air():
    # Source: Poling, Prausnitz & O'Connell, The Properties of Gases and Liquids, 5th ed.,
    # Example 11-3: allyl chloride (C3H5Cl, M = 76.53, sum v = 80.25) in air (M = 28.97,
    # sum v = 19.7) at 298 K and 1 bar: Fuller gives 0.096 cm^2/s, experiment 0.098
    # cm^2/s (values from memory).
    d = dif.binary_gas_diffusivity(298.0, 1.0 * BAR, 76.53e-3, 28.97e-3, 80.25, 19.7)
    assert d * 1e4 == pytest.approx(0.096, rel=0.01)
    assert d * 1e4 == pytest.approx(0.098, rel=0.05)


@pytest.mark.parametrize("a, b, d_exp_cm2", [
    # Source: Marrero & Mason (1972), J. Phys. Chem. Ref. Data 1, 3 (recommended
    # values at 298 K, 1 atm; values from memory). Fuller's typical error is ~5 %
    # (Poling et al. 5th ed., Table 11-3 discussion).
    ("CO2", "N2", 0.167),
    ("H2", "N2", 0.78),
    ("O2", "N2", 0.20),
])
def test_fuller_against_experiment(a, b, d_exp_cm2):
    sa, sb = species(a), species(b)
    d = dif.binary_gas_diffusivity(298.15, ATM, sa.molar_mass, sb.molar_mass,
                                   sa.diffusion_volume, sb.diffusion_volume)
    assert d * 1e4 == pytest.approx(d_exp_cm2, rel=0.06)


@pytest.mark.parametrize("t, p", [(298.0, ATM), (700.0, 3e6), (1200.0, 5e4)])
def test_fuller_matches_the_1966_form_within_its_rounding(t, p):
    # Source: Fuller, Schettler & Giddings (1966) Ind. Eng. Chem. 58(5) 18, original form
    # D [cm^2/s] = 1.00e-3 T^1.75 (1/M_A + 1/M_B)^0.5 / (P[atm] (V_A^(1/3)+V_B^(1/3))^2);
    # the Poling constant 0.00143 (bar) agrees with it within 0.25 %.
    ma, mb, va, vb = 28.0101, 2.01588, 18.0, 6.12
    ref_cm2 = 1.00e-3 * t**1.75 * math.sqrt(1 / ma + 1 / mb) / (
        (p / ATM) * (va ** (1 / 3) + vb ** (1 / 3)) ** 2)
    d = dif.binary_gas_diffusivity(t, p, ma * 1e-3, mb * 1e-3, va, vb)
    assert d * 1e4 == pytest.approx(ref_cm2, rel=2.5e-3)


def test_fuller_scaling_and_arrays():
    # Analytic scaling of the Fuller equation: D ~ T^1.75 / P; symmetric in A and B.
    base = dif.binary_gas_diffusivity(300.0, BAR, 0.028, 0.002, 18.5, 6.12)
    assert dif.binary_gas_diffusivity(600.0, 2 * BAR, 0.028, 0.002, 18.5, 6.12) == pytest.approx(
        base * 2**1.75 / 2, rel=1e-14)
    swapped = dif.binary_gas_diffusivity(300.0, BAR, 0.002, 0.028, 6.12, 18.5)
    assert swapped == pytest.approx(base, rel=1e-15)
    arr = dif.binary_gas_diffusivity(np.array([300.0, 600.0]), BAR, 0.028, 0.002, 18.5, 6.12)
    assert arr.shape == (2,)


@pytest.mark.parametrize("d_pore, t, m", [(10e-9, 600.0, 28.0e-3), (2e-9, 300.0, 2.016e-3),
                                          (1e-6, 900.0, 78.11e-3)])
def test_knudsen_diffusivity_satterfield_form(d_pore, t, m):
    # Source: Satterfield (1970), Mass Transfer in Heterogeneous Catalysis, ch. 2:
    # D_K = 9700 r[cm] sqrt(T/M) = 4850 d[cm] sqrt(T/M) cm^2/s (4850 is rounded: 4850.2).
    ref = 4850.0 * (d_pore * 100.0) * math.sqrt(t / (m * 1e3)) * 1e-4
    assert dif.knudsen_diffusivity(d_pore, t, m) == pytest.approx(ref, rel=2e-4)


def test_bosanquet_and_effective_diffusivity():
    # Bosanquet (Pollard & Present 1948): resistances in series; limits D_K >> D_AB and
    # D_AB >> D_K recover the smaller one. D_e = eps D / tau (Satterfield 1970, ch. 1).
    assert dif.pore_diffusivity(1e-5, 1e-5) == pytest.approx(5e-6, rel=1e-15)
    assert dif.pore_diffusivity(1e-5, 1e5) == pytest.approx(1e-5, rel=1e-9)
    assert dif.pore_diffusivity(1e5, 1e-6) == pytest.approx(1e-6, rel=1e-9)
    assert dif.effective_diffusivity(0.5, 4.0, 2e-6) == pytest.approx(2.5e-7, rel=1e-15)
    with pytest.raises(PhysicsInputError) as err:
        dif.effective_diffusivity(1.2, 4.0, 2e-6)
    assert err.value.argument == "porosity"
    with pytest.raises(PhysicsInputError) as err:
        dif.effective_diffusivity(0.5, 0.5, 2e-6)
    assert err.value.argument == "tortuosity"


@pytest.mark.parametrize("porosity, tortuosity, fields", [
    (0.5, 3.0, []),
    (0.1, 3.0, ["transport.pore.porosity"]),
    (0.9, 10.0, ["transport.pore.porosity", "transport.pore.tortuosity"]),
    (0.4, 1.2, ["transport.pore.tortuosity"]),
])
def test_pore_structure_diagnostics(porosity, tortuosity, fields):
    # Common practice ranges (Satterfield 1970): porosity 0.2-0.8, tortuosity 1.5-8.
    diags = dif.pore_structure_diagnostics(porosity, tortuosity)
    assert [d.field for d in diags] == fields
    assert all(d.code == "INPUT_OUTSIDE_COMMON_RANGE" for d in diags)


def test_mean_free_path_of_air():
    # Source: Hinds, Aerosol Technology, 2nd ed. (1999), sec. 2.3: mean free path of air
    # at 293 K and 101.3 kPa is 0.066 um (value from memory). Hard-sphere kinetic theory
    # with the Lennard-Jones sigma is a screening estimate: 10 %.
    lam = dif.mean_free_path(293.15, ATM, SPECIES["air"].collision_diameter)
    assert lam == pytest.approx(0.066e-6, rel=0.10)
    # Kinetic theory: lambda ~ T / P exactly.
    lam2 = dif.mean_free_path(586.3, 2 * ATM, SPECIES["air"].collision_diameter)
    assert lam2 == pytest.approx(lam, rel=1e-14)


@pytest.mark.parametrize("kn, regime", [(1e-3, "molecular"), (0.05, "transition"),
                                        (5.0, "transition"), (50.0, "knudsen")])
def test_regime_thresholds(kn, regime):
    # Common practice thresholds (Satterfield 1970): Kn < 0.01 molecular, Kn > 10 Knudsen.
    assert dif.diffusion_regime(kn) == regime


def test_pore_diffusion_chain_is_consistent():
    # Whole chain checked against its published pieces, independently re-evaluated:
    # Satterfield's 4850 d sqrt(T/M), Bosanquet, eps/tau, Kn = lambda/d.
    co, h2 = SPECIES["CO"], SPECIES["H2"]
    r = dif.pore_diffusion(600.0, 10e-9, 0.5, 3.0, co, h2, pressure=2e6)
    dk = 4850.0 * 1e-6 * math.sqrt(600.0 / 28.0101) * 1e-4
    assert r.knudsen_diffusivity == pytest.approx(dk, rel=2e-4)
    series = 1 / r.molecular_diffusivity + 1 / r.knudsen_diffusivity
    assert 1 / r.pore_diffusivity == pytest.approx(series, rel=1e-14)
    assert r.effective_diffusivity == pytest.approx(0.5 / 3.0 * r.pore_diffusivity, rel=1e-14)
    assert r.knudsen_number_basis == "mean_free_path"
    lam = 1.380649e-23 * 600.0 / (math.sqrt(2) * math.pi * h2.collision_diameter**2 * 2e6)
    assert r.knudsen_number == pytest.approx(lam / 10e-9, rel=1e-12)
    assert r.regime == "transition" and r.diagnostics == ()


def test_pore_diffusion_with_given_molecular_diffusivity():
    r = dif.pore_diffusion(600.0, 1e-6, 0.5, 3.0, SPECIES["toluene"], molecular_diffusivity=1e-5)
    assert r.molecular_diffusivity == 1e-5
    assert r.knudsen_number_basis == "diffusivity_ratio"
    assert r.knudsen_number == pytest.approx(1e-5 / r.knudsen_diffusivity, rel=1e-15)
    with pytest.raises(PhysicsInputError) as err:
        dif.pore_diffusion(600.0, 1e-6, 0.5, 3.0, SPECIES["toluene"])
    assert err.value.argument == "molecular_diffusivity"


@pytest.mark.parametrize("t, mu, mb, phi, va", [(298.15, 0.89e-3, 18.015e-3, 2.6, 34.0e-6),
                                               (330.0, 0.45e-3, 32.04e-3, 1.9, 96.0e-6),
                                               (293.0, 0.6e-3, 78.11e-3, 1.0, 140.0e-6)])
def test_wilke_chang_unit_conversion(t, mu, mb, phi, va):
    # Source: Wilke & Chang (1955) AIChE J. 1, 264, printed form (Poling et al. 5th ed.,
    # eq. 11-9.1): D [cm^2/s] = 7.4e-8 (phi M_B[g/mol])^0.5 T / (eta[cP] V_A[cm^3/mol]^0.6).
    ref_cm2 = 7.4e-8 * math.sqrt(phi * mb * 1e3) * t / (mu * 1e3 * (va * 1e6) ** 0.6)
    d = dif.liquid_diffusivity_wilke_chang(t, mu, mb, phi, va)
    assert d == pytest.approx(ref_cm2 * 1e-4, rel=1e-12)


def test_wilke_chang_co2_in_water():
    # Source: CO2 in water at 25 C, D = 1.92e-9 m^2/s (e.g. Cussler, Diffusion, 3rd ed.,
    # Table 5.2-1; value from memory); V_b(CO2) = 34.0 cm^3/mol (Le Bas, value from
    # memory); water viscosity 0.89 mPa s. Wilke-Chang error is ~10 % (Poling et al.).
    d = dif.liquid_diffusivity_wilke_chang(298.15, 0.89e-3, 18.015e-3,
                                           dif.ASSOCIATION_FACTORS["water"], 34.0e-6)
    assert d == pytest.approx(1.92e-9, rel=0.10)


def test_species_table_molar_masses_and_volumes():
    # Source: IUPAC standard atomic weights (H 1.008, C 12.011, N 14.007, O 15.999,
    # S 32.06); diffusion volumes summed from Poling et al. Table 11-1 increments.
    atoms = {"H2": {"H": 2}, "N2": {"N": 2}, "O2": {"O": 2}, "CO": {"C": 1, "O": 1},
             "CO2": {"C": 1, "O": 2}, "H2O": {"H": 2, "O": 1}, "NH3": {"N": 1, "H": 3},
             "CH4": {"C": 1, "H": 4}, "C2H4": {"C": 2, "H": 4}, "C2H6": {"C": 2, "H": 6},
             "C3H8": {"C": 3, "H": 8}, "SO2": {"S": 1, "O": 2}, "benzene": {"C": 6, "H": 6},
             "toluene": {"C": 7, "H": 8}, "methanol": {"C": 1, "H": 4, "O": 1}}
    weights = {"H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "S": 32.06}
    for name, composition in atoms.items():
        m = sum(weights[a] * n for a, n in composition.items()) * 1e-3
        assert SPECIES[name].molar_mass == pytest.approx(m, rel=1e-3), name
    for name in ("CH4", "C2H4", "C2H6", "C3H8", "methanol"):
        assert SPECIES[name].diffusion_volume == pytest.approx(
            diffusion_volume_from_atoms(atoms[name]), rel=1e-12)
    for name in ("benzene", "toluene"):
        assert SPECIES[name].diffusion_volume == pytest.approx(
            diffusion_volume_from_atoms(atoms[name], rings=1), rel=1e-12)
    for s in SPECIES.values():
        assert 1e-3 < s.molar_mass < 0.2 and s.diffusion_volume > 0
        assert s.collision_diameter is None or 2e-10 < s.collision_diameter < 7e-10


def test_unknown_species_and_bad_input():
    with pytest.raises(PhysicsInputError) as err:
        species("unobtainium")
    assert err.value.argument == "species"
    with pytest.raises(PhysicsInputError) as err:
        dif.knudsen_diffusivity(-1e-9, 300.0, 0.028)
    assert err.value.argument == "pore_diameter"
    with pytest.raises(PhysicsInputError) as err:
        dif.binary_gas_diffusivity(300.0, float("inf"), 0.028, 0.002, 18.5, 6.12)
    assert err.value.argument == "pressure"
