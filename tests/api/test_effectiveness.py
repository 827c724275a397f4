"""POST /v1/effectiveness end to end through the Flask test client."""

import copy
import math

import pytest

from service.physics.closed_form import effectiveness_first_order


def test_sphere_case_answers_with_units(client, sphere_case):
    response = client.post("/v1/effectiveness", json=sphere_case)
    assert response.status_code == 200
    body = response.get_json()
    # Independent check: Thiele modulus phi = R sqrt(k/De) and eta = 3/phi^2 (phi coth phi - 1)
    # (Thiele 1939; Fogler, Elements of Chemical Reaction Engineering, 5th ed., eq. 15-32).
    phi = 1.5e-3 * math.sqrt(12 / 1.2e-6)
    eta = 3 / phi**2 * (phi / math.tanh(phi) - 1)
    assert body["thiele_modulus"] == pytest.approx(phi, rel=1e-14)
    assert body["effectiveness_factor"] == pytest.approx(eta, rel=1e-12)
    assert body["generalized_modulus"] == pytest.approx(phi / 3, rel=1e-14)
    assert body["thiele_length"] == {"value": 1.5e-3, "unit": "m"}
    assert body["characteristic_length"]["value"] == pytest.approx(0.5e-3, rel=1e-15)
    assert body["observed_rate"]["unit"] == "mol/(m^3*s)"
    assert body["observed_rate"]["value"] == pytest.approx(eta * 12 * 40, rel=1e-12)
    assert body["regime"] == "transition"
    assert body["method"] == "closed_form"
    assert body["inputs"]["pellet"]["radius"] == {"value": 1.5e-3, "unit": "m"}
    assert [w["code"] for w in body["warnings"]] == ["TRANSITION_REGIME"]


def test_same_case_in_mm_and_m_gives_identical_numbers(client, sphere_case):
    in_mm = client.post("/v1/effectiveness", json=sphere_case).get_json()
    in_si = copy.deepcopy(sphere_case)
    in_si["pellet"]["radius"] = 0.0015
    in_si["kinetics"]["rate_constant"] = {"value": 12, "unit": "1/s"}
    in_si["transport"]["effective_diffusivity"] = 1.2e-6
    in_si["surface"]["concentration"] = {"value": 0.04, "unit": "mol/L"}
    in_si = client.post("/v1/effectiveness", json=in_si).get_json()
    for key in ("effectiveness_factor", "thiele_modulus", "generalized_modulus"):
        assert in_si[key] == pytest.approx(in_mm[key], rel=1e-15)
    assert in_si["observed_rate"]["value"] == pytest.approx(in_mm["observed_rate"]["value"], rel=1e-14)


@pytest.mark.parametrize(
    "pellet, m, length",
    [
        ({"shape": "sphere", "radius": "2 mm"}, 2, 2e-3),
        ({"shape": "cylinder", "radius": "2 mm"}, 1, 2e-3),
        ({"shape": "slab", "thickness": "4 mm"}, 0, 2e-3),
        ({"shape": "slab", "thickness": "2 mm", "exposed_faces": 1}, 0, 2e-3),
    ],
)
def test_each_shape_uses_its_own_length(client, sphere_case, pellet, m, length):
    sphere_case["pellet"] = pellet
    body = client.post("/v1/effectiveness", json=sphere_case).get_json()
    phi = length * math.sqrt(12 / 1.2e-6)
    assert body["thiele_length"]["value"] == pytest.approx(length, rel=1e-15)
    assert body["thiele_modulus"] == pytest.approx(phi, rel=1e-14)
    assert body["generalized_modulus"] == pytest.approx(phi / (m + 1), rel=1e-14)
    assert body["effectiveness_factor"] == effectiveness_first_order(body["thiele_modulus"], m)


def test_profile_points(client, sphere_case):
    sphere_case["options"] = {"profile_points": 5}
    body = client.post("/v1/effectiveness", json=sphere_case).get_json()
    profile = body["profile"]
    assert profile["position"]["unit"] == "m"
    assert len(profile["position"]["value"]) == 5
    assert profile["position"]["value"][-1] == pytest.approx(1.5e-3)
    assert profile["concentration"]["value"][-1] == pytest.approx(40.0, rel=1e-15)
    # The centre of a sphere: c/c_s = phi / sinh(phi) (Aris 1975, eq. 3.15).
    phi = body["thiele_modulus"]
    assert profile["concentration"]["value"][0] == pytest.approx(40 * phi / math.sinh(phi), rel=1e-13)


def test_strong_diffusion_warning_mentions_falsified_kinetics(client, sphere_case):
    sphere_case["pellet"]["radius"] = "10 mm"
    body = client.post("/v1/effectiveness", json=sphere_case).get_json()
    assert body["regime"] == "diffusion"
    (warning,) = [w for w in body["warnings"] if w["code"] == "STRONG_PORE_DIFFUSION"]
    assert warning["severity"] == "warning"
    assert "half the true activation energy" in warning["message"]
    assert "apparent order of 1" in warning["message"]


def test_kinetic_regime_has_no_regime_warning(client, sphere_case):
    sphere_case["pellet"]["radius"] = "0.05 mm"
    body = client.post("/v1/effectiveness", json=sphere_case).get_json()
    assert body["regime"] == "kinetic"
    assert body["effectiveness_factor"] > 0.99
    assert body["warnings"] == []


def test_out_of_common_range_input_is_flagged(client, sphere_case):
    sphere_case["surface"]["concentration"] = "2e5 mol/m^3"
    body = client.post("/v1/effectiveness", json=sphere_case).get_json()
    flagged = [w for w in body["warnings"] if w["code"] == "INPUT_OUTSIDE_COMMON_RANGE"]
    assert flagged and flagged[0]["field"] == "surface.concentration"


def test_catalyst_mass_basis_converts_with_density(client, sphere_case):
    sphere_case["kinetics"] = {
        "model": "power_law",
        "rate_constant": "0.01 m^3/(kg*s)",
        "rate_basis": "catalyst_mass",
        "pellet_density": "1200 kg/m^3",
    }
    body = client.post("/v1/effectiveness", json=sphere_case).get_json()
    assert body["inputs"]["kinetics"]["rate_constant"]["value"] == pytest.approx(12.0, rel=1e-15)
    assert body["thiele_modulus"] == pytest.approx(1.5e-3 * math.sqrt(12 / 1.2e-6), rel=1e-14)
