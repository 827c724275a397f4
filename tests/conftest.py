"""Shared fixtures: the app (pytest-flask picks up `app` and provides `client`)."""

import copy

import pytest

from service import create_app

# Demo scenario (invented): the "Kestrel Ridge" hydrotreating pilot plant, catalyst KR-7
# spheres of 3 mm diameter; numbers are plausible, not plant data.
SPHERE_CASE = {
    "pellet": {"shape": "sphere", "radius": "1.5 mm"},
    "kinetics": {"model": "power_law", "order": 1, "rate_constant": "12 1/s"},
    "transport": {"effective_diffusivity": "1.2e-6 m^2/s"},
    "surface": {"concentration": "40 mol/m^3"},
}


@pytest.fixture
def app():
    return create_app({"TESTING": True})


@pytest.fixture
def sphere_case():
    return copy.deepcopy(SPHERE_CASE)
