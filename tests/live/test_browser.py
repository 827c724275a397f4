"""The browser page in a real headless Chromium against the real gunicorn (tests/live/conftest.py).

Debian's ``chromium`` (/usr/bin/chromium, installed by .ci/run) driven by Python ``playwright``;
no browser is downloaded. Where Chromium is missing or cannot start, the tests skip and say why.
A screenshot of the filled page is saved to test-artifacts/browser-page.png.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import urllib.request
from pathlib import Path

import pytest
from scipy import special

from tests.live.dockerfile import ROOT

CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run"]
ARTIFACTS = ROOT / "test-artifacts"
TIMEOUT_MS = 15_000

# Never route loopback calls through an HTTP_PROXY from the environment.
_OPENER = urllib.request.build_opener(urllib.request.ProxyHandler({}))

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def browser():
    try:
        from playwright.sync_api import Error, sync_playwright
    except ImportError:
        pytest.skip("Python playwright is not installed (pip install -e '.[test]')")
    if not Path(CHROMIUM).exists() and not shutil.which("chromium"):
        pytest.skip(f"no Chromium at {CHROMIUM} (apt-get install chromium); .ci/run installs it")
    with sync_playwright() as driver:
        try:
            chromium = driver.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        except Error as exc:
            pytest.skip(f"Chromium at {CHROMIUM} cannot be launched here: {exc}")
        try:
            yield chromium
        finally:
            chromium.close()


@pytest.fixture
def page(browser, live_server):
    context = browser.new_context(viewport={"width": 1280, "height": 900})
    page = context.new_page()
    page.set_default_timeout(TIMEOUT_MS)
    outside = []
    page.on("request", lambda r: outside.append(r.url)
            if not r.url.startswith((live_server.base_url, "blob:", "data:")) else None)
    page.goto(live_server.base_url + "/")
    yield page
    context.close()
    assert not outside, f"the page loaded something from another host: {outside}"


def _formula_url(formula: str) -> str:
    """The URL inside =VALUE(WEBSERVICE("..."&"...")) (pieces joined)."""
    match = re.fullmatch(r'=VALUE\(WEBSERVICE\((".*")\)\)', formula, flags=re.S)
    assert match, formula
    pieces = re.findall(r'"([^"]*)"', match.group(1))
    assert match.group(1) == "&".join(f'"{p}"' for p in pieces)
    return "".join(pieces)


def test_form_computes_and_the_generated_formula_gives_the_same_number(page, live_server):
    page.select_option("#pellet-shape", "cylinder")
    page.fill("#pellet-radius", "1.2")  # mm, the unit selected by default
    page.fill("#kinetics-rate-constant", "8")  # 1/s
    page.fill("#transport-effective-diffusivity", "9e-7")  # m^2/s
    page.fill("#surface-concentration", "25")  # mol/m^3
    page.press("#surface-concentration", "Enter")  # keyboard submit
    page.wait_for_selector("#eta")
    eta = float(page.get_attribute("#eta", "data-value"))
    # Infinite cylinder, first order: eta = 2 I1(phi) / (phi I0(phi)), phi = R sqrt(k/D_e)
    # (Aris, The Mathematical Theory of Diffusion and Reaction in Permeable Catalysts, 1975,
    # vol. 1, ch. 3), evaluated with scipy's Bessel functions.
    phi = 1.2e-3 * math.sqrt(8.0 / 9e-7)
    assert eta == pytest.approx(2.0 * special.i1(phi) / (phi * special.i0(phi)), rel=1e-12)
    assert "transition" in page.inner_text("#result") or "diffusion" in page.inner_text("#result")

    body = json.loads(page.input_value("#json-body"))
    assert body["pellet"] == {"shape": "cylinder", "radius": "1.2 mm"}
    assert body["kinetics"]["rate_constant"] == "8 1/s"
    curl = page.input_value("#curl")
    assert curl.startswith(f"curl -s -X POST {live_server.base_url}/v1/effectiveness")
    assert json.loads(curl.split("-d '", 1)[1].rstrip("'")) == body

    url = _formula_url(page.input_value("#formula"))
    assert url.startswith(live_server.base_url + "/v1/effectiveness?") and "format=value" in url
    with _OPENER.open(url, timeout=10) as reply:
        assert reply.status == 200
        assert float(reply.read().decode()) == pytest.approx(eta, rel=1e-12)

    page.wait_for_selector("#profile-figure:not([hidden])")
    page.wait_for_selector("#curve-figure:not([hidden])")
    for image in ("#profile-plot", "#curve-plot"):
        page.wait_for_function(f"document.querySelector('{image}').naturalWidth > 0")
        assert page.get_attribute(image, "alt")
    ARTIFACTS.mkdir(exist_ok=True)
    page.screenshot(path=str(ARTIFACTS / "browser-page.png"), full_page=True)


def test_a_bad_field_is_named_and_marked(page):
    page.fill("#pellet-radius", "-1")
    page.click("#compute")
    page.wait_for_selector("#errors")
    assert "pellet.radius" in page.inner_text("#errors")
    assert page.get_attribute("#pellet-radius", "aria-invalid") == "true"


def test_heat_effects_with_several_steady_states_list_every_state(page):
    # Weisz & Hicks (1962), Chem. Eng. Sci. 17, 265: a first-order sphere with gamma = 20,
    # beta = 0.3 has three steady states at phi = 0.865 (phi^2 = 0.748 with R = 1 mm, D_e = 1e-6).
    page.fill("#pellet-radius", "1")
    page.fill("#kinetics-rate-constant", str(0.865**2))
    page.fill("#transport-effective-diffusivity", "1e-6")
    page.check("#thermal-on")
    page.fill("#thermal-prater-number", "0.3")
    page.fill("#thermal-arrhenius-number", "20")
    page.click("#compute")
    page.wait_for_selector("table.states")
    assert page.locator("table.states tbody tr").count() == 3
    assert "MULTIPLE_STEADY_STATES" in page.inner_text("#warnings")
    page.wait_for_selector("#profile-figure:not([hidden])")


def test_bulk_conditions_with_a_film_and_reaction_data(page):
    page.check("#conditions-bulk")
    page.check("#thermal-on")
    page.select_option("#thermal-form", "data")
    page.fill("#film-mass-transfer-coefficient", "0.02")  # m/s
    page.fill("#bulk-temperature", "600")  # K, the bulk temperature with a film
    page.click("#compute")
    page.wait_for_selector("#eta")
    body = page.input_value("#json-body")
    assert '"film"' in body and '"bulk"' in body and '"surface"' not in body
    assert "Overall effectiveness (with the film)" in page.inner_text("#result")
    assert "Largest temperature rise (Prater)" in page.inner_text("#result")
