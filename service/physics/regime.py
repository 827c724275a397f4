"""Regime of a case from its generalized modulus, and the thresholds used.

Thresholds (common practice, on the generalized modulus Phi based on V_p/S_p):
- kinetic, Phi < 0.3: the effectiveness factor of every ideal shape is above
  about 0.95 for first order (sphere 0.949, cylinder 0.958, slab 0.971 at 0.3);
- diffusion, Phi > 3: eta is within about 11 % of the asymptote 1/Phi for every
  ideal shape (slab 0.5 %, sphere 11 % at Phi = 3);
- transition in between.
With heat effects the isothermal modulus can be small while the pellet interior runs
far from its surface state (eta well away from 1): such a case is reported as
``transition`` when |eta - 1| > 0.05 (the same 5 % that bounds the kinetic regime).
The numbers quoted are evaluated from the closed forms in ``closed_form``; the
choice of 0.3 and 3 is common practice (e.g. the asymptotes drawn in
Froment, Bischoff & De Wilde, Chemical Reactor Analysis and Design, 3rd ed.,
2011, ch. 3), not a published rule.
"""

from __future__ import annotations

KINETIC_LIMIT = 0.3
DIFFUSION_LIMIT = 3.0

REGIMES = ("kinetic", "transition", "diffusion")


KINETIC_DEVIATION = 0.05  # |eta - 1| allowed in the kinetic regime with heat effects


def regime_of(generalized_modulus: float, effectiveness_factor: float | None = None,
              heat_effects: bool = False) -> str:
    """'kinetic', 'transition' or 'diffusion' for a generalized modulus [-] (and, with
    heat effects, the effectiveness factor)."""
    if generalized_modulus < KINETIC_LIMIT:
        if heat_effects and abs(effectiveness_factor - 1.0) > KINETIC_DEVIATION:
            return "transition"
        return "kinetic"
    if generalized_modulus > DIFFUSION_LIMIT:
        return "diffusion"
    return "transition"
