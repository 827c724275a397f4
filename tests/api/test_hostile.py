"""A catalogue of hostile requests across every operation: each is a 4xx problem+json that
names the problem, none is a 5xx, and the app keeps answering good requests afterwards."""

import copy
import json

import pytest

from tests.conftest import SPHERE_CASE

JSON = "application/json"
CSV = "text/csv"
PORE = {"porosity": 0.45, "tortuosity": 3.5, "pore_diameter": "12 nm", "temperature": "600 K",
        "pressure": "20 bar", "species": "CO", "carrier": "H2"}


def _case(**changes):
    case = copy.deepcopy(SPHERE_CASE)
    for dotted, value in changes.items():
        node = case
        *parents, last = dotted.split(".")
        for key in parents:
            node = node[key]
        node[last] = value
    return case


def _diagnose(**changes):
    body = _case(**changes)
    body["kinetics"].pop("rate_constant", None)
    body.setdefault("observed_rate", "100 mol/(m^3*s)")
    return body


def _dumps(value) -> bytes:
    return json.dumps(value).encode()


DEEP = b"[" * 200_000 + b"]" * 200_000
DEEP_OBJECT = b'{"a":' * 50_000 + b"1" + b"}" * 50_000
LONG = "x" * 1_000_000
CSV_HEADER = ("pellet.shape,pellet.radius [mm],kinetics.model,kinetics.rate_constant [1/s],"
              "transport.effective_diffusivity [m^2/s],surface.concentration [mol/m^3]\n")

# (id, method, path, content type or None, body bytes or None, expected status, expected field)
CATALOGUE = [
    # wrong types, missing and unknown fields
    ("radius as list", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": [1, 2]})), 422, "pellet.radius"),
    ("radius as object junk", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": {"v": 1}})), 422, "pellet.radius"),
    ("order as bool", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"kinetics.order": True})), 422, "kinetics.order"),
    ("kinetics as string", "POST", "/v1/effectiveness", JSON, _dumps(_case(kinetics="first order")), 422, "kinetics"),
    ("missing everything", "POST", "/v1/effectiveness", JSON, b"{}", 422, "pellet"),
    ("unknown top field", "POST", "/v1/effectiveness", JSON, _dumps({**SPHERE_CASE, "debug": True}), 422, "debug"),
    ("unknown nested field", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"transport.tortuosity": 3})), 422, "transport.tortuosity"),
    ("surface and bulk", "POST", "/v1/effectiveness", JSON, _dumps({**SPHERE_CASE, "bulk": {"concentration": 40}}), 422, "bulk"),
    ("thermal half given", "POST", "/v1/effectiveness", JSON, _dumps({**SPHERE_CASE, "thermal": {"prater_number": 0.2}}), 422, "thermal.arrhenius_number"),
    ("film without bulk", "POST", "/v1/effectiveness", JSON, _dumps({**SPHERE_CASE, "film": {"mass_transfer_coefficient": 0.1}}), 422, "surface"),
    # non-finite and huge numbers
    ("NaN literal", "POST", "/v1/effectiveness", JSON, _dumps(_case()).replace(b'"1.5 mm"', b"NaN"), 422, "pellet.radius"),
    ("Infinity literal", "POST", "/v1/effectiveness", JSON, _dumps(_case()).replace(b'"12 1/s"', b"Infinity"), 422, "kinetics.rate_constant"),
    ("-Infinity literal", "POST", "/v1/effectiveness", JSON, _dumps(_case()).replace(b'"40 mol/m^3"', b"-Infinity"), 422, "surface.concentration"),
    ("1e400 literal", "POST", "/v1/effectiveness", JSON, _dumps(_case()).replace(b'"1.5 mm"', b"1e400"), 422, "pellet.radius"),
    ("1e400 in a string", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": "1e400 mm"})), 422, "pellet.radius"),
    ("huge but finite", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": 1e308})), 422, "pellet.radius"),
    ("denormal diffusivity", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"transport.effective_diffusivity": 5e-324})), 422, "(case)"),
    ("nan as unit string", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": "nan mm"})), 422, "pellet.radius"),
    # nesting, long strings, unicode junk
    ("deeply nested array", "POST", "/v1/effectiveness", JSON, DEEP, 400, None),
    ("deeply nested object", "POST", "/v1/effectiveness", JSON, DEEP_OBJECT, 400, None),
    ("megabyte shape name", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.shape": LONG})), 422, "pellet.shape"),
    ("megabyte unit string", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": "1 " + LONG})), 422, "pellet.radius"),
    ("unicode junk unit", "POST", "/v1/effectiveness", JSON, _dumps(_case(**{"pellet.radius": "1.5 \u202e\u0000\U0001f4a9"})), 422, "pellet.radius"),
    ("lone surrogate", "POST", "/v1/effectiveness", JSON, b'{"pellet": {"shape": "\\ud800"}}', 422, "pellet.shape"),
    ("unicode field name", "POST", "/v1/effectiveness", JSON, _dumps({**SPHERE_CASE, "p\u00e9llet": {}}), 422, "p\u00e9llet"),
    ("invalid utf-8 body", "POST", "/v1/effectiveness", JSON, b'{"pellet": "\xc3\x28"}', 400, None),
    ("multi-megabyte body", "POST", "/v1/effectiveness", JSON, b'{"pad": "' + b"a" * (70 * 1024 * 1024) + b'"}', 413, None),
    ("xml body", "POST", "/v1/effectiveness", "application/xml", b"<case/>", 415, None),
    # the GET form
    ("repeated query key", "GET", "/v1/effectiveness?pellet.shape=sphere&pellet.shape=slab", None, None, 422, "pellet.shape"),
    ("query NaN", "GET", "/v1/effectiveness?pellet.shape=sphere&pellet.radius=NaN", None, None, 422, "pellet.radius"),
    ("query unknown format", "GET", "/v1/effectiveness?format=pdf", None, None, 422, "format"),
    ("query too deep", "GET", "/v1/effectiveness?a.b.c.d.e=1", None, None, 422, "a.b.c.d.e"),
    ("query junk bytes", "GET", "/v1/effectiveness?pellet.shape=%ff%fe", None, None, 422, "pellet.shape"),
    # batch
    ("batch not a list", "POST", "/v1/effectiveness/batch", JSON, b'{"cases": {"a": 1}}', 422, "cases"),
    ("batch deep nesting", "POST", "/v1/effectiveness/batch", JSON, DEEP, 400, None),
    ("csv bad encoding", "POST", "/v1/effectiveness/batch", CSV, b"\xff\xfe" + CSV_HEADER.encode("utf-16-le"), 400, None),
    ("csv unknown column", "POST", "/v1/effectiveness/batch", CSV, b"pellet.colour\nred\n", 422, "pellet.colour"),
    ("csv bad header unit", "POST", "/v1/effectiveness/batch", CSV, b"pellet.radius [parsec/s]\n1\n", 422, "pellet.radius"),
    ("csv only blank lines", "POST", "/v1/effectiveness/batch", CSV, b"\n\n\n", 400, None),
    ("csv nul bytes", "POST", "/v1/effectiveness/batch", CSV, b"pellet.shape\x00,x\n", 422, None),
    # the other operations
    ("diffusivity porosity 1", "POST", "/v1/diffusivity", JSON, _dumps({**PORE, "porosity": 1.0}), 422, "porosity"),
    ("diffusivity unknown species", "POST", "/v1/diffusivity", JSON, _dumps({**PORE, "species": "unobtainium"}), 422, "species"),
    ("diffusivity tortuosity NaN", "POST", "/v1/diffusivity", JSON, _dumps(PORE).replace(b'"tortuosity": 3.5', b'"tortuosity": NaN'), 422, "tortuosity"),
    ("diffusivity as array", "POST", "/v1/diffusivity", JSON, b"[]", 422, "(body)"),
    ("diagnose with a rate constant", "POST", "/v1/diagnose", JSON, _dumps({**_diagnose(), "kinetics": SPHERE_CASE["kinetics"]}), 422, "kinetics.rate_constant"),
    ("diagnose negative rate", "POST", "/v1/diagnose", JSON, _dumps(_diagnose(observed_rate=-5)), 422, "observed_rate"),
    ("diagnose rate as text", "POST", "/v1/diagnose", JSON, _dumps(_diagnose(observed_rate="fast")), 422, "observed_rate"),
    ("size target 1", "POST", "/v1/size", JSON, _dumps({**SPHERE_CASE, "target_effectiveness": 1.0}), 422, "target_effectiveness"),
    ("size target string", "POST", "/v1/size", JSON, _dumps({**SPHERE_CASE, "target_effectiveness": "high"}), 422, "target_effectiveness"),
    ("models with a body", "POST", "/v1/models", JSON, b"{}", 405, None),
    ("unknown route", "GET", "/v1/../../etc/passwd", None, None, 404, None),
]


@pytest.mark.parametrize("name, method, path, ctype, body, status, field", CATALOGUE,
                         ids=[c[0] for c in CATALOGUE])
def test_hostile_request(client, name, method, path, ctype, body, status, field):
    headers = {"Content-Type": ctype} if ctype else {}
    response = client.open(path, method=method, data=body, headers=headers)
    assert response.status_code == status, response.get_data(as_text=True)[:500]
    assert response.status_code < 500
    assert response.mimetype == "application/problem+json"
    problem = response.get_json()
    assert problem["status"] == status and problem["detail"]
    if field is not None:
        assert field in [e["field"] for e in problem.get("errors", [])], problem
    # the worker keeps serving
    assert client.post("/v1/effectiveness", json=SPHERE_CASE).status_code == 200


def test_catalogue_covers_every_operation_and_is_long_enough(app):
    paths = {c[2].split("?")[0] for c in CATALOGUE}
    assert len(CATALOGUE) >= 40
    assert {"/v1/effectiveness", "/v1/effectiveness/batch", "/v1/diffusivity", "/v1/diagnose",
            "/v1/size"} <= paths
