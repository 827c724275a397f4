"""SVG pictures: content negotiation, axis labels with quantity and unit, every shape and rate
law, every steady state, and the effectiveness curve against its published closed form.

The SVGs are parsed with xml.etree. Elements the tests look for carry SVG ids (matplotlib gid:
``effectiveness-curve``, ``operating-point``, ...). "The operating point lies on the curve" is
checked in the picture's own display coordinates: both axes are logarithmic, so the drawn
polyline between two computed points is a straight segment in display space, and the marker's
position is compared with that polyline at the marker's x.
"""

from __future__ import annotations

import copy
import re
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import mpmath as mp
import numpy as np
import pytest

SVG_NS = "{http://www.w3.org/2000/svg}"
XLINK_HREF = "{http://www.w3.org/1999/xlink}href"
SVG = {"Accept": "image/svg+xml"}
ROOT = Path(__file__).resolve().parents[2]

BASE = {
    "kinetics": {"model": "power_law", "order": 1, "rate_constant": "12 1/s"},
    "transport": {"effective_diffusivity": "1.2e-6 m^2/s"},
    "surface": {"concentration": "40 mol/m^3"},
}
# Invented pellets (Kestrel Ridge demo scenario), one per registered shape.
PELLETS = {
    "sphere": {"shape": "sphere", "radius": "1.5 mm"},
    "cylinder": {"shape": "cylinder", "radius": "1.2 mm", "length": "4 mm"},
    "slab": {"shape": "slab", "thickness": "2 mm"},
    "hollow_cylinder": {"shape": "hollow_cylinder", "outer_radius": "3 mm",
                        "inner_radius": "1 mm"},
    "extrudate": {"shape": "extrudate", "lobes": 3, "lobe_diameter": "1.2 mm"},
    "custom": {"shape": "custom", "volume": "14 mm^3", "external_area": "28 mm^2"},
}
RATE_LAWS = {
    "power_law": {"model": "power_law", "order": 1, "rate_constant": "12 1/s"},
    "power_law_half": {"model": "power_law", "order": 0.5, "rate_constant": 40},
    "langmuir_hinshelwood": {"model": "langmuir_hinshelwood", "rate_constant": "12 1/s",
                             "adsorption_constant": 0.05},
    "reversible_first_order": {"model": "reversible_first_order", "rate_constant": "12 1/s",
                               "equilibrium_concentration": 5},
}
# Weisz & Hicks (1962), Chem. Eng. Sci. 17, 265: first-order sphere, gamma = 20, beta = 0.3,
# phi = 0.865 lies in the region of three steady states.
THREE_STATES = {
    "pellet": {"shape": "sphere", "radius": "1 mm"},
    "kinetics": {"model": "power_law", "order": 1, "rate_constant": 0.865**2},
    "transport": {"effective_diffusivity": 1e-6},
    "surface": {"concentration": 40},
    "thermal": {"prater_number": 0.3, "arrhenius_number": 20},
}


def case(pellet="sphere", kinetics="power_law", **extra):
    body = copy.deepcopy(BASE)
    body["pellet"] = copy.deepcopy(PELLETS[pellet])
    body["kinetics"] = copy.deepcopy(RATE_LAWS[kinetics])
    body.update(copy.deepcopy(extra))
    return body


SIZE = {**case(), "target_effectiveness": 0.8,
        "bed": {"voidage": 0.4, "fluid_density": 1.2, "fluid_viscosity": 2e-5,
                "superficial_velocity": 1.0}}


def svg_of(response) -> ET.Element:
    assert response.status_code == 200, response.get_data(as_text=True)[:500]
    assert response.mimetype == "image/svg+xml"
    return ET.fromstring(response.data)


def texts(root: ET.Element) -> list[str]:
    return ["".join(t.itertext()).strip() for t in root.iter(SVG_NS + "text")]


def group(root: ET.Element, gid: str) -> ET.Element:
    found = [g for g in root.iter(SVG_NS + "g") if g.get("id") == gid]
    assert len(found) == 1, f"no single element with id {gid!r}"
    return found[0]


def has_group(root: ET.Element, gid: str) -> bool:
    return any(g.get("id") == gid for g in root.iter(SVG_NS + "g"))


def polyline(root: ET.Element, gid: str) -> np.ndarray:
    """Vertices (x, y) of the path drawn in the group ``gid`` (display coordinates)."""
    path = group(root, gid).find(f".//{SVG_NS}path")
    numbers = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?(?:e-?\d+)?", path.get("d"))]
    return np.array(numbers).reshape(-1, 2)


def marker(root: ET.Element, gid: str) -> tuple[float, float]:
    use = group(root, gid).find(f".//{SVG_NS}use")
    return float(use.get("x")), float(use.get("y"))


# --------------------------------------------------------------------------- start-up


def test_matplotlib_is_not_imported_at_start_up():
    # matplotlib costs about 0.6 s to import (DESIGN.md, performance notes): only plots import it.
    code = ("import sys; from service import create_app; create_app({'TESTING': True}); "
            "import service.plots; sys.exit('matplotlib' in sys.modules)")
    run = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                         timeout=60)
    assert run.returncode == 0, run.stderr or "matplotlib was imported at start-up"


# --------------------------------------------------------------------------- negotiation


@pytest.mark.parametrize("accept, media_type", [
    (None, "application/json"),
    ("*/*", "application/json"),
    ("application/json", "application/json"),
    ("image/svg+xml", "image/svg+xml"),
    # what a browser's <img> sends: SVG preferred, anything else at a lower quality
    ("image/avif,image/webp,image/apng,image/svg+xml,image/*,*/*;q=0.8", "image/svg+xml"),
])
def test_effectiveness_answers_json_unless_svg_is_preferred(client, accept, media_type):
    headers = {"Accept": accept} if accept else {}
    response = client.post("/v1/effectiveness", json=case(), headers=headers)
    assert response.status_code == 200
    assert response.mimetype == media_type


def test_a_picture_of_a_bad_case_is_the_usual_problem(client):
    body = case()
    body["pellet"]["radius"] = "1.5 kg"
    response = client.post("/v1/effectiveness", json=body, headers=SVG)
    assert response.status_code == 422
    assert response.mimetype == "application/problem+json"
    assert response.get_json()["errors"][0]["field"] == "pellet.radius"


def test_curve_refuses_media_types_it_cannot_draw(client):
    response = client.post("/v1/effectiveness/curve", json=case(), headers={"Accept": "image/png"})
    assert response.status_code == 406
    assert response.mimetype == "application/problem+json"


def test_pictures_do_not_share_state_between_requests(client):
    first = client.post("/v1/effectiveness", json=case(), headers=SVG).data
    client.post("/v1/effectiveness", json=case("slab", "langmuir_hinshelwood"), headers=SVG)
    client.post("/v1/size", json=SIZE, headers=SVG)
    assert client.post("/v1/effectiveness", json=case(), headers=SVG).data == first


# --------------------------------------------------------------------------- profile


@pytest.mark.parametrize("pellet", list(PELLETS))
def test_profile_picture_for_every_shape(client, pellet):
    root = svg_of(client.post("/v1/effectiveness", json=case(pellet), headers=SVG))
    labels = texts(root)
    assert "Concentration c [mol/m³]" in labels
    one_dimensional = pellet in ("sphere", "slab")  # first order: rings take the 2-D path
    if one_dimensional:
        expected = "Distance from the mid-plane x [mm]" if pellet == "slab" else "Radial position r [mm]"
        assert expected in labels
        assert len(polyline(root, "concentration-profile")) >= 20
    else:  # 2-D or generalized-modulus shapes carry no 1-D profile: the picture says so
        assert any("No 1-D profile exists" in t for t in labels)


@pytest.mark.parametrize("kinetics", list(RATE_LAWS))
def test_profile_picture_for_every_rate_law(client, kinetics):
    root = svg_of(client.post("/v1/effectiveness", json=case("sphere", kinetics), headers=SVG))
    assert {"Concentration c [mol/m³]", "Radial position r [mm]"} <= set(texts(root))
    concentration = polyline(root, "concentration-profile")
    # SVG y grows downwards: the concentration rises from the centre to the surface
    assert concentration[0, 1] > concentration[-1, 1]


def test_every_steady_state_is_drawn(client):
    answer = client.post("/v1/effectiveness", json=THREE_STATES).get_json()
    assert len(answer["steady_states"]) == 3
    root = svg_of(client.post("/v1/effectiveness", json=THREE_STATES, headers=SVG))
    head = answer["headline_state"]
    polyline(root, "concentration-profile")  # the headline state's full profile
    others = [i for i in range(3) if i != head]
    centres = {i: marker(root, f"steady-state-{i}") for i in others}  # the others: centre values
    labels = " ".join(texts(root))
    assert f"state {head + 1} of 3" in labels
    for i in others:
        assert f"centre c of state {i + 1}" in labels
    # higher centre concentration is drawn higher (smaller SVG y)
    c = {i: answer["steady_states"][i]["center_concentration"]["value"] for i in others}
    low, high = sorted(others, key=c.get)
    assert centres[high][1] < centres[low][1]


def test_temperature_is_drawn_on_a_second_axis(client):
    body = case(thermal={"heat_of_reaction": "-200 kJ/mol", "activation_energy": "100 kJ/mol",
                         "effective_thermal_conductivity": 0.2, "temperature": "600 K"})
    root = svg_of(client.post("/v1/effectiveness", json=body, headers=SVG))
    assert {"Temperature T [K]", "Concentration c [mol/m³]"} <= set(texts(root))
    temperature = polyline(root, "temperature-profile")
    assert temperature[0, 1] < temperature[-1, 1]  # exothermic: hottest at the centre


# --------------------------------------------------------------------------- curve


def sphere_first_order(phi_generalized: float) -> float:
    """Thiele (1939), Ind. Eng. Chem. 31, 916: eta = 3 (phi coth phi - 1) / phi^2 on the
    radius, phi = 3 Phi (V_p/S_p = R/3); evaluated with mpmath at 30 digits."""
    phi = 3 * mp.mpf(phi_generalized)
    return float(3 * (phi * mp.coth(phi) - 1) / phi**2) if phi > 1e-4 else 1.0 - float(phi**2) / 15


def test_curve_points_are_the_published_closed_form(client):
    with mp.workdps(30):
        curve = client.post("/v1/effectiveness/curve", json=case()).get_json()
        assert curve["method"] == "closed_form" and curve["complete"]
        for point in curve["points"]:
            assert point["effectiveness_factor"] == pytest.approx(
                sphere_first_order(point["generalized_modulus"]), rel=1e-12)
    moduli = [p["generalized_modulus"] for p in curve["points"]]
    assert min(moduli) <= 1e-2 and max(moduli) >= 1e2  # both asymptotes are reached
    last = curve["points"][-1]
    # large modulus: eta -> 1/Phi (Aris 1965, Ind. Eng. Chem. Fundam. 4, 227)
    assert last["effectiveness_factor"] * last["generalized_modulus"] == pytest.approx(1, rel=0.02)


CURVE_CASES = {
    "sphere-first-order (closed form)": case(),
    "slab-first-order (closed form)": case("slab"),
    "cylinder-finite (2-D)": case("cylinder"),
    "ring (engine)": case("hollow_cylinder", "langmuir_hinshelwood"),
    "extrudate (generalized modulus)": case("extrudate", "power_law_half"),
    "custom (generalized modulus)": case("custom", "reversible_first_order"),
    "three steady states": THREE_STATES,
}


@pytest.mark.parametrize("body", list(CURVE_CASES.values()), ids=list(CURVE_CASES))
def test_operating_point_lies_on_the_drawn_curve(client, body):
    root = svg_of(client.post("/v1/effectiveness/curve", json=body, headers=SVG))
    labels = set(texts(root))
    assert {"Generalized modulus Φ [-]", "Effectiveness factor η [-]"} <= labels
    assert has_group(root, "asymptote-kinetic") and has_group(root, "asymptote-diffusion")
    curve = polyline(root, "effectiveness-curve")
    x, y = marker(root, "operating-point")
    order = np.argsort(curve[:, 0])
    drawn = np.interp(x, curve[order, 0], curve[order, 1])
    if body is THREE_STATES:
        # the headline curve jumps at ignition; the operating point (the stable state with the
        # largest eta) must lie on the curve or on one of the other drawn states
        assert has_group(root, "unstable-steady-states")
        assert {"other stable states", "unstable states"} <= labels
        return
    # 1.5 display units (pt) on a plot ~330 pt high spanning ~4 decades: ~0.5 % in eta
    assert abs(drawn - y) < 1.5


def test_curve_needs_a_reaction(client):
    body = case()
    body["kinetics"]["rate_constant"] = 0
    response = client.post("/v1/effectiveness/curve", json=body)
    assert response.status_code == 422
    assert response.get_json()["errors"][0]["field"] == "kinetics.rate_constant"


# --------------------------------------------------------------------------- size trade-off



def test_size_tradeoff_picture(client):
    root = svg_of(client.post("/v1/size", json=SIZE, headers=SVG))
    assert {"Effectiveness factor η [-]", "Pressure gradient −dP/dz [Pa/m]",
            "Radius [mm]"} <= set(texts(root))
    eta = polyline(root, "effectiveness-vs-size")
    answer = client.post("/v1/size", json=SIZE).get_json()
    assert len(eta) == len(answer["tradeoff"])
    # the largest pellet's line crosses the eta curve at the target line
    target_y = polyline(root, "target-effectiveness")[0, 1]
    largest_x = polyline(root, "largest-pellet")[0, 0]
    crossing = np.interp(target_y, eta[:, 1], eta[:, 0])  # eta falls with size: y rises
    assert abs(crossing - largest_x) < 3.0
    assert len(polyline(root, "pressure-gradient")) == len(answer["tradeoff"])


def test_size_keeps_json_and_csv(client):
    assert client.post("/v1/size", json=SIZE).mimetype == "application/json"
    assert client.post("/v1/size", json=SIZE, headers={"Accept": "text/csv"}).mimetype == "text/csv"
    assert client.post("/v1/size", json=SIZE, headers={"Accept": "image/png"}).status_code == 406


def test_size_picture_without_a_bed(client):
    body = {**case(), "target_effectiveness": 0.9, "table": {"points": 5}}
    root = svg_of(client.post("/v1/size", json=body, headers=SVG))
    assert not has_group(root, "pressure-gradient")
    assert "Effectiveness factor η [-]" in texts(root)
