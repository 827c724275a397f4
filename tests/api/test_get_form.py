"""GET /v1/effectiveness: the spreadsheet form, validated by the POST's own schema."""

import csv
import io

import pytest

QUERY = (
    "/v1/effectiveness?pellet.shape=sphere&pellet.radius=1.5mm&kinetics.model=power_law"
    "&kinetics.order=1&kinetics.rate_constant=12/s&transport.effective_diffusivity=1.2e-6"
    "&surface.concentration=40%20mol/m%5E3"
)


def test_get_json_equals_post(client, sphere_case):
    got = client.get(QUERY).get_json()
    posted = client.post("/v1/effectiveness", json=sphere_case).get_json()
    assert got == posted


def test_value_format_is_the_bare_number(client, sphere_case):
    response = client.get(QUERY + "&format=value&field=effectiveness_factor")
    assert response.status_code == 200
    assert response.mimetype == "text/plain"
    posted = client.post("/v1/effectiveness", json=sphere_case).get_json()
    assert float(response.get_data(as_text=True)) == posted["effectiveness_factor"]


def test_value_format_of_a_dimensional_field_is_si(client):
    text = client.get(QUERY + "&format=value&field=thiele_length").get_data(as_text=True)
    assert float(text) == 1.5e-3


def test_csv_format_has_header_and_one_row(client):
    response = client.get(QUERY + "&format=csv")
    assert response.mimetype == "text/csv"
    rows = list(csv.reader(io.StringIO(response.get_data(as_text=True))))
    assert len(rows) == 2
    header, row = rows
    assert "observed_rate [mol/(m^3*s)]" in header
    record = dict(zip(header, row))
    assert record["regime"] == "transition"
    assert float(record["thiele_length [m]"]) == 1.5e-3


def test_csv_single_field(client):
    text = client.get(QUERY + "&format=csv&field=regime").get_data(as_text=True)
    assert text.splitlines() == ["regime", "transition"]


@pytest.mark.parametrize(
    "suffix, field",
    [
        ("&pellet.radius=2mm", "pellet.radius"),  # repeated key
        ("&pellet.colour=red", "pellet.colour"),  # unknown key
        ("&format=xml", "format"),
        ("&format=value&field=warnings", "field"),
        ("&field=regime", "field"),  # field without value/csv format
        ("&format=value&format=csv", "format"),
    ],
)
def test_bad_query_is_422_naming_the_parameter(client, suffix, field):
    response = client.get(QUERY + suffix)
    assert response.status_code == 422
    assert response.mimetype == "application/problem+json"
    assert field in [e["field"] for e in response.get_json()["errors"]]


def test_query_errors_match_post_errors(client, sphere_case):
    # One schema: the same bad value gives the same field and message in both forms.
    sphere_case["pellet"]["radius"] = "1.5 kg"
    posted = client.post("/v1/effectiveness", json=sphere_case).get_json()
    got = client.get(QUERY.replace("1.5mm", "1.5%20kg")).get_json()
    assert got["errors"] == posted["errors"]


def test_numbers_in_query_are_read_like_json_numbers(client):
    body = client.get(QUERY.replace("kinetics.order=1", "kinetics.order=1.0")
                      + "&options.profile_points=3").get_json()
    assert len(body["profile"]["position"]["value"]) == 3
