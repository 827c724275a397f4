"""Median in-process latency of one POST /v1/effectiveness and of the bare physics call.

Run: .venv/bin/python bench/latency.py   (prints its figures; not a timed test)
"""

from __future__ import annotations

import statistics
import time

from service import create_app
from service.physics.case import Case
from service.physics.effectiveness import evaluate

CASE = {
    "pellet": {"shape": "sphere", "radius": "1.5 mm"},
    "kinetics": {"model": "power_law", "order": 1, "rate_constant": "12 1/s"},
    "transport": {"effective_diffusivity": "1.2e-6 m^2/s"},
    "surface": {"concentration": "40 mol/m^3"},
}


def median_seconds(fn, repeats: int = 3000, warmup: int = 200) -> float:
    for _ in range(warmup):
        fn()
    samples = []
    for _ in range(repeats):
        start = time.perf_counter()
        fn()
        samples.append(time.perf_counter() - start)
    return statistics.median(samples)


def main() -> None:
    client = create_app({"TESTING": True}).test_client()
    physics_case = Case("sphere", {"radius": 1.5e-3}, "power_law",
                        {"order": 1.0, "rate_constant": 12.0}, 1.2e-6, 40.0)

    def post():
        response = client.post("/v1/effectiveness", json=CASE)
        assert response.status_code == 200

    t_post = median_seconds(post)
    t_physics = median_seconds(lambda: evaluate(physics_case))
    print(f"POST /v1/effectiveness via test client: median {t_post * 1e3:.3f} ms")
    print(f"bare physics call (evaluate):            median {t_physics * 1e3:.4f} ms")
    print(f"web-layer overhead ratio:                 {t_post / t_physics:.1f}x")


if __name__ == "__main__":
    main()
