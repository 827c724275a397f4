"""POST /v1/sweep: one field of a case varied over a range; JSON rows, CSV or a plot; one bad
point never fails the sweep; the sweep's own fields and the case validated by the case rules."""

from __future__ import annotations

import copy
import csv
import io
import xml.etree.ElementTree as ET

import mpmath as mp
import numpy as np
import pytest

CASE = {  # invented demo numbers (Kestrel Ridge scenario)
    "pellet": {"shape": "sphere", "radius": "1.5 mm"},
    "kinetics": {"model": "power_law", "order": 1, "rate_constant": "12 1/s"},
    "transport": {"effective_diffusivity": "1.2e-6 m^2/s"},
    "surface": {"concentration": "40 mol/m^3"},
}
RADIUS_SWEEP = {"case": CASE, "parameter": "pellet.radius", "start": "0.2 mm", "stop": "5 mm",
                "points": 9, "spacing": "log"}


def sweep(**changes) -> dict:
    body = copy.deepcopy(RADIUS_SWEEP)
    body.update(copy.deepcopy(changes))
    return body


def sphere_first_order(radius: float, k: float, de: float) -> float:
    """Thiele (1939), Ind. Eng. Chem. 31, 916: eta = 3 (phi coth phi - 1) / phi^2, phi = R sqrt(k/D_e);
    mpmath at 30 digits."""
    with mp.workdps(30):
        phi = mp.mpf(radius) * mp.sqrt(mp.mpf(k) / mp.mpf(de))
        return float(3 * (phi * mp.coth(phi) - 1) / phi**2)


def test_radius_sweep_rows_match_the_closed_form(client):
    response = client.post("/v1/sweep", json=sweep())
    assert response.status_code == 200 and response.mimetype == "application/json"
    answer = response.get_json()
    assert (answer["parameter"], answer["unit"], answer["points"]) == ("pellet.radius", "m", 9)
    assert answer["succeeded"] == 9 and answer["failed"] == 0
    values = [r["parameter_value"]["value"] for r in answer["rows"]]
    assert values[0] == 0.0002 and values[-1] == 0.005  # the ends exactly as given
    assert values == pytest.approx(np.geomspace(2e-4, 5e-3, 9).tolist(), rel=1e-14)
    for row, radius in zip(answer["rows"], values):
        assert row["status"] == 200
        assert row["effectiveness_factor"] == pytest.approx(
            sphere_first_order(radius, 12.0, 1.2e-6), rel=1e-12)
        # generalized modulus on V_p/S_p = R/3 (Aris 1965, Ind. Eng. Chem. Fundam. 4, 227)
        assert row["generalized_modulus"] == pytest.approx(radius / 3 * np.sqrt(12 / 1.2e-6),
                                                           rel=1e-12)
        assert row["observed_rate"]["value"] == pytest.approx(
            row["effectiveness_factor"] * 12 * 40, rel=1e-12)
    regimes = [r["regime"] for r in answer["rows"]]
    assert regimes[0] == "kinetic" and regimes[-1] == "diffusion"


def test_rate_constant_sweep_in_the_unit_of_the_order(client):
    body = sweep(parameter="kinetics.rate_constant", start="0.01 m^3/(mol*s)",
                 stop="1 m^3/(mol*s)", points=3, spacing="linear")
    body["case"]["kinetics"] = {"model": "power_law", "order": 2, "rate_constant": 0.1}
    answer = client.post("/v1/sweep", json=body).get_json()
    assert answer["unit"] == "m^3/(mol*s)"
    assert [r["parameter_value"]["value"] for r in answer["rows"]] == [0.01, 0.505, 1.0]
    etas = [r["effectiveness_factor"] for r in answer["rows"]]
    assert etas[0] > etas[1] > etas[2]  # faster reaction, lower effectiveness


def test_csv_carries_the_same_numbers(client):
    body = sweep()
    rows = client.post("/v1/sweep", json=body).get_json()["rows"]
    response = client.post("/v1/sweep", json=body, headers={"Accept": "text/csv"})
    assert response.mimetype == "text/csv"
    table = list(csv.reader(io.StringIO(response.get_data(as_text=True))))
    assert table[0][:4] == ["index", "status", "pellet.radius [m]", "effectiveness_factor"]
    assert table[0][6] == "observed_rate [mol/(m^3*s)]"
    assert len(table) == 1 + len(rows)
    for line, row in zip(table[1:], rows):
        assert float(line[2]) == row["parameter_value"]["value"]
        assert float(line[3]) == row["effectiveness_factor"]


def test_sweep_picture(client):
    response = client.post("/v1/sweep", json=sweep(), headers={"Accept": "image/svg+xml"})
    assert response.status_code == 200 and response.mimetype == "image/svg+xml"
    root = ET.fromstring(response.data)
    labels = {"".join(t.itertext()).strip() for t in root.iter("{http://www.w3.org/2000/svg}text")}
    assert {"pellet.radius [mm]", "Effectiveness factor η [-]",
            "Generalized modulus Φ [-]"} <= labels


def test_one_bad_point_never_fails_the_sweep(client):
    # r = k (c - c_eq) needs c_eq below the surface concentration (40 mol/m^3): the points at
    # and above it cannot be computed, the others can.
    body = sweep(parameter="kinetics.equilibrium_concentration", start=0, stop="60 mol/m^3",
                 points=7, spacing="linear")
    body["case"]["kinetics"] = {"model": "reversible_first_order", "rate_constant": "12 1/s",
                                "equilibrium_concentration": 5}
    answer = client.post("/v1/sweep", json=body).get_json()
    statuses = [r["status"] for r in answer["rows"]]
    assert statuses == [200, 200, 200, 200, 422, 422, 422]
    for row in answer["rows"][4:]:
        assert row["errors"][0]["field"].startswith("case.")
    # reversible first order: the excess c - c_eq diffuses as a first-order reactant, so eta
    # does not depend on c_eq (Aris 1975, vol. 1, ch. 3)
    etas = {round(r["effectiveness_factor"], 12) for r in answer["rows"] if r["status"] == 200}
    assert len(etas) == 1
    csv_text = client.post("/v1/sweep", json=body, headers={"Accept": "text/csv"}).get_data(
        as_text=True)
    assert csv_text.count("\r\n") == 8
    svg = client.post("/v1/sweep", json=body, headers={"Accept": "image/svg+xml"})
    assert b"3 of 7 points could not be computed" in svg.data


@pytest.mark.parametrize("changes, field", [
    ({"parameter": "pellet.colour"}, "parameter"),
    ({"parameter": "pellet.thickness"}, "parameter"),  # not a dimension of a sphere
    ({"parameter": "kinetics.model"}, "parameter"),  # not numeric
    ({"start": "1 kg"}, "start"),
    ({"stop": "-1 mm"}, "stop"),
    ({"start": "0 mm", "spacing": "log"}, "start"),
    ({"stop": "0.2 mm"}, "stop"),  # equal to start
    ({"points": 1}, "points"),
    ({"points": 201}, "points"),
    ({"spacing": "cubic"}, "spacing"),
    ({"colour": "red"}, "colour"),
    ({"case": {**CASE, "transport": {"effective_diffusivity": "-1 m^2/s"}}},
     "case.transport.effective_diffusivity"),
])
def test_bad_sweeps_name_the_field(client, changes, field):
    response = client.post("/v1/sweep", json=sweep(**changes))
    assert response.status_code == 422
    assert response.mimetype == "application/problem+json"
    assert field in [e["field"] for e in response.get_json()["errors"]]


def test_sweep_refuses_what_it_cannot_answer(client):
    assert client.post("/v1/sweep", json=sweep(), headers={"Accept": "image/png"}).status_code == 406
    assert client.post("/v1/sweep", json=[1, 2]).status_code == 422
    assert client.post("/v1/sweep", data="x", content_type="text/plain").status_code == 415
