"""POST /v1/diagnose end to end: the lab-data check inverts /v1/effectiveness exactly."""

import copy
import math

import pytest

# Invented demo data: the "Kestrel Ridge" pilot-plant case of conftest, plus other shapes.
SHAPES = [
    {"shape": "sphere", "radius": "1.5 mm"},
    {"shape": "cylinder", "radius": "1.2 mm"},
    {"shape": "slab", "thickness": "0.4 mm", "exposed_faces": 1},
    {"shape": "hollow_cylinder", "outer_radius": "3 mm", "inner_radius": "1 mm", "length": "5 mm"},
]


def diagnose_body(case, observed_rate):
    body = copy.deepcopy(case)
    body["kinetics"].pop("rate_constant")
    body["observed_rate"] = observed_rate
    return body


def round_trip(client, case):
    """Rate from /v1/effectiveness -> /v1/diagnose; returns (effectiveness, diagnose) bodies."""
    forward = client.post("/v1/effectiveness", json=case)
    if forward.status_code == 422:
        return forward, None
    forward = forward.get_json()
    back = client.post("/v1/diagnose", json=diagnose_body(case, forward["observed_rate"]))
    assert back.status_code == 200, back.get_json()
    return forward, back.get_json()


@pytest.mark.parametrize("pellet", SHAPES, ids=lambda p: p["shape"])
@pytest.mark.parametrize("k", [0.05, 12.0, 4000.0])  # kinetic, transition, diffusion
def test_first_order_round_trip(client, sphere_case, pellet, k):
    sphere_case["pellet"] = pellet
    sphere_case["kinetics"]["rate_constant"] = f"{k!r} 1/s"
    forward, back = round_trip(client, sphere_case)
    # The brief's acceptance criterion: k recovered to 1e-8 relative (inverse of the forward
    # computation); eta then agrees with the forward answer.
    assert back["intrinsic_rate_constant"] == {"value": pytest.approx(k, rel=1e-8), "unit": "1/s"}
    assert back["effectiveness_factor"] == pytest.approx(forward["effectiveness_factor"], rel=1e-8)
    assert back["regime"] == forward["regime"]


@pytest.mark.parametrize("kinetics", [
    {"model": "power_law", "order": 2, "rate_constant": "3e-4 m^3/(mol*s)"},
    {"model": "langmuir_hinshelwood", "rate_constant": "12 1/s",
     "adsorption_constant": "0.02 m^3/mol", "exponent": 1},
], ids=["power_law_order_2", "langmuir_hinshelwood"])
def test_nonlinear_round_trip(client, sphere_case, kinetics):
    sphere_case["kinetics"] = kinetics
    forward, back = round_trip(client, sphere_case)
    if back is None:
        pytest.skip(f"/v1/effectiveness answers 422 for {kinetics['model']} "
                    f"{kinetics.get('order', '')} until the rate-law extension lands: "
                    f"{forward.get_json()['errors']}")
    k_unit = forward["inputs"]["kinetics"]["rate_constant"]
    assert back["intrinsic_rate_constant"]["unit"] == k_unit["unit"]
    assert back["intrinsic_rate_constant"]["value"] == pytest.approx(k_unit["value"], rel=1e-8)


def test_weisz_prater_is_eta_times_modulus_squared(client, sphere_case):
    k, radius, de, cs = 12.0, 1.5e-3, 1.2e-6, 40.0
    phi = radius * math.sqrt(k / de)
    eta = 3 / phi**2 * (phi / math.tanh(phi) - 1)  # Thiele (1939) sphere, first order
    body = diagnose_body(sphere_case, {"value": eta * k * cs, "unit": "mol/(m^3*s)"})
    answer = client.post("/v1/diagnose", json=body).get_json()
    # Weisz & Prater (1954), Adv. Catal. 6: C_WP = eta Phi^2 for first order, Phi on V_p/S_p
    # = R/3 here (the service's basis), and eta phi^2 on the radius (the classic form).
    assert answer["weisz_prater_modulus"] == pytest.approx(eta * (phi / 3) ** 2, rel=1e-10)
    assert answer["weisz_prater_modulus_thiele_length"] == pytest.approx(eta * phi**2, rel=1e-10)
    assert answer["weisz_prater_basis"] == "characteristic_length"
    wp = answer["criteria"][0]
    assert (wp["name"], wp["verdict"]) == ("weisz_prater_characteristic", "fail")
    assert wp["value"] == answer["weisz_prater_modulus"] and "Weisz & Prater" in wp["source"]


def test_answer_fields_and_notes(client, sphere_case):
    sphere_case["pellet"]["radius"] = "10 mm"  # strong pore diffusion
    forward, back = round_trip(client, sphere_case)
    for name in ("effectiveness_factor", "intrinsic_rate_constant", "weisz_prater_modulus",
                 "criteria", "thiele_modulus", "generalized_modulus", "regime", "warnings",
                 "inputs", "notes"):
        assert name in back, name
    assert back["regime"] == "diffusion"
    assert {c["name"] for c in back["criteria"]} == {"weisz_prater_characteristic",
                                                     "effectiveness_factor"}
    for c in back["criteria"]:
        assert set(c) == {"name", "value", "threshold", "verdict", "source"}
        assert c["verdict"] == "fail"
    text = " ".join(back["notes"])
    assert "E/2" in text and "(n + 1)/2" in text and "Weisz & Prater 1954" in text
    assert "STRONG_PORE_DIFFUSION" in [w["code"] for w in back["warnings"]]
    assert "rate_constant" not in back["inputs"]["kinetics"]
    assert back["inputs"]["observed_rate"]["unit"] == "mol/(m^3*s)"


def test_rate_per_catalyst_mass(client, sphere_case):
    forward = client.post("/v1/effectiveness", json=sphere_case).get_json()
    rho = 1250.0
    per_mass = forward["observed_rate"]["value"] / rho
    body = diagnose_body(sphere_case, f"{per_mass!r} mol/(kg*s)")
    body.update(observed_rate_basis="catalyst_mass", pellet_density=f"{rho} kg/m^3")
    answer = client.post("/v1/diagnose", json=body).get_json()
    assert answer["intrinsic_rate_constant"]["value"] == pytest.approx(12.0, rel=1e-8)
    assert answer["inputs"]["observed_rate"] == {"value": pytest.approx(per_mass, rel=1e-15),
                                                 "unit": "mol/(kg*s)"}


def _fields(response):
    assert response.status_code == 422
    assert response.mimetype == "application/problem+json"
    return {e["field"] for e in response.get_json()["errors"]}


@pytest.mark.parametrize("change, field", [
    (lambda b: b["kinetics"].update(rate_constant="12 1/s"), "kinetics.rate_constant"),
    (lambda b: b.pop("observed_rate"), "observed_rate"),
    (lambda b: b.update(observed_rate=-3.0), "observed_rate"),
    (lambda b: b.update(observed_rate=0), "observed_rate"),
    (lambda b: b.update(observed_rate="3 m"), "observed_rate"),
    (lambda b: b.update(observed_rate_basis="catalyst_mass"), "pellet_density"),
    (lambda b: b.update(observed_rate_basis="reactor"), "observed_rate_basis"),
    (lambda b: b.update(target_effectiveness=0.5), "target_effectiveness"),
    (lambda b: b["pellet"].update(radius="-1 mm"), "pellet.radius"),
    (lambda b: b.update(observed_rate="1e30 mol/(m^3*s)"), "observed_rate"),  # unreachable
])
def test_bad_requests_name_the_field(client, sphere_case, change, field):
    body = diagnose_body(sphere_case, "240 mol/(m^3*s)")
    change(body)
    assert field in _fields(client.post("/v1/diagnose", json=body))


def test_case_and_observed_rate_errors_are_reported_together(client, sphere_case):
    body = diagnose_body(sphere_case, "abc")
    body["pellet"]["radius"] = "-1 mm"
    assert _fields(client.post("/v1/diagnose", json=body)) == {"observed_rate", "pellet.radius"}


def test_unreachable_rate_message_names_observed_rate(client, sphere_case):
    body = diagnose_body(sphere_case, "1e30 mol/(m^3*s)")
    problem = client.post("/v1/diagnose", json=body).get_json()
    assert "observed_rate" in problem["detail"]
    assert problem["errors"][0]["message"].count("observed_rate") >= 1


@pytest.mark.parametrize("change, fields", [
    (lambda b: b.update(observed_rate=1e300), {"observed_rate"}),
    (lambda b: b.update(observed_rate=5e-324), {"observed_rate"}),
    (lambda b: b.update(pellet={"shape": "sphere", "radius": 1e300}),
     {"observed_rate", "pellet.radius"}),
    (lambda b: b.update(surface={"concentration": 0}), {"observed_rate"}),
], ids=["huge rate", "denormal rate", "sphere of 1e300 m", "zero concentration"])
def test_extreme_numbers_get_a_422_not_a_500(client, sphere_case, change, fields):
    # Design section 3: never a 500 for anything a caller can send.
    body = diagnose_body(sphere_case, 240.0)
    change(body)
    response = client.post("/v1/diagnose", json=body)
    assert response.status_code == 422, response.get_json()
    assert fields & {e["field"] for e in response.get_json()["errors"]}


def test_optional_film_and_thermal_values_are_read_through_the_field_table():
    from service.schemas.diagnose import optional_si

    body = {"surface": {"concentration": "0.04 mol/L"}, "film": {"no_such_field": "3 m/s"}}
    # 0.04 mol/L = 40 mol/m^3 (SI definition of the litre, 1 L = 1e-3 m^3)
    assert optional_si(body, "surface.concentration") == pytest.approx(40.0, rel=1e-15)
    assert optional_si(body, "film.no_such_field") is None  # no rule: block not offered
    assert optional_si(body, "bulk.concentration") is None  # absent


def test_round_trip_with_the_pore_structure(client, sphere_case):
    # Invented pore data; D_e comes from the pore model, the same on both legs.
    sphere_case["transport"] = {"pore": {
        "porosity": 0.5, "tortuosity": 3, "pore_diameter": "20 nm", "temperature": "500 K",
        "pressure": "1 bar", "species": "H2", "carrier": "N2"}}
    forward, back = round_trip(client, sphere_case)
    assert back["intrinsic_rate_constant"]["value"] == pytest.approx(12.0, rel=1e-8)
    assert back["diffusivity"]["effective_diffusivity"] == forward["diffusivity"]["effective_diffusivity"]


def test_film_criterion_and_film_surface_concentration(client, sphere_case):
    sphere_case.pop("surface")
    sphere_case["bulk"] = {"concentration": "41 mol/m^3"}
    sphere_case["film"] = {"mass_transfer_coefficient": "0.05 m/s"}
    forward, back = round_trip(client, sphere_case)
    if back is None:
        pytest.skip(f"/v1/effectiveness answers 422 with a film: {forward.get_json()['errors']}")
    r_obs, radius, km, cb = forward["observed_rate"]["value"], 1.5e-3, 0.05, 41.0
    assert back["intrinsic_rate_constant"]["value"] == pytest.approx(12.0, rel=1e-8)
    # Steady film balance k_m (c_b - c_s) S_p = r_obs V_p (Fogler 2016, ch. 14; chapter from
    # memory) gives the surface concentration of the Weisz-Prater modulus.
    assert back["surface_concentration"]["value"] == pytest.approx(
        cb - r_obs * (radius / 3) / km, rel=1e-12)
    (mears,) = [c for c in back["criteria"] if c["name"] == "mears_external_mass"]
    # Mears (1971), Ind. Eng. Chem. Process Des. Dev. 10, 541: r_obs R n/(k_m c_b) < 0.15
    assert mears["value"] == pytest.approx(r_obs * radius * 1 / (km * cb), rel=1e-12)
    assert mears["threshold"] == 0.15


def test_heat_criterion_from_prater_and_arrhenius_numbers(client, sphere_case):
    beta, gamma = 0.05, 20.0
    sphere_case["thermal"] = {"prater_number": beta, "arrhenius_number": gamma}
    forward, back = round_trip(client, sphere_case)
    if back is None:
        pytest.skip(f"/v1/effectiveness answers 422 with heat effects: {forward.get_json()['errors']}")
    assert back["intrinsic_rate_constant"]["value"] == pytest.approx(12.0, rel=1e-8)
    (anderson,) = [c for c in back["criteria"] if c["name"] == "anderson_internal_heat"]
    # Anderson (1963), Chem. Eng. Sci. 18, 147, divided by its right side with
    # beta = -dH D_e c_s/(lambda_e T_s) (Prater 1958) and gamma = E/(R T_s):
    # beta gamma r_obs R^2/(D_e c_s) < 0.75.
    r_obs, radius = forward["observed_rate"]["value"], 1.5e-3
    assert anderson["value"] == pytest.approx(beta * gamma * r_obs * radius**2 / (1.2e-6 * 40),
                                              rel=1e-12)
    assert anderson["threshold"] == 0.75
    assert "INVERSION_WITH_HEAT_EFFECTS" in [w["code"] for w in back["warnings"]]
