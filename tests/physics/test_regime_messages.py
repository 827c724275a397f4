"""The regime message template used by the batch writer gives the single-case text."""

import random

import pytest

from service.physics.effectiveness import regime_diagnostics, regime_message_template


@pytest.mark.parametrize("order", [0.5, 1.0, 2.0])
def test_template_gives_the_diagnostic_message(order):
    rng = random.Random(int(order * 10))
    for _ in range(500):
        generalized = 10 ** rng.uniform(-0.5, 4)  # transition and diffusion regimes
        eta = rng.uniform(1e-5, 1.0)
        (diagnostic,) = regime_diagnostics(generalized, eta, order)
        regime = "diffusion" if diagnostic.code == "STRONG_PORE_DIFFUSION" else "transition"
        assert regime_message_template(regime, order) % (generalized, eta) == diagnostic.message
