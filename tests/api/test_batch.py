"""POST /v1/effectiveness/batch: JSON and CSV, good rows answered, bad rows reported one by one."""

import copy
import csv
import io
import random

import orjson
import pytest

from service.api.batch import run_batch
from service.schemas.batch_decode import decode_cases
from service.physics.effectiveness import evaluate
from service.schemas.responses import result_fields
from service.schemas.case import CASE_SCHEMA
from service.schemas.columnar import fast_path
from service.schemas import csv_rows
from service.schemas.csv_rows import _plain_rows
from tests.conftest import SPHERE_CASE


def _single(client, case):
    return client.post("/v1/effectiveness", json=case).get_json()


def test_json_batch_mixes_good_and_bad_rows(client):
    bad_radius = copy.deepcopy(SPHERE_CASE)
    bad_radius["pellet"]["radius"] = "-2 mm"
    slab = copy.deepcopy(SPHERE_CASE)
    slab["pellet"] = {"shape": "slab", "thickness": "3 mm", "exposed_faces": 1}
    cases = [SPHERE_CASE, bad_radius, "not a case", slab, {"pellet": {}}]
    body = client.post("/v1/effectiveness/batch", json={"cases": cases}).get_json()
    assert (body["rows"], body["succeeded"], body["failed"]) == (5, 2, 3)
    results = body["results"]
    assert [r["index"] for r in results] == [0, 1, 2, 3, 4]
    assert [r["status"] for r in results] == [200, 422, 422, 200, 422]
    # every good row equals the single-case answer (without inputs/profile)
    for index in (0, 3):
        single = _single(client, cases[index])
        single.pop("inputs")
        row = dict(results[index])
        assert row.pop("index") == index and row.pop("status") == 200
        assert row == single
    assert results[1]["errors"] == [{"field": "pellet.radius", "message": "must be > 0 m; got -0.002 m"}]
    assert results[2]["errors"][0]["field"] == "(row)"
    assert {e["field"] for e in results[4]["errors"]} >= {"pellet.shape", "kinetics"}


def test_csv_batch_in_and_out(client):
    text = (
        "pellet.shape,pellet.radius [mm],pellet.thickness [mm],kinetics.model,"
        "kinetics.rate_constant [1/s],transport.effective_diffusivity [cm^2/s],"
        "surface.concentration [mol/L]\n"
        "sphere,1.5,,power_law,12,0.012,0.04\n"
        "slab,,4,power_law,12,0.012,0.04\n"
        "sphere,-1,,power_law,12,0.012,0.04\n"
        "sphere,1.5,,power_law\n"
        "sphere,2 mm,,power_law,12,0.012,0.04\n"
    )
    response = client.post("/v1/effectiveness/batch", data=text,
                           headers={"Content-Type": "text/csv", "Accept": "text/csv"})
    assert response.status_code == 200 and response.mimetype == "text/csv"
    rows = list(csv.DictReader(io.StringIO(response.get_data(as_text=True))))
    assert [r["status"] for r in rows] == ["200", "200", "422", "422", "200"]
    single = _single(client, SPHERE_CASE)
    assert float(rows[0]["effectiveness_factor"]) == pytest.approx(single["effectiveness_factor"], rel=1e-14)
    assert rows[2]["errors"].startswith("pellet.radius:")
    assert "row has 4 cells" in rows[3]["errors"]
    assert float(rows[4]["thiele_length [m]"]) == pytest.approx(2e-3, rel=1e-15)


def test_csv_batch_answers_json_by_default(client):
    text = "pellet.shape,pellet.radius,kinetics.model,kinetics.rate_constant,transport.effective_diffusivity,surface.concentration\nsphere,0.0015,power_law,12,1.2e-6,40\n"
    body = client.post("/v1/effectiveness/batch", data=text, headers={"Content-Type": "text/csv"}).get_json()
    assert body["succeeded"] == 1


@pytest.mark.parametrize(
    "data, ctype, status, field",
    [
        (b"pellet.colour\nred\n", "text/csv", 422, "pellet.colour"),
        (b"pellet.radius [kg]\n1\n", "text/csv", 422, "pellet.radius"),
        (b"pellet.shape,pellet.shape\nsphere,sphere\n", "text/csv", 422, "pellet.shape"),
        (b"\xff\xfe\x00bad", "text/csv", 400, None),
        (b"", "text/csv", 400, None),
        (b'{"cases": 3}', "application/json", 422, "cases"),
        (b'[1, 2]', "application/json", 422, "cases"),
        (b'{"cases": [], "extra": 1}', "application/json", 422, "cases"),
    ],
)
def test_bad_batches(client, data, ctype, status, field):
    response = client.post("/v1/effectiveness/batch", data=data, headers={"Content-Type": ctype})
    assert response.status_code == status
    assert response.mimetype == "application/problem+json"
    if field:
        assert field in [e["field"] for e in response.get_json()["errors"]]


def test_row_limit_is_413(app):
    app.config["MAX_BATCH_ROWS"] = 3
    client = app.test_client()
    response = client.post("/v1/effectiveness/batch", json={"cases": [SPHERE_CASE] * 4})
    assert response.status_code == 413
    text = "pellet.shape\n" + "sphere\n" * 4
    response = client.post("/v1/effectiveness/batch", data=text, headers={"Content-Type": "text/csv"})
    assert response.status_code == 413


def test_not_acceptable(client):
    response = client.post("/v1/effectiveness/batch", json={"cases": []},
                           headers={"Accept": "application/xml"})
    assert response.status_code == 406


def _random_rows(n, seed):
    """Rows mixing valid and invalid values of every kind, to exercise both validators."""
    rng = random.Random(seed)
    radii = ["1.5 mm", "0.2 cm", 0.001, 2, "-1 mm", "0 m", "3 kg", "x", True, None, {"value": 2, "unit": "mm"},
             {"value": "2", "unit": "mm"}, "1e400 m", "4mm", float("nan"), [1]]
    ks = ["12 1/s", "12/s", 5, 0, -1, "3 m/s", "0.5 1/min", {"value": 1, "unit": "1/h"}, False]
    des = [1.2e-6, "1.2e-6 m^2/s", "0.01 cm^2/s", 0, -3, "2 m", "1e-6"]
    cs = [40, "40 mol/m^3", "0.04 mol/L", 0, -1, "1 bar", float("inf")]
    orders = [1, 1.0, 2, "1", None, True]
    rows = []
    for _ in range(n):
        shape = rng.choice(["sphere", "cylinder", "slab", "cube"])
        pellet = {"shape": shape}
        if shape == "slab":
            pellet["thickness"] = rng.choice(radii)
            if rng.random() < 0.5:
                pellet["exposed_faces"] = rng.choice([1, 2, 2.0, "2", 3, [2], {"n": 2}, None])
        else:
            pellet["radius"] = rng.choice(radii)
        kinetics = {"model": "power_law", "rate_constant": rng.choice(ks)}
        order = rng.choice(orders)
        if order is not None:
            kinetics["order"] = order
        if rng.random() < 0.2:
            kinetics["rate_basis"] = rng.choice(["pellet_volume", "catalyst_mass", "x", ["x"], None])
        row = {"pellet": pellet, "kinetics": kinetics,
               "transport": {"effective_diffusivity": rng.choice(des)},
               "surface": {"concentration": rng.choice(cs)}}
        if rng.random() < 0.2:
            row["options"] = {"profile_points": rng.choice([0, 3, 2.0, -1, "3"])}
        if rng.random() < 0.05:
            row["extra"] = 1
        if rng.random() < 0.03:
            row["surface"] = rng.choice([None, [], "40"])
        if rng.random() < 0.03:
            row = rng.choice([None, 7, "case", [row]])
        rows.append(row)
    return rows


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_columnar_and_schema_paths_agree(app, seed):
    """The same rows through both validators: the fast path accepts only rows the schema
    accepts, with identical SI values (the schema decides every other row)."""
    rows = _random_rows(2500, seed)
    groups, rest = fast_path(rows)
    accepted = set()
    for group in groups:
        for position, index in enumerate(group.rows.tolist()):
            accepted.add(index)
            case = CASE_SCHEMA.load(rows[index])  # must not raise
            assert case.shape == group.shape
            for name, values in group.dimensions.items():
                assert case.dimensions[name] == values[position]
            assert case.kinetic_parameters["rate_constant"] == group.rate_constant[position]
            assert case.kinetic_parameters["order"] == 1.0
            assert case.effective_diffusivity == group.effective_diffusivity[position]
            assert case.surface_concentration == group.surface_concentration[position]
    assert accepted.isdisjoint(rest) and accepted | set(rest) == set(range(len(rows)))
    assert len(accepted) > 20  # the generator does produce fast rows
    # and the answers of the batch equal the single-case answers row by row
    with app.app_context():
        texts, failed = run_batch(rows)
    results = [orjson.loads(text) for text in texts]
    assert failed == sum(r["status"] != 200 for r in results)
    regimes, codes = set(), set()
    for index in sorted(accepted):
        case = CASE_SCHEMA.load(rows[index])
        expected = {"index": index, "status": 200, **result_fields(case, evaluate(case))}
        assert results[index] == expected
        regimes.add(expected["regime"])
        codes.update(w["code"] for w in expected["warnings"])
    # every branch of the row writer was compared
    assert regimes == {"kinetic", "transition", "diffusion"}
    assert {"STRONG_PORE_DIFFUSION", "TRANSITION_REGIME", "INPUT_OUTSIDE_COMMON_RANGE"} <= codes


COLUMNS = {
    "pellet.shape": ["sphere", "cylinder", "slab", "sphere", "cube", "sphere"],
    "pellet.radius [mm]": [1.5, "2", None, "0.15 cm", 1.0, 1.5],
    "pellet.thickness [mm]": [None, None, 3, None, None, None],
    "kinetics.model": ["power_law"] * 6,
    "kinetics.order": [1, 1, None, 1, 1, 2],
    "kinetics.rate_constant [1/s]": [12, 12, 12, "0.2 1/min", 12, 0.3],
    "transport.effective_diffusivity [m^2/s]": [1.2e-6] * 6,
    "surface.concentration [mol/m^3]": [40] * 6,
}


def _as_cases(columns):
    """The same rows written as JSON cases, each value with its header unit attached."""
    cases = []
    for i in range(len(columns["pellet.shape"])):
        case = {}
        for header, values in columns.items():
            name, _, unit = header.partition(" [")
            value = values[i]
            if value is None:
                continue
            if unit:
                unit = unit.rstrip("]")
                value = {"value": value, "unit": unit} if isinstance(value, (int, float)) else (
                    value if not value.replace(".", "", 1).isdigit() else f"{value} {unit}")
            section, field = name.split(".")
            case.setdefault(section, {})[field] = value
        cases.append(case)
    return cases


def test_column_layout_in_and_out_equals_the_row_layout(client):
    rows = client.post("/v1/effectiveness/batch", json={"cases": _as_cases(COLUMNS)}).get_json()
    by_columns = client.post("/v1/effectiveness/batch", json={"columns": COLUMNS}).get_json()
    assert by_columns == rows  # column input, row output: the very same answer
    layout = client.post("/v1/effectiveness/batch?layout=columns",
                         json={"columns": COLUMNS}).get_json()
    columns = layout["columns"]
    # row 4: unknown shape; row 5: a rate constant in 1/s for order 2 (wrong dimension)
    assert (layout["rows"], layout["succeeded"], layout["failed"]) == (6, 4, 2)
    assert layout["units"]["observed_rate"] == "mol/(m^3*s)"
    for i, row in enumerate(rows["results"]):
        assert columns["index"][i] == i and columns["status"][i] == row["status"]
        if row["status"] == 200:
            for name in ("effectiveness_factor", "thiele_modulus", "generalized_modulus"):
                assert columns[name][i] == row[name]
            assert columns["observed_rate"][i] == row["observed_rate"]["value"]
            assert columns["regime"][i] == row["regime"] and columns["method"][i] == row["method"]
            assert columns["warnings"][i] == ";".join(w["code"] for w in row["warnings"])
            assert columns["errors"][i] is None
        else:
            assert columns["effectiveness_factor"][i] is None
            assert columns["errors"][i] == "; ".join(f"{e['field']}: {e['message']}"
                                                     for e in row["errors"])


@pytest.mark.parametrize("body, field", [
    ({"columns": {"pellet.shape": ["sphere"], "pellet.radius": [1, 2]}}, "columns"),
    ({"columns": {"pellet.colour": ["red"]}}, "columns.pellet.colour"),
    ({"columns": {"pellet.radius [kg]": [1]}}, "columns.pellet.radius"),
    ({"columns": []}, "columns"),
    ({"columns": {"pellet.shape": "sphere"}}, "columns"),
])
def test_bad_column_bodies(client, body, field):
    response = client.post("/v1/effectiveness/batch", json=body)
    assert response.status_code == 422
    assert field in [e["field"] for e in response.get_json()["errors"]]


def test_unknown_layout_is_422(client):
    response = client.post("/v1/effectiveness/batch?layout=wide", json={"cases": []})
    assert response.status_code == 422


def test_typed_decoding_declines_every_other_body():
    """The typed decoder reads only batches whose rows use fast-path fields and value
    types; any other body is left to the general reader (it never rejects one)."""
    assert decode_cases(orjson.dumps({"cases": [SPHERE_CASE, {}]})) is not None
    thermal = copy.deepcopy(SPHERE_CASE)
    thermal["thermal"] = {"prater_number": 0.1, "arrhenius_number": 10}
    null_radius = copy.deepcopy(SPHERE_CASE)
    null_radius["pellet"]["radius"] = None
    flag_order = copy.deepcopy(SPHERE_CASE)
    flag_order["kinetics"]["order"] = True
    for body in ({"cases": [SPHERE_CASE], "extra": 1}, {"cases": [thermal]},
                 {"cases": [null_radius]}, {"cases": [flag_order]}, {"cases": [SPHERE_CASE, 7]},
                 {"cases": [{"pellet": {"shape": "sphere", "colour": "red"}}]},
                 {"columns": {"pellet.shape": ["sphere"]}}, [SPHERE_CASE], {"cases": {}}):
        assert decode_cases(orjson.dumps(body)) is None, body
    for raw in (b"", b"{", b'{"cases": [NaN]}', b'{"cases": [{"pellet": {"radius": 1e400}}]}'):
        assert decode_cases(raw) is None


@pytest.mark.parametrize("seed", [4, 5])
def test_typed_and_general_reading_answer_alike(client, seed):
    """A batch the typed decoder reads gets the very answer the general reader gives
    the same rows (forced by one extra row the typed decoder declines)."""
    rows = [row for row in _random_rows(3000, seed)
            if decode_cases(orjson.dumps({"cases": [row]})) is not None]
    assert len(rows) > 400
    assert decode_cases(orjson.dumps({"cases": rows})) is not None
    typed = client.post("/v1/effectiveness/batch", json={"cases": rows}).get_json()
    general = client.post("/v1/effectiveness/batch", json={"cases": rows + [None]}).get_json()
    assert decode_cases(orjson.dumps({"cases": rows + [None]})) is None
    assert general["results"][:-1] == typed["results"]
    assert typed["failed"] == general["failed"] - 1 and typed["succeeded"] == general["succeeded"]
    assert 30 < typed["succeeded"] < len(rows)  # both kinds of row were compared


@pytest.mark.parametrize("seed", range(5))
def test_plain_csv_splitting_agrees_with_the_csv_module(seed):
    """Quote-free CSV text is split without the csv module; the rows (blank lines left
    out) are exactly those the csv module (excel dialect) reads."""
    rng = random.Random(seed)
    alphabet = ["a", "1", ".", " ", ",", ",", "\n", "\n", "\r\n", "\t", "mm", "\u00b5", "\r"]
    for _ in range(300):
        text = "".join(rng.choice(alphabet) for _ in range(rng.randint(0, 60)))
        split = _plain_rows(text)
        if split is None:
            assert "\r" in text.replace("\r\n", "")  # declined only for a lone CR here
            continue

        def kept(rows):
            return [r for r in rows if r and (r[0].strip() or "".join(r).strip())]

        assert kept(split) == kept(list(csv.reader(io.StringIO(text, newline="")))), repr(text)


@pytest.mark.parametrize("seed", range(4))
def test_csv_readers_agree(monkeypatch, seed):
    """The whole-table split, the line-by-line split and the csv module read the same
    columns, row problems and units from the same text (blank, ragged and padded lines
    included)."""
    rng = random.Random(seed)
    header = "pellet.shape, pellet.radius [mm] ,kinetics.rate_constant [1/s],surface.concentration"
    cells = ["sphere", " slab ", "", " ", "1.5", "2 mm", "12", "x", "\u00b5"]
    tables = 0
    for _ in range(60):
        lines = [header]
        for _ in range(rng.randint(0, 8)):
            width = rng.choice([4] * 12 + [3, 5, 1])
            lines.append(",".join(rng.choice(cells) for _ in range(width)))
        text = rng.choice(["\n", "\r\n"]).join(lines) + rng.choice(["", "\n", "\n\n"])
        raw = text.encode()
        tables += csv_rows._plain_table(text) is not None
        answers = [csv_rows.read_csv_columns(raw, 100)]
        monkeypatch.setattr(csv_rows, "_plain_table", lambda text: None)
        answers.append(csv_rows.read_csv_columns(raw, 100))
        monkeypatch.setattr(csv_rows, "_plain_rows", lambda text: None)
        answers.append(csv_rows.read_csv_columns(raw, 100))
        monkeypatch.undo()
        assert answers[0] == answers[1] == answers[2], repr(text)
    assert tables > 10  # the whole-table split was compared too


def test_a_batch_of_several_thousand_rows_is_one_valid_answer(client):
    """The answer is written in pieces of 1000 rows: it must still be one JSON document
    with every row once, in order."""
    cases = []
    for i in range(2345):
        case = copy.deepcopy(SPHERE_CASE)
        case["pellet"]["radius"] = f"{0.5 + i / 1000} mm"
        cases.append(case)
    cases[1500]["pellet"]["radius"] = "-1 mm"
    body = client.post("/v1/effectiveness/batch", json={"cases": cases}).get_json()
    assert (body["rows"], body["succeeded"], body["failed"]) == (2345, 2344, 1)
    assert [r["index"] for r in body["results"]] == list(range(2345))
    assert body["results"][1500]["status"] == 422
    assert body["results"][2344]["effectiveness_factor"] == _single(client, cases[2344])[
        "effectiveness_factor"]
