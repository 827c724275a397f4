"""The OpenAPI file is a contract: it validates, it lists exactly the app's routes, every example
in it is answered by the app as the file says (a documented answer is the app's own answer), its
units, ranges and codes are the code's own, and its optional API-key security is what a keyed
server does.

The fuzzing run over every operation (schemathesis) is in ``test_schemathesis.py``.
"""

from __future__ import annotations

import copy
from pathlib import Path
from urllib.parse import urlencode

import jsonschema
import pytest
import referencing
import referencing.jsonschema
import yaml
from openapi_core import Config, OpenAPI
from openapi_core.contrib.werkzeug import WerkzeugOpenAPIRequest, WerkzeugOpenAPIResponse
from openapi_core.deserializing.media_types.util import json_loads, plain_loads
from openapi_core.exceptions import OpenAPIError
from openapi_spec_validator import validate as validate_spec
from werkzeug.test import EnvironBuilder

from service.physics.diagnostics import SEVERITIES, WARNING_CODES
from service.physics.geometry import SHAPES
from service.physics.regime import REGIMES
from service.schemas.case import CASE_SCHEMA, KINETICS_SCHEMAS
from service.schemas.responses import OUTPUT_UNITS, SCALAR_FIELDS
from service.schemas.rules import FIELD_RULES

SPEC_PATH = Path(__file__).resolve().parents[2] / "openapi" / "openapi.yaml"
SPEC: dict = yaml.safe_load(SPEC_PATH.read_text(encoding="utf-8"))
HTTP_METHODS = ("get", "put", "post", "delete", "patch", "options", "head", "trace")
# Media types openapi-core does not decode by default.
EXTRA_DESERIALIZERS = {
    "application/problem+json": json_loads,
    "text/csv": plain_loads,
    "text/html": plain_loads,
    "image/svg+xml": plain_loads,
    "application/yaml": lambda value, **parameters: yaml.safe_load(value),
}


@pytest.fixture(scope="module")
def openapi() -> OpenAPI:
    return OpenAPI.from_dict(
        copy.deepcopy(SPEC), config=Config(extra_media_type_deserializers=EXTRA_DESERIALIZERS)
    )


def resolve(node: dict) -> dict:
    """Follow local ``$ref`` chains ('#/components/...') to the schema they name."""
    while isinstance(node, dict) and "$ref" in node:
        target = SPEC
        for part in node["$ref"].removeprefix("#/").split("/"):
            target = target[part.replace("~1", "/").replace("~0", "~")]
        node = target
    return node


def operations():
    for path, item in SPEC["paths"].items():
        for method in HTTP_METHODS:
            if method in item:
                yield path, method, item[method]


# --------------------------------------------------------------------------- 1. the file


def test_spec_is_valid_openapi_3_1():
    assert SPEC["openapi"].startswith("3.1.")
    validate_spec(SPEC)  # raises OpenAPIValidationError with the offending path


class _NoDuplicateKeys(yaml.SafeLoader):
    """YAML silently keeps the last of two equal keys; in a hand-written contract that hides edits."""

    def construct_mapping(self, node, deep=False):
        seen = set()
        for key_node, _ in node.value:
            key = self.construct_object(key_node, deep=deep)
            assert key not in seen, f"duplicate key {key!r} at line {key_node.start_mark.line + 1}"
            seen.add(key)
        return super().construct_mapping(node, deep)


def test_spec_has_no_duplicate_keys():
    yaml.load(SPEC_PATH.read_text(encoding="utf-8"), Loader=_NoDuplicateKeys)


def test_every_operation_is_documented():
    ids = []
    for path, method, op in operations():
        where = f"{method.upper()} {path}"
        for key in ("operationId", "summary", "description", "responses"):
            assert op.get(key), f"{where}: no {key}"
        ids.append(op["operationId"])
        assert "200" in op["responses"], where
        for status in op["responses"]:
            assert status.isdigit(), f"{where}: response {status} (no default responses here)"
    assert len(ids) == len(set(ids)), "operationIds must be unique"


# --------------------------------------------------------------------------- 2. routes


# Operations served by a request hook instead of a URL rule (service/metrics.py serves GET /metrics
# before routing). Each counts as an app route when the app answers it with a 200.
HOOK_ROUTES = (("/metrics", "get"),)


def _app_routes(app) -> set[tuple[str, str]]:
    routes = set()
    for rule in app.url_map.iter_rules():
        if rule.endpoint == "static":
            continue
        path = rule.rule.replace("<", "{").replace(">", "}")
        for method in rule.methods - {"HEAD", "OPTIONS"}:
            routes.add((path, method.lower()))
    client = app.test_client()
    for path, method in HOOK_ROUTES:
        if client.open(path, method=method.upper()).status_code == 200:
            routes.add((path, method))
    return routes


def test_every_app_route_is_in_the_spec(app):
    documented = {(path, method) for path, method, _ in operations()}
    missing = sorted(_app_routes(app) - documented)
    assert not missing, f"routes of the app without a path+method in openapi.yaml: {missing}"


def test_every_spec_operation_exists_in_the_app(app):
    documented = {(path, method) for path, method, _ in operations()}
    missing = sorted(documented - _app_routes(app))
    assert not missing, f"operations of openapi.yaml the app does not serve: {missing}"


def test_the_app_serves_this_file(client):
    as_yaml = client.get("/openapi.yaml")
    assert as_yaml.status_code == 200
    assert as_yaml.get_data() == SPEC_PATH.read_bytes()
    as_json = client.get("/openapi.json")
    assert as_json.status_code == 200
    assert as_json.get_json() == SPEC


# --------------------------------------------------------------------------- 3. examples


def _body_examples():
    for path, method, op in operations():
        content = op.get("requestBody", {}).get("content", {})
        for media_type, media in content.items():
            for name, example in media.get("examples", {}).items():
                yield pytest.param(
                    method, path, media_type, resolve(example)["value"],
                    id=f"{method.upper()} {path} {media_type} {name}",
                )


def _query_examples():
    """GET examples: the parameters that share an example name form one request."""
    for path, method, op in operations():
        requests: dict[str, dict[str, str]] = {}
        for parameter in (resolve(p) for p in op.get("parameters", [])):
            assert parameter["in"] == "query", parameter["name"]
            for name, example in parameter.get("examples", {}).items():
                requests.setdefault(name, {})[parameter["name"]] = str(resolve(example)["value"])
        for name, query in requests.items():
            yield pytest.param(method, path, query, id=f"{method.upper()} {path} {name}")


def _builder(method, path, media_type=None, body=None, query=None, headers=None):
    kwargs = {"method": method.upper(), "headers": headers or {}}
    if query:
        kwargs["query_string"] = urlencode(query)
    if media_type == "application/json":
        kwargs["json"] = body
    elif media_type is not None:
        kwargs["data"] = body.encode("utf-8")
        kwargs["content_type"] = media_type
    return EnvironBuilder(path=path, **kwargs)


def _call_and_check(client, openapi, builder_args):
    """Send one request; check the request and the answer against the spec with openapi-core."""
    sent = _builder(**builder_args)
    response = client.open(sent)
    request = WerkzeugOpenAPIRequest(_builder(**builder_args).get_request())
    openapi.validate_request(request)
    openapi.validate_response(request, WerkzeugOpenAPIResponse(response))
    return response


@pytest.mark.parametrize("method, path, media_type, body", list(_body_examples()))
def test_request_body_example_is_answered_as_documented(client, openapi, method, path, media_type, body):
    response = _call_and_check(
        client, openapi, {"method": method, "path": path, "media_type": media_type, "body": body}
    )
    assert response.status_code == 200, response.get_data(as_text=True)


@pytest.mark.parametrize("method, path, query", list(_query_examples()))
def test_query_example_is_answered_as_documented(client, openapi, method, path, query):
    response = _call_and_check(client, openapi, {"method": method, "path": path, "query": query})
    assert response.status_code == 200, response.get_data(as_text=True)
    expected = {"value": "text/plain", "csv": "text/csv"}.get(query.get("format"), "application/json")
    assert response.mimetype == expected


def test_batch_csv_answer_is_as_documented(client, openapi):
    media = SPEC["paths"]["/v1/effectiveness/batch"]["post"]["requestBody"]["content"]["text/csv"]
    (example,) = media["examples"].values()
    response = _call_and_check(client, openapi, {
        "method": "post", "path": "/v1/effectiveness/batch", "media_type": "text/csv",
        "body": example["value"], "headers": {"Accept": "text/csv"},
    })
    assert response.status_code == 200
    assert response.mimetype == "text/csv"


def test_no_operation_without_an_example_request():
    """Every operation with inputs documents at least one example request."""
    bodies = {(p.values[0], p.values[1]) for p in _body_examples()}
    queries = {(p.values[0], p.values[1]) for p in _query_examples()}
    for path, method, op in operations():
        if "requestBody" in op or op.get("parameters"):
            assert (method, path) in bodies | queries, f"{method.upper()} {path} has no example"


# Error answers sent on purpose: each must match the problem schema the spec documents for it.
ERROR_REQUESTS = [
    ("malformed JSON", {"method": "post", "path": "/v1/effectiveness",
                        "media_type": "text/csv", "body": "x"}, 415),
    ("bad unit", {"method": "post", "path": "/v1/effectiveness", "media_type": "application/json",
                  "body": {"pellet": {"shape": "sphere", "radius": "1.5 kg"},
                           "kinetics": {"model": "power_law", "rate_constant": 12},
                           "transport": {"effective_diffusivity": 1.2e-6},
                           "surface": {"concentration": 40}}}, 422),
    ("GET missing fields", {"method": "get", "path": "/v1/effectiveness",
                            "query": {"pellet.shape": "sphere", "kinetics.model": "power_law",
                                      "kinetics.rate_constant": "12",
                                      "transport.effective_diffusivity": "1e-6",
                                      "surface.concentration": "40"}}, 422),
    ("GET empty query key", {"method": "get", "path": "/v1/effectiveness",
                             "query": {"": "1", "pellet.shape": "sphere"}}, 422),
    ("batch not a list", {"method": "post", "path": "/v1/effectiveness/batch",
                          "media_type": "application/json", "body": {"cases": {}}}, 422),
    ("batch wrong accept", {"method": "post", "path": "/v1/effectiveness/batch",
                            "media_type": "application/json", "body": {"cases": []},
                            "headers": {"Accept": "text/html"}}, 406),
]


@pytest.mark.parametrize("name, args, status", ERROR_REQUESTS, ids=[e[0] for e in ERROR_REQUESTS])
def test_error_answers_match_the_documented_problem(client, openapi, name, args, status):
    response = client.open(_builder(**args))
    assert response.status_code == status, response.get_data(as_text=True)
    request = WerkzeugOpenAPIRequest(_builder(**args).get_request())
    openapi.validate_response(request, WerkzeugOpenAPIResponse(response))


_KR7 = {"pellet": {"shape": "sphere", "radius": 0.0015},
        "kinetics": {"model": "power_law", "rate_constant": 12.0},
        "transport": {"effective_diffusivity": 1.2e-6}, "surface": {"concentration": 40.0}}


def _kr7(**blocks):
    return {**copy.deepcopy(_KR7), **blocks}


# Requests with extreme numbers (found by the schemathesis run). The denormal diffusivity is inside
# the contract and must get a documented answer: a result, or a 422 naming a field. The others break
# the sanity maxima the field table gained since (a radius of 1e300 m; the query strings of the GET
# are not bounded by the spec): outside the contract they must be a documented 422, never a 500
# (design section 3), and a batch row never fails the others.
EXTREME_REQUESTS = [
    ("denormal diffusivity", {"method": "post", "path": "/v1/effectiveness",
                              "media_type": "application/json",
                              "body": _kr7(transport={"effective_diffusivity": 5e-324})}),
    ("sphere of 1e300 m", {"method": "post", "path": "/v1/effectiveness",
                           "media_type": "application/json",
                           "body": _kr7(pellet={"shape": "sphere", "radius": 1e300})}),
    ("observed rate beyond double range", {
        "method": "post", "path": "/v1/effectiveness", "media_type": "application/json",
        "body": _kr7(kinetics={"model": "power_law", "rate_constant": 1e300},
                     surface={"concentration": 1e300})}),
    ("GET sphere of 1e300 m", {"method": "get", "path": "/v1/effectiveness", "query": {
        "pellet.shape": "sphere", "pellet.radius": "1e300", "kinetics.model": "power_law",
        "kinetics.rate_constant": "12", "transport.effective_diffusivity": "1.2e-6",
        "surface.concentration": "40", "format": "value"}}),
    ("batch row with a non-finite rate", {
        "method": "post", "path": "/v1/effectiveness/batch", "media_type": "application/json",
        "body": {"cases": [_kr7(), _kr7(kinetics={"model": "power_law", "rate_constant": 1e300},
                                        surface={"concentration": 1e300})]}}),
]


@pytest.mark.parametrize("name, args", EXTREME_REQUESTS, ids=[e[0] for e in EXTREME_REQUESTS])
def test_extreme_numbers_get_a_documented_answer(client, openapi, name, args):
    request = WerkzeugOpenAPIRequest(_builder(**args).get_request())
    try:
        openapi.validate_request(request)
        in_contract = True
    except OpenAPIError:
        in_contract = False
    response = client.open(_builder(**args))
    openapi.validate_response(request, WerkzeugOpenAPIResponse(response))
    if args["path"].endswith("/batch"):
        assert response.status_code == 200
        rows = response.get_json()["results"]
        assert [r["status"] for r in rows] == [200, 422]
    else:
        assert response.status_code in ((200, 422) if in_contract else (422,)), response.get_data(
            as_text=True)


def _validator(pointer: str) -> jsonschema.Validator:
    """A JSON Schema 2020-12 validator for the schema at ``pointer`` inside the spec."""
    resource = referencing.Resource.from_contents(
        SPEC, default_specification=referencing.jsonschema.DRAFT202012
    )
    registry = referencing.Registry().with_resource("urn:openapi", resource)
    return jsonschema.Draft202012Validator({"$ref": f"urn:openapi#{pointer}"}, registry=registry)


@pytest.mark.parametrize("method, path, status", [
    ("get", "/v1/effectivness", 404), ("put", "/v1/effectiveness", 405),
    ("delete", "/healthz", 405), ("post", "/v1/models", 405),
])
def test_any_path_and_method_errors_match_the_shared_responses(client, method, path, status):
    response = client.open(path, method=method.upper())
    assert response.status_code == status
    assert response.mimetype == "application/problem+json"
    _validator("/components/schemas/Problem").validate(response.get_json())
    if status == 405:
        assert response.headers["Allow"]


def _response_examples():
    def media_examples(where, content):
        for media_type, media in content.items():
            schema = media.get("schema")
            if "example" in media:
                yield where + (media_type, "example"), schema, media["example"]
            for name, example in media.get("examples", {}).items():
                yield where + (media_type, name), schema, resolve(example)["value"]

    for path, method, op in operations():
        for status, response in op["responses"].items():
            yield from media_examples((method, path, status), resolve(response).get("content", {}))
    for name, response in SPEC["components"]["responses"].items():
        yield from media_examples(("components", name), response.get("content", {}))


@pytest.mark.parametrize(
    "where, schema, example", [pytest.param(*e, id=" ".join(e[0])) for e in _response_examples()]
)
def test_response_examples_match_their_schema(where, schema, example):
    if "$ref" in schema:
        pointer = schema["$ref"].removeprefix("#")
        _validator(pointer).validate(example)
    else:
        resource = referencing.Resource.from_contents(
            SPEC, default_specification=referencing.jsonschema.DRAFT202012
        )
        registry = referencing.Registry().with_resource("urn:openapi", resource)
        inline = {"$id": "urn:inline", **_absolute_refs(schema)}
        jsonschema.Draft202012Validator(inline, registry=registry).validate(example)


def _absolute_refs(node):
    if isinstance(node, dict):
        return {k: ("urn:openapi" + v if k == "$ref" and v.startswith("#") else _absolute_refs(v))
                for k, v in node.items()}
    if isinstance(node, list):
        return [_absolute_refs(v) for v in node]
    return node


# --------------------------------------------------------------------------- 4. code tables


def _branches(schema: dict):
    """A schema and every schema it is composed of (allOf / oneOf / anyOf), resolved."""
    schema = resolve(schema)
    yield schema
    for key in ("allOf", "oneOf", "anyOf"):
        for sub in schema.get(key, []):
            yield from _branches(sub)


def _properties(schema: dict, name: str) -> list[dict]:
    return [b["properties"][name] for b in _branches(schema) if name in b.get("properties", {})]


# Dotted names of the field table that do not start at a request body: a species given by its data.
ROOTS = {"species": "SpeciesData"}
# Request bodies that are a block of the case sent alone: their fields carry the case's prefix.
BODY_PREFIXES = {"#/components/schemas/PoreStructure": "transport.pore."}


def request_body_schemas() -> list[dict]:
    """The JSON request-body schema of every operation (each a root of dotted field names)."""
    return [op["requestBody"]["content"]["application/json"]["schema"]
            for _, _, op in operations()
            if "application/json" in op.get("requestBody", {}).get("content", {})]


def field_schemas(dotted: str) -> list[dict]:
    """Every property schema the spec's requests have for a dotted field name (all operations,
    shapes and models)."""
    first, _, rest = dotted.partition(".")
    if first in ROOTS:
        found, parts = [SPEC["components"]["schemas"][ROOTS[first]]], rest.split(".")
    else:
        found, parts = request_body_schemas(), dotted.split(".")
    for part in parts:
        found = [resolve(p) for schema in found for p in _properties(schema, part)]
    # The same component reached from two operations is one occurrence.
    unique = {id(schema): schema for schema in found}
    return list(unique.values())


def leaf_names(schema: dict, prefix: str = "") -> set[str]:
    """Every dotted leaf field under ``schema``: blocks (plain objects or unions of objects)
    are walked into; a property that is a value (number, quantity, species...) is a leaf."""
    names = set()
    for branch in _branches(schema):
        for name, prop in branch.get("properties", {}).items():
            dotted = f"{prefix}{name}"
            target = resolve(prop)
            names |= leaf_names(target, dotted + ".") if _is_block(target) else {dotted}
    return names


def _is_block(schema: dict) -> bool:
    """An object of named fields, or a union / composition of such objects (a quantity, whose
    oneOf also admits a number or a string, is a value)."""
    schema = resolve(schema)
    if "properties" in schema:
        return True
    return any(key in schema and all(_is_block(s) for s in schema[key])
               for key in ("oneOf", "allOf"))


def _check_range(where: str, schema: dict, rule) -> list[str]:
    problems = []
    for bound, inclusive_key, exclusive_key in (
        ("minimum", "minimum", "exclusiveMinimum"), ("maximum", "maximum", "exclusiveMaximum"),
    ):
        value = getattr(rule, bound)
        exclusive = getattr(rule, f"exclusive_{bound}")
        want_key, other_key = (exclusive_key, inclusive_key) if exclusive else (inclusive_key, exclusive_key)
        if value is None:
            if inclusive_key in schema or exclusive_key in schema:
                problems.append(f"{where}: has a {bound} the code does not have")
        elif schema.get(want_key) != value or other_key in schema:
            problems.append(
                f"{where}: code says {bound} {value} ({'exclusive' if exclusive else 'inclusive'}), "
                f"spec says {inclusive_key}={schema.get(inclusive_key)} "
                f"{exclusive_key}={schema.get(exclusive_key)}"
            )
    return problems


@pytest.mark.parametrize("name", sorted(FIELD_RULES))
def test_request_field_unit_range_and_default_agree_with_the_field_table(name):
    rule = FIELD_RULES[name]
    schemas = field_schemas(name)
    assert schemas, f"{name} is in FIELD_RULES but not in the request schema"
    problems = []
    for i, schema in enumerate(schemas):
        where = f"{name} (occurrence {i + 1})"
        if rule.unit is None:
            if "x-si-unit" in schema:
                problems.append(f"{where}: x-si-unit given but the unit depends on other fields")
        elif schema.get("x-si-unit") != rule.unit:
            problems.append(f"{where}: x-si-unit {schema.get('x-si-unit')!r}, code {rule.unit!r}")
        if rule.unit and f"SI unit: {rule.unit}" not in schema.get("description", ""):
            problems.append(f"{where}: description does not name the SI unit {rule.unit}")
        problems += _check_range(where, schema, rule)
        if rule.default is not None and schema.get("default") != rule.default:
            problems.append(f"{where}: default {schema.get('default')!r}, code {rule.default!r}")
        if rule.choices and schema.get("enum") != list(rule.choices):
            problems.append(f"{where}: enum {schema.get('enum')}, code {list(rule.choices)}")
    assert not problems, "\n".join(problems)


def test_every_request_field_of_the_spec_is_in_the_field_table():
    schemas = SPEC["components"]["schemas"]
    names = set()
    for body in request_body_schemas():
        # The batch and the sweep repeat the case (checked through it); the sweep's own fields
        # are checked against their table below.
        resolved = resolve(body)
        properties = set(resolved.get("properties", {}))
        for member in resolved.get("oneOf", []):  # the batch: {"cases"} or {"columns"}
            properties |= set(resolve(member).get("properties", {}))
        if not {"cases", "case", "columns"} & properties:
            names |= leaf_names(body, BODY_PREFIXES.get(body.get("$ref"), ""))
    for first, root in ROOTS.items():
        names |= leaf_names(schemas[root], first + ".") - {f"{first}.name"}
    extra = sorted(names - set(FIELD_RULES))
    assert not extra, f"fields in openapi.yaml the code's table does not know: {extra}"


def test_sweep_fields_are_the_sweep_table():
    from service.schemas.sweep import SWEEP_RULES, SWEEPABLE, SweepSchema

    sweep = SPEC["components"]["schemas"]["SweepRequest"]
    assert set(sweep["properties"]) == set(SweepSchema().fields)
    assert set(sweep["required"]) == {n for n, f in SweepSchema().fields.items() if f.required}
    assert sweep["properties"]["parameter"]["enum"] == list(SWEEPABLE)
    for name, rule in SWEEP_RULES.items():
        schema = sweep["properties"][name]
        assert schema["default"] == rule.default, name
        if rule.choices:
            assert schema["enum"] == list(rule.choices), name
        assert not _check_range(name, schema, rule)


def test_species_names_are_the_species_table():
    from service.physics.species import SPECIES

    names = resolve(SPEC["components"]["schemas"]["Species"])["oneOf"][0]["enum"]
    assert names == list(SPECIES)


def test_pellet_shapes_match_the_shape_registry():
    variants = {}
    for branch in resolve(SPEC["components"]["schemas"]["Pellet"])["oneOf"]:
        branch = resolve(branch)
        variants[branch["properties"]["shape"]["const"]] = branch
    assert set(variants) == set(SHAPES)
    for name, spec in SHAPES.items():
        variant = variants[name]
        assert set(variant["required"]) == {"shape", *spec.dimensions}, name
        assert set(variant["properties"]) == {"shape", *spec.dimensions, *spec.optional}, name
        assert variant["additionalProperties"] is False, name
    # The shape enums of the GET parameter and of the echoed inputs list the same shapes.
    assert resolve(SPEC["components"]["parameters"]["QPelletShape"])["schema"]["enum"] == list(SHAPES)


def test_rate_laws_match_the_kinetics_registry():
    schemas = SPEC["components"]["schemas"]
    models = {}
    for branch in schemas["RateLaw"]["oneOf"]:
        branch = resolve(branch)
        models[branch["properties"]["model"]["const"]] = branch
    assert set(models) == set(KINETICS_SCHEMAS)
    # A case's kinetics is the rate law with its rate constant; /v1/diagnose takes the form alone.
    with_constant = set(schemas["Kinetics"]["required"])
    assert with_constant == {"rate_constant"}
    assert schemas["DiagnoseKinetics"]["not"] == {"required": ["rate_constant"]}
    for name, schema in KINETICS_SCHEMAS.items():
        assert set(models[name]["properties"]) == set(schema.fields), name
        assert set(models[name]["required"]) | with_constant == {
            n for n, f in schema.fields.items() if f.required}, name
        assert models[name]["additionalProperties"] is False, name
    from service.physics.kinetics import RATE_LAWS

    assert set(RATE_LAWS) == set(models)
    enum = resolve(SPEC["components"]["parameters"]["QKineticsModel"])["schema"]["enum"]
    assert enum == list(RATE_LAWS)
    echoed = schemas["InputsEcho"]["properties"]["kinetics"]["properties"]["model"]["enum"]
    assert echoed == list(RATE_LAWS)


def test_blocks_and_their_required_fields_match_the_case_schema():
    case = SPEC["components"]["schemas"]["EffectivenessCase"]
    assert set(case["properties"]) == set(CASE_SCHEMA.fields)
    assert set(case["required"]) == {n for n, f in CASE_SCHEMA.fields.items() if f.required}
    assert case["additionalProperties"] is False
    for block, field in CASE_SCHEMA.fields.items():
        nested = getattr(field, "schema", None)
        if nested is None:  # pellet and kinetics: tagged unions, checked against their registries
            continue
        spec_block = resolve(case["properties"][block])
        assert set(spec_block["properties"]) == set(nested.fields), block
        assert set(spec_block.get("required", [])) == {
            n for n, f in nested.fields.items() if f.required
        }, block
        assert spec_block["additionalProperties"] is False, block


def test_diagnose_and_size_bodies_are_the_case_plus_their_schemas():
    from service.schemas.diagnose import OBSERVED_RATE_SCHEMA
    from service.schemas.size import SIZE_EXTRAS_SCHEMA, BedSchema, TableSchema

    schemas = SPEC["components"]["schemas"]
    case = schemas["EffectivenessCase"]
    bodies = (("DiagnoseRequest", OBSERVED_RATE_SCHEMA), ("SizeRequest", SIZE_EXTRAS_SCHEMA))
    for name, extras in bodies:
        body = schemas[name]
        assert set(body["properties"]) == set(case["properties"]) | set(extras.fields), name
        assert set(body["required"]) == set(case["required"]) | {
            n for n, f in extras.fields.items() if f.required}, name
        assert body["additionalProperties"] is False, name
        assert {"$ref": "#/components/schemas/CaseConditions"} in body["allOf"], name
        for block in case["properties"]:
            if block != "kinetics":
                assert body["properties"][block] == case["properties"][block], (name, block)
    kinetics = schemas["DiagnoseRequest"]["properties"]["kinetics"]
    assert kinetics == {"$ref": "#/components/schemas/DiagnoseKinetics"}
    for spec_name, schema in (("Bed", BedSchema()), ("SizeTable", TableSchema())):
        block = schemas[spec_name]
        assert set(block["properties"]) == set(schema.fields), spec_name
        assert set(block.get("required", [])) == {n for n, f in schema.fields.items() if f.required}


def test_query_parameters_are_the_request_fields():
    (get,) = [op for path, method, op in operations()
              if path == "/v1/effectiveness" and method == "get"]
    parameters = {p["name"]: p for p in map(resolve, get["parameters"])}
    # The GET takes the fields of a case (not species data, not other operations' fields).
    blocks = set(SPEC["components"]["schemas"]["EffectivenessCase"]["properties"])
    query_fields = {name: rule for name, rule in FIELD_RULES.items()
                    if name.partition(".")[0] in blocks}
    assert set(parameters) - {"format", "field"} == set(query_fields)
    for name, rule in query_fields.items():
        parameter = parameters[name]
        if rule.unit:
            assert parameter.get("x-si-unit") == rule.unit, name
            assert f"SI unit: {rule.unit}" in parameter["description"], name
        if rule.choices:
            assert parameter["schema"]["enum"] == list(rule.choices), name
        if rule.default is not None:
            assert parameter["schema"]["default"] == rule.default, name
    assert parameters["field"]["schema"]["enum"] == list(SCALAR_FIELDS)
    from service.api.effectiveness import FORMATS

    assert parameters["format"]["schema"]["enum"] == list(FORMATS)


def test_warning_codes_are_the_code_table():
    warning = SPEC["components"]["schemas"]["Warning"]
    assert warning["properties"]["code"]["enum"] == list(WARNING_CODES)
    assert warning["properties"]["severity"]["enum"] == list(SEVERITIES)
    described = " ".join(warning["description"].split())
    for code, (severity, meaning) in WARNING_CODES.items():
        assert f"`{code}` ({severity}): {' '.join(meaning.split())}" in described, code


def test_regime_enum_is_the_code_table():
    assert SPEC["components"]["schemas"]["Regime"]["enum"] == list(REGIMES)


def test_field_kinds_of_the_catalogue_are_the_table_kinds():
    kinds = SPEC["components"]["schemas"]["FieldDoc"]["properties"]["kind"]["enum"]
    assert set(kinds) == {rule.kind for rule in FIELD_RULES.values()}


@pytest.mark.parametrize("name", sorted(OUTPUT_UNITS))
def test_result_units_agree_with_the_output_table(name):
    unit = OUTPUT_UNITS[name]
    if name.startswith("profile."):
        schema = SPEC["components"]["schemas"]["Profile"]["properties"][name.split(".", 1)[1]]
    else:
        schema = SPEC["components"]["schemas"]["ResultFields"]["properties"][name]
    assert schema.get("x-si-unit") == unit
    assert f"SI unit: {unit}" in schema["description"]
    consts = [b["properties"]["unit"].get("const") for b in _branches(schema)
              if "unit" in b.get("properties", {})]
    assert consts == [unit], f"{name}: the unit the response schema allows is {consts}"


# --------------------------------------------------------------------- 5. examples are true


def _same(documented, answered, where="") -> list[str]:
    """Differences between a documented example and the app's answer (numbers to 1e-9 relative:
    numerical solutions may move in the last digits between machines)."""
    if isinstance(documented, dict) and isinstance(answered, dict):
        problems = [f"{where}.{k}: documented, not answered"
                    for k in documented.keys() - answered.keys()]
        problems += [f"{where}.{k}: answered, not documented"
                     for k in answered.keys() - documented.keys()]
        for key in documented.keys() & answered.keys():
            problems += _same(documented[key], answered[key], f"{where}.{key}")
        return problems
    if isinstance(documented, list) and isinstance(answered, list):
        if len(documented) != len(answered):
            return [f"{where}: {len(documented)} items documented, {len(answered)} answered"]
        return [p for i, (d, a) in enumerate(zip(documented, answered))
                for p in _same(d, a, f"{where}[{i}]")]
    numbers = (int, float)
    if (isinstance(documented, numbers) and isinstance(answered, numbers)
            and not isinstance(documented, bool) and not isinstance(answered, bool)):
        return [] if answered == pytest.approx(documented, rel=1e-9, abs=1e-300) else [
            f"{where}: documented {documented!r}, answered {answered!r}"]
    if documented == answered:
        return []
    return [f"{where}: documented {documented!r}, answered {answered!r}"]


def _answered_examples():
    """(operation, request example, response example) pairs that share an example name."""
    for path, method, op in operations():
        answers = op["responses"]["200"].get("content", {}).get("application/json", {})
        answers = answers.get("examples", {})
        content = op.get("requestBody", {}).get("content", {})
        for name, example in content.get("application/json", {}).get("examples", {}).items():
            if name in answers:
                yield pytest.param(method, path, resolve(example)["value"],
                                   resolve(answers[name])["value"],
                                   id=f"{method.upper()} {path} {name}")


@pytest.mark.parametrize("method, path, body, documented", list(_answered_examples()))
def test_response_example_is_the_apps_answer(client, method, path, body, documented):
    response = client.open(path, method=method.upper(), json=body)
    assert response.status_code == 200, response.get_data(as_text=True)
    problems = _same(documented, response.get_json())
    assert not problems, "\n".join(problems)


def test_every_computing_operation_has_a_true_response_example():
    answered = {(p.values[0], p.values[1]) for p in _answered_examples()}
    for path in ("/v1/effectiveness", "/v1/effectiveness/batch", "/v1/diffusivity",
                 "/v1/diagnose", "/v1/size", "/v1/sweep"):
        assert ("post", path) in answered, path


def test_effectiveness_examples_cover_the_engine():
    """The examples show heat effects with several steady states, a film, and every rate law."""
    op = SPEC["paths"]["/v1/effectiveness"]["post"]
    answers = [resolve(e)["value"] for e in
               op["responses"]["200"]["content"]["application/json"]["examples"].values()]
    assert any(len(a.get("steady_states", [])) >= 3 and "thermal" in a for a in answers)
    assert any("film" in a and "overall_effectiveness" in a for a in answers)
    requests = [resolve(e)["value"] for e in
                op["requestBody"]["content"]["application/json"]["examples"].values()]
    assert {r["kinetics"]["model"] for r in requests} == set(KINETICS_SCHEMAS)
    codes = {w["code"] for a in answers for w in a["warnings"]}
    assert {"MULTIPLE_STEADY_STATES", "LARGE_TEMPERATURE_RISE",
            "EXTERNAL_FILM_SIGNIFICANT"} <= codes


def _csv_examples():
    """JSON request examples whose answer is also documented as CSV (same example name)."""
    for path, method, op in operations():
        csv = op["responses"]["200"].get("content", {}).get("text/csv", {})
        documented = csv.get("examples", {})
        content = op.get("requestBody", {}).get("content", {}).get("application/json", {})
        for name, example in content.get("examples", {}).items():
            if name in documented:
                yield pytest.param(path, resolve(example)["value"], documented[name]["value"],
                                   id=f"{path} {name}")


@pytest.mark.parametrize("path, body, documented", list(_csv_examples()))
def test_csv_answer_is_as_documented(client, openapi, path, body, documented):
    response = _call_and_check(client, openapi, {
        "method": "post", "path": path, "media_type": "application/json", "body": body,
        "headers": {"Accept": "text/csv"},
    })
    assert response.status_code == 200
    assert response.mimetype == "text/csv"

    def cells(text):
        return [[float(v) if _is_number(v) else v for v in line.split(",")]
                for line in text.split("\r\n")]

    got, want = cells(response.get_data(as_text=True)), cells(documented)
    assert not _same(want, got), "\n".join(_same(want, got))


def test_size_and_sweep_csv_answers_are_documented():
    paths = {p.values[0] for p in _csv_examples()}
    assert {"/v1/size", "/v1/sweep"} <= paths


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


@pytest.mark.parametrize("path, name", [
    ("/v1/effectiveness", "kr7Sphere"), ("/v1/size", "kr7SphereSizing"),
    ("/v1/effectiveness/curve", "kr7SphereCurve"), ("/v1/sweep", "kr7SphereRadiusSweep"),
])
def test_svg_answers_are_documented(client, openapi, path, name):
    op = SPEC["paths"][path]["post"]
    body = resolve(op["requestBody"]["content"]["application/json"]["examples"][name])["value"]
    response = _call_and_check(client, openapi, {
        "method": "post", "path": path, "media_type": "application/json", "body": body,
        "headers": {"Accept": "image/svg+xml"},
    })
    assert response.status_code == 200
    assert response.mimetype == "image/svg+xml"
    assert b"<svg" in response.get_data()


def test_metrics_answer_is_as_documented(client, openapi):
    client.get("/healthz")  # at least one request counted
    response = _call_and_check(client, openapi, {"method": "get", "path": "/metrics"})
    assert response.status_code == 200
    assert response.mimetype == "text/plain"
    assert "# TYPE pellet_http_requests_total counter" in response.get_data(as_text=True)


# --------------------------------------------------------------------- 6. API keys

KEY = "kr7-lab-key"  # invented
OPEN_OPERATIONS = {("/healthz", "get"), ("/readyz", "get")}


def test_keyed_operations_document_401_and_403_and_probes_are_open():
    schemes = SPEC["components"]["securitySchemes"]
    assert schemes["ApiKeyHeader"] == {**schemes["ApiKeyHeader"], "type": "apiKey",
                                       "in": "header", "name": "X-API-Key"}
    assert schemes["BearerKey"]["scheme"] == "bearer"
    assert {} in SPEC["security"], "keys are optional: a server without keys needs none"
    for path, method, op in operations():
        if (path, method) in OPEN_OPERATIONS:
            assert op["security"] == [], path
            assert not {"401", "403"} & set(op["responses"]), path
        else:
            assert "security" not in op, path
            assert {"401", "403"} <= set(op["responses"]), f"{method.upper()} {path}"


@pytest.fixture
def keyed_client():
    from service import create_app

    return create_app({"TESTING": True, "API_KEYS": KEY}).test_client()


@pytest.mark.parametrize("headers, status", [
    ({}, 401), ({"X-API-Key": "not-a-key"}, 403), ({"X-API-Key": KEY}, 200),
    ({"Authorization": f"Bearer {KEY}"}, 200),
], ids=["no key", "wrong key", "key header", "bearer"])
@pytest.mark.parametrize("path", ["/v1/effectiveness", "/v1/models", "/metrics"])
def test_keyed_answers_match_the_spec(keyed_client, openapi, path, headers, status):
    args = {"method": "get", "path": path, "headers": headers}
    if path == "/v1/effectiveness":
        args = {**args, "method": "post", "media_type": "application/json", "body": _kr7()}
    response = keyed_client.open(_builder(**args))
    assert response.status_code == status, response.get_data(as_text=True)
    request = WerkzeugOpenAPIRequest(_builder(**args).get_request())
    openapi.validate_response(request, WerkzeugOpenAPIResponse(response))
    if status == 401:
        assert response.headers["WWW-Authenticate"]


@pytest.mark.parametrize("path", ["/healthz", "/readyz"])
def test_probes_need_no_key(keyed_client, openapi, path):
    response = _call_and_check(keyed_client, openapi, {"method": "get", "path": path})
    assert response.status_code == 200


def test_problem_kinds_are_the_error_table():
    from service.errors import PROBLEMS

    described = " ".join(SPEC["components"]["schemas"]["Problem"]["description"].split())
    for kind, (status, _title) in PROBLEMS.items():
        assert kind in described, kind
        if kind not in ("malformed-body", "internal-error"):
            assert f"{kind} ({status})" in described, kind
