"""Benchmark of the reaction-diffusion solver (not a timed test).

Prints, in one run:
1. median wall time of one numerical solve of a second-order sphere, Thiele modulus 1..10;
2. the ratio of that median to a direct scipy.integrate.solve_bvp call on the same problem
   set up by hand (u'' + (2/x) u' = phi^2 u^2, u'(0) = 0, u(1) = 1, tol 1e-6, the usual
   regularized sphere form with the singular term S = [[0, 0], [0, -2]]);
3. median wall time of a full non-isothermal steady-state search (sphere, gamma = 20,
   beta = 0.3, modulus in and around the multiplicity window).

Run: .venv/bin/python bench/solver.py
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np
from scipy.integrate import solve_bvp

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from service.physics import bvp, kinetics  # noqa: E402

MODULI = np.linspace(1.0, 10.0, 19)
REPEATS = 5


def _median_time(func, cases):
    times = []
    for _ in range(REPEATS):
        for case in cases:
            t0 = time.perf_counter()
            func(case)
            times.append(time.perf_counter() - t0)
    return statistics.median(times)


def ours(phi):
    law = kinetics.PowerLaw(phi * phi, 2.0)
    res = bvp.solve_reaction_diffusion(law, 2, 1.0, 1.0, 1.0)
    assert res.success, res.message
    return res.effectiveness_factor


def scipy_direct(phi):
    x = np.linspace(0.0, 1.0, 21)
    y = np.vstack((np.ones_like(x), np.zeros_like(x)))
    S = np.array([[0.0, 0.0], [0.0, -2.0]])

    def fun(x, y):
        return np.vstack((y[1], phi * phi * np.maximum(y[0], 0.0) ** 2))

    def bc(ya, yb):
        return np.array([ya[1], yb[0] - 1.0])

    sol = solve_bvp(fun, bc, x, y, S=S, tol=1e-6, max_nodes=100000)
    return 3.0 * sol.sol(1.0)[1] / phi**2


def thermal(phi):
    law = kinetics.PowerLaw(phi * phi, 1.0)
    res = bvp.solve_reaction_diffusion(law, 2, 1.0, 1.0, 1.0, prater_number=0.3,
                                       arrhenius_number=20.0, temperature=600.0)
    assert res.success, res.message
    return len(res.steady_states)


def thermal_ring(phi):
    law = kinetics.PowerLaw(phi * phi, 1.0)
    res = bvp.solve_reaction_diffusion(law, 1, 1.0, 1.0, 1.0, prater_number=0.3,
                                       arrhenius_number=20.0, temperature=600.0,
                                       inner_radius_fraction=0.3)
    assert res.success, res.message
    return len(res.steady_states)


def main():
    for phi in (1.0, 5.0):  # warm-up and a consistency check of the two solvers
        a, b = ours(phi), scipy_direct(phi)
        assert abs(a - b) < 1e-4 * b, (phi, a, b)
    t_ours = _median_time(ours, MODULI)
    t_scipy = _median_time(scipy_direct, MODULI)
    t_thermal = _median_time(thermal, np.linspace(0.5, 1.2, 8))
    print(f"n-th order sphere (order 2, modulus 1..10): median {t_ours * 1e3:.2f} ms per solve")
    print(f"ratio to a direct scipy solve_bvp on the same problem: {t_ours / t_scipy:.2f} "
          f"(solve_bvp median {t_scipy * 1e3:.2f} ms)")
    print(f"non-isothermal steady-state search (sphere, gamma 20, beta 0.3): median {t_thermal * 1e3:.2f} ms")
    t_ring = _median_time(thermal_ring, np.linspace(0.8, 1.6, 8))
    print(f"non-isothermal steady-state search (ring a = 0.3, gamma 20, beta 0.3): median "
          f"{t_ring * 1e3:.2f} ms")
    shapes()


SHAPE_CASES = {
    "ring, infinite, first order": {"shape": "hollow_cylinder", "outer_radius": 3e-3, "inner_radius": 1e-3},
    "ring, finite, first order": {"shape": "hollow_cylinder", "outer_radius": 3e-3, "inner_radius": 1e-3, "length": 5e-3},
    "finite cylinder, first order": {"shape": "cylinder", "radius": 1.5e-3, "length": 4e-3},
    "trilobe, first order (2-D section)": {"shape": "extrudate", "lobes": 3, "lobe_diameter": 1.2e-3},
    "quadrilobe, finite, first order": {"shape": "extrudate", "lobes": 4, "lobe_diameter": 1.2e-3, "length": 5e-3},
    "custom (V, S), first order": {"shape": "custom", "volume": 1e-8, "external_area": 2.5e-5},
    "washcoat slab (one face), first order": {"shape": "slab", "thickness": 5e-5, "exposed_faces": 1},
}


def shapes():
    """Median time of one full evaluation (physics entry point) per new shape."""
    from service.physics.case import Case
    from service.physics.effectiveness import evaluate

    def run(pellet, order=1.0, k=12.0):
        dims = {key: value for key, value in pellet.items() if key != "shape"}
        case = Case(pellet["shape"], dims, "power_law", {"order": order, "rate_constant": k},
                    1.2e-6, 40.0)
        return evaluate(case)

    for name, pellet in SHAPE_CASES.items():
        t = _median_time(lambda _x, p=pellet: run(p), [None] * 20)
        print(f"{name}: median {t * 1e3:.2f} ms per case")
    t = _median_time(lambda _x: run(SHAPE_CASES["finite cylinder, first order"], 2.0, 0.3), [None] * 5)
    print(f"finite cylinder, order 2 (2-D r-z solution): median {t * 1e3:.2f} ms per case")


if __name__ == "__main__":
    main()
