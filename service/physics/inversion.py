"""Inverse problems over the one-case evaluation (``effectiveness.evaluate``).

Two questions engineers ask the other way round:

* Lab-data check: a rate r_obs [mol/(m^3 pellet s)] was measured on pellets of
  known size and diffusivity; which intrinsic rate constant k gives exactly that
  rate, how far was the measurement from intrinsic kinetics (eta), and do the
  classic criteria (Weisz-Prater, Mears, Anderson) pass?
* Sizing: the pellet shape is fixed in its proportions (every dimension scaled by
  one factor s, the given pellet being s = 1); which is the largest pellet whose
  effectiveness factor stays at or above a target, and what does size cost in
  pressure drop?

Both invert the service's own ``evaluate`` (the single source of eta), never a
rule of thumb: k solves evaluate(case with k).observed_rate = r_obs and s solves
eta(s) = target, each by ``criteria.invert_monotone`` (Brent's method in ln x,
relative tolerance 1e-13 in x). The observed rate increases monotonically with k
and eta decreases monotonically with size for every isothermal case with normal
(rate increasing with concentration) kinetics; with heat effects the caller is
warned that the root found need not be unique.

References
----------
1. Weisz, P. B., Prater, C. D. (1954). Interpretation of measurements in
   experimental catalysis. Adv. Catal. 6, 143-196 (observable modulus, falsified
   kinetics: apparent activation energy E/2, apparent order (n + 1)/2).
2. Mears, D. E. (1971). Tests for transport limitations in experimental catalytic
   reactors. Ind. Eng. Chem. Process Des. Dev. 10(4), 541-547.
3. Anderson, J. B. (1963). A criterion for isothermal behaviour of a catalyst
   pellet. Chem. Eng. Sci. 18, 147-148.
4. Prater, C. D. (1958). The temperature produced by heat of reaction in the
   interior of porous particles. Chem. Eng. Sci. 8, 284-286 (beta).
5. Ergun, S. (1952). Fluid flow through packed columns. Chem. Eng. Prog. 48(2),
   89-94; d_p = 6 V_p/S_p for non-spheres: Bird, Stewart, Lightfoot (2002),
   Transport Phenomena, 2nd ed., sec. 6.4.
6. Aris, R. (1957). On shape factors for irregular particles - I. Chem. Eng. Sci.
   6(6), 262-268 (V_p/S_p as the common length of all shapes).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field, replace

import numpy as np

from . import criteria
from .case import Case
from .diagnostics import Diagnostic, diagnostic
from .effectiveness import EffectivenessResult, evaluate
from .errors import PhysicsInputError, SolverBudgetExceeded
from .geometry import build_geometry
from .sizing import ergun_pressure_gradient

# Common practice: a measured rate with eta >= 0.95 is taken as intrinsic (5 % deviation,
# the same tolerance Mears [2] used for his criteria).
EFFECTIVENESS_THRESHOLD = 0.95
SOURCE_EFFECTIVENESS = ("exact effectiveness factor of this service at the inferred rate "
                        "constant; threshold 0.95 is common practice")

# Search span of the rate constant around the first estimate (factor each way): a Thiele
# modulus range of 1e20, far beyond the 1e-8..1e8 the closed forms are built for.
RATE_CONSTANT_SPAN = 1e20
# Scale factors searched for the largest pellet (independent of the trade-off table).
SIZE_SEARCH_SCALES = (1e-4, 1e4)

# How each pellet dimension scales with the linear scale factor s (power of s).
# Counts (exposed faces, lobes) are not scaled.
DIMENSION_POWERS = {
    "radius": 1, "thickness": 1, "outer_radius": 1, "inner_radius": 1, "length": 1,
    "lobe_diameter": 1, "volume": 3, "external_area": 2, "exposed_faces": 0, "lobes": 0,
}

INVERSION_MESSAGES = {
    0: "converged: the rate constant reproduces the observed rate",
    1: "no rate constant in the range searched reproduces the observed rate",
    2: "the evaluation returned a non-finite value while searching",
    3: "the root finder did not converge within its iteration limit",
}


# What a budget error names: the whole search shares one budget.
INVERSION_WHAT = "inverse search (many evaluations of the case)"
# The argument ``evaluate`` names when a case overflows the double range.
OVERFLOW_ARGUMENT = "(case)"


@dataclass(frozen=True)
class Deadline:
    """A time budget [s] shared by every evaluation of one inversion (``time.monotonic``)."""

    budget: float
    ends: float

    @classmethod
    def start(cls, budget: float | None) -> Deadline | None:
        return None if budget is None else cls(float(budget), time.monotonic() + float(budget))

    def remaining(self, what: str) -> float:
        left = self.ends - time.monotonic()
        if left <= 0:
            raise SolverBudgetExceeded(self.budget, what)
        return left


def evaluate_finite(case: Case, deadline: Deadline | None = None) -> EffectivenessResult | None:
    """``evaluate(case)``, or None when its numbers leave the double range (overflow,
    non-finite eta or rate): the searches below treat that as a non-finite value.
    Any other PhysicsInputError (a case that cannot be computed at all) propagates, and
    so does SolverBudgetExceeded (also raised when ``deadline`` has passed)."""
    try:
        with np.errstate(all="ignore"):
            if deadline is None:
                result = evaluate(case)
            else:
                result = evaluate(case, deadline.remaining(INVERSION_WHAT))
    except ArithmeticError:
        return None
    except PhysicsInputError as exc:
        if exc.argument == OVERFLOW_ARGUMENT:
            return None
        raise
    values = (result.effectiveness_factor, result.observed_rate, result.characteristic_length)
    return result if all(math.isfinite(v) for v in values) else None


@dataclass(frozen=True)
class MonotoneRoot:
    """x with g(x) = target for a monotone g, found by ``solve_monotone``.

    status : 0 solved (x, g_x set), 1 the target lies beyond ``limits`` in the direction of
    the walk (edge, g_edge: the last limit reached and g there), 2 g was not finite at
    the reference point or at every retry of a step, 3 Brent did not converge.
    values : every finite g met [same unit as target]; function_calls : evaluations of g.
    """

    x: float | None
    g_x: float | None
    status: int
    edge: float | None
    g_edge: float | None
    values: tuple
    function_calls: int


def solve_monotone(g, target: float, x0: float, limits: tuple[float, float], increasing: bool,
                   factor: float = 4.0, rtol: float = 1e-13, retries: int = 3,
                   fallback: float | None = None) -> MonotoneRoot:
    """Solve g(x) = target for x > 0, g monotone in the stated direction.

    Walks from x0 by ``factor`` per step in the one direction that approaches the target
    (so sizes or rate constants far on the other side are never evaluated); a step whose
    g is not finite (NaN: a case the engine could not compute) is retried with the square
    root of the factor, ``retries`` times. Once g - target changes sign the root is found
    by ``criteria.invert_monotone`` inside that bracket (Brent's method in ln x,
    |dx|/x <= rtol). ``fallback``: a start used when g is not finite at x0.
    """
    values: list[float] = []
    calls = 0

    def g_finite(x):
        nonlocal calls
        calls += 1
        value = float(g(x))
        if math.isfinite(value):
            values.append(value)
        return value

    def done(status, x=None, gx=None, edge=None, g_edge=None):
        return MonotoneRoot(x, gx, status, edge, g_edge, tuple(values), calls)

    lo_lim, hi_lim = limits
    x, gx = x0, g_finite(x0)
    if not math.isfinite(gx) and fallback is not None:
        x, gx = fallback, g_finite(fallback)
    if not math.isfinite(gx):
        return done(2)
    if gx == target:
        return done(0, x, gx)
    up = (gx < target) == increasing
    while True:
        if (up and x >= hi_lim) or (not up and x <= lo_lim):
            return done(1, edge=x, g_edge=gx)
        step, g_new = factor, math.nan
        for _ in range(retries + 1):
            x_new = min(x * step, hi_lim) if up else max(x / step, lo_lim)
            g_new = g_finite(x_new)
            if math.isfinite(g_new):
                break
            step = math.sqrt(step)
        if not math.isfinite(g_new):
            return done(2)
        if g_new == target:
            return done(0, x_new, g_new)
        if (g_new > target) != (gx > target):
            break
        x, gx = x_new, g_new
    a, b = (x, x_new) if x < x_new else (x_new, x)
    inv = criteria.invert_monotone(g_finite, target, x0=math.sqrt(a * b), limits=(a, b),
                                   rtol=rtol)
    if inv.status != 0:
        return done(2 if inv.status == 2 else 3)
    return done(0, inv.x, inv.residual + target)


def case_with_rate_constant(case: Case, rate_constant: float) -> Case:
    """The same case with the rate constant k [SI, per pellet volume] replaced (and no
    profile asked: the inversions need the scalars only)."""
    return replace(case, profile_points=0, kinetic_parameters={
        **case.kinetic_parameters, "rate_constant": float(rate_constant)})


@dataclass(frozen=True)
class RateConstantInversion:
    """Rate constant k with evaluate(case with k).observed_rate = r_obs.

    rate_constant : k [SI unit of the rate law, per pellet volume], None unless success.
    result : the evaluation at k (eta, moduli, regime, diagnostics), None unless success.
    relative_residual : (r(k) - r_obs)/r_obs [-], None unless success.
    highest_rate, lowest_rate : extreme observed rates met while searching [mol/(m^3 s)]
        (they tell how far an unreachable r_obs lies).
    searched : (k_low, k_high) the span searched.
    status : 0 converged, 1 not reachable, 2 non-finite, 3 no convergence (INVERSION_MESSAGES).
    """

    rate_constant: float | None
    result: EffectivenessResult | None
    success: bool
    status: int
    message: str
    relative_residual: float | None
    highest_rate: float
    lowest_rate: float
    searched: tuple[float, float]
    function_calls: int


def intrinsic_rate_constant(case: Case, observed_rate: float, rtol: float = 1e-13,
                            time_budget: float | None = None) -> RateConstantInversion:
    """Invert the service's own effectiveness relation for the rate constant.

    Solves r(k) = evaluate(case with k).observed_rate = r_obs for k, r(k) increasing
    (isothermal normal kinetics: eta k grows with k, at least as sqrt(k)). The first
    estimate scales a probe at k = 1 linearly, k0 = r_obs / r(1); ``solve_monotone`` then
    walks towards the target by factors of 4 (within k0 / 1e20 .. k0 * 1e20) and Brent's
    method runs in ln k to |dk|/k <= rtol (``criteria.invert_monotone``).

    Parameters
    ----------
    case : the pellet case; its rate constant is ignored (any placeholder).
    observed_rate : r_obs [mol/(m^3 pellet s)], > 0.
    rtol : relative tolerance on k [-].
    time_budget : seconds for the whole search (None: each evaluation its default);
        SolverBudgetExceeded when spent.
    """
    r_obs = float(observed_rate)
    if not math.isfinite(r_obs) or r_obs <= 0:
        raise PhysicsInputError("observed_rate", observed_rate, "must be finite and > 0")
    seen: list[float] = []
    deadline = Deadline.start(time_budget)

    def rate_of(k: float) -> float:
        result = evaluate_finite(case_with_rate_constant(case, k), deadline)
        if result is None:
            return math.nan
        seen.append(result.observed_rate)
        return result.observed_rate

    probe = rate_of(1.0)
    x0 = r_obs / probe if probe > 0 and math.isfinite(probe) else 1.0
    x0 = min(max(x0, 1e-280), 1e280) if math.isfinite(x0) else 1.0
    limits = (max(x0 / RATE_CONSTANT_SPAN, 1e-300), min(x0 * RATE_CONSTANT_SPAN, 1e300))
    inv = solve_monotone(rate_of, r_obs, x0, limits, increasing=True, rtol=rtol,
                         fallback=1.0 if math.isfinite(probe) else None)
    calls = inv.function_calls + 1
    highest, lowest = (max(seen), min(seen)) if seen else (math.nan, math.nan)
    if inv.status != 0:
        return RateConstantInversion(None, None, False, inv.status,
                                     INVERSION_MESSAGES[inv.status], None, highest, lowest,
                                     limits, calls)
    result = evaluate_finite(case_with_rate_constant(case, inv.x), deadline)
    if result is None:
        return RateConstantInversion(None, None, False, 2, INVERSION_MESSAGES[2], None,
                                     highest, lowest, limits, calls + 1)
    residual = (result.observed_rate - r_obs) / r_obs
    return RateConstantInversion(inv.x, result, True, 0, INVERSION_MESSAGES[0], residual,
                                 highest, lowest, limits, calls + 1)


# --- lab-data check ------------------------------------------------------------------


@dataclass(frozen=True)
class ExternalConditions:
    """Film and bulk data for the external criteria (all optional, SI).

    mass_transfer_coefficient k_m [m/s], bulk_concentration c_b [mol/m^3],
    heat_transfer_coefficient h [W/(m^2 K)], bulk_temperature T_b [K].
    """

    mass_transfer_coefficient: float | None = None
    bulk_concentration: float | None = None
    heat_transfer_coefficient: float | None = None
    bulk_temperature: float | None = None


@dataclass(frozen=True)
class HeatData:
    """Thermal data for the heat criteria (all optional, SI).

    heat_of_reaction dH [J/mol] (negative exothermic), activation_energy E [J/mol],
    effective_thermal_conductivity lambda_e [W/(m K)], surface_temperature T_s [K];
    or prater_number beta [-] and arrhenius_number gamma [-] directly.
    """

    heat_of_reaction: float | None = None
    activation_energy: float | None = None
    effective_thermal_conductivity: float | None = None
    surface_temperature: float | None = None
    prater_number: float | None = None
    arrhenius_number: float | None = None


@dataclass(frozen=True)
class LabDataCheck:
    """What the lab-data check answers (SI floats).

    inversion : the rate-constant inversion (k, eta, moduli at k).
    weisz_prater_modulus : C_WP = r_obs (V_p/S_p)^2 / (D_e c_s) [-].
    weisz_prater_modulus_own_length : r_obs L^2/(D_e c_s) on the shape's own length L
        (sphere/cylinder radius, slab diffusion length) [-]; None for shapes without one.
    surface_concentration : c_s used in C_WP [mol/m^3].
    criteria : list of dicts {name, value, threshold, verdict, source}.
    notes : plain sentences. diagnostics : extra warnings of the check.
    """

    inversion: RateConstantInversion
    weisz_prater_modulus: float
    weisz_prater_modulus_own_length: float | None
    surface_concentration: float
    criteria: list[dict]
    notes: list[str]
    diagnostics: list[Diagnostic] = field(default_factory=list)


def apparent_reaction_order(rate_law, concentration: float) -> float:
    """n_app = d ln r / d ln c = c r'(c) / r(c) [-] at c [mol/m^3] (power law: n)."""
    c = float(concentration)
    rate = float(rate_law.rate(c))
    return c * float(rate_law.derivative(c)) / rate if rate > 0 else 0.0


def anderson_from_groups(weisz_prater_on_radius, prater_number,
                         arrhenius_number) -> criteria.Criterion:
    """Anderson's criterion [3] in dimensionless groups: |beta| gamma C_WP(R) < 0.75.

    Dividing |dH| r_obs R^2/(lambda_e T_s) < 0.75 R_g T_s/E by its right side and using
    beta = -dH D_e c_s/(lambda_e T_s) [4], gamma = E/(R_g T_s) gives
    |beta| gamma r_obs R^2/(D_e c_s) < 0.75. weisz_prater_on_radius: C_WP on the radius
    R [-].
    """
    value = abs(float(prater_number)) * float(arrhenius_number) * float(weisz_prater_on_radius)
    return criteria.Criterion("anderson_internal_heat", value, 0.75,
                              "pass" if value < 0.75 else "fail",
                              criteria.SOURCE_ANDERSON + " (in Prater and Arrhenius numbers)")


def lab_data_check(case: Case, observed_rate: float, external: ExternalConditions | None = None,
                   heat: HeatData | None = None, heat_effects: bool = False,
                   time_budget: float | None = None) -> LabDataCheck:
    """The lab-data check of one measured rate: inversion, moduli, criteria, notes.

    observed_rate r_obs [mol/(m^3 pellet s)]. The Weisz-Prater modulus uses the surface
    concentration: the case's, or with a known film coefficient c_s = c_b - r_obs
    (V_p/S_p)/k_m (steady film balance). Mears and Anderson are written for a sphere
    of radius R [2, 3]; other shapes use the sphere of the same V_p/S_p, R = 3 V_p/S_p [6].
    heat_effects : True when the case carries thermal data (the inversion may then not
    be unique: a warning says so). time_budget [s]: for the whole inversion.
    Raises PhysicsInputError only for bad inputs; an unreachable rate is a result with
    ``inversion.success`` False.
    """
    inversion = intrinsic_rate_constant(case, observed_rate, time_budget=time_budget)
    if not inversion.success:
        return LabDataCheck(inversion, math.nan, None, math.nan, [], [])
    result = inversion.result
    r_obs = float(observed_rate)
    external = external or ExternalConditions()
    heat = heat or HeatData()
    lc = result.characteristic_length
    radius = 3.0 * lc
    c_s = _surface_concentration(case, r_obs, lc, external)
    if case.effective_diffusivity is not None:
        diffusivity = case.effective_diffusivity
    else:  # pore structure: D_e from the evaluation
        diffusivity = result.pore.effective_diffusivity
    wp = criteria.weisz_prater_criterion(r_obs, lc, diffusivity, c_s, basis="characteristic")
    if not math.isfinite(wp.value):
        raise PhysicsInputError("observed_rate", observed_rate,
                                "gives a Weisz-Prater modulus beyond the double range")
    own = None
    if result.geometry.shape_exponent is not None:
        own = criteria.weisz_prater_modulus(r_obs, result.thiele_length, diffusivity, c_s)
    eta = result.effectiveness_factor
    checks = [wp.as_dict(), {
        "name": "effectiveness_factor", "value": eta, "threshold": EFFECTIVENESS_THRESHOLD,
        "verdict": "pass" if eta >= EFFECTIVENESS_THRESHOLD else "fail",
        "source": SOURCE_EFFECTIVENESS,
    }]
    rate_law = _rate_law(case, inversion.rate_constant)
    order = (apparent_reaction_order(rate_law, c_s) if rate_law is not None
             else float(case.kinetic_parameters.get("order", 1.0)))
    if external.mass_transfer_coefficient is not None and external.bulk_concentration:
        checks.append(criteria.mears_external_mass(
            r_obs, radius, max(order, 1e-300), external.mass_transfer_coefficient,
            external.bulk_concentration).as_dict())
    if _all(heat.heat_of_reaction, heat.activation_energy, heat.effective_thermal_conductivity,
            heat.surface_temperature):
        checks.append(criteria.anderson_internal_heat(
            r_obs, radius, heat.heat_of_reaction, heat.activation_energy,
            heat.effective_thermal_conductivity, heat.surface_temperature).as_dict())
    elif _all(heat.prater_number, heat.arrhenius_number):
        wp_radius = criteria.weisz_prater_modulus(r_obs, radius, diffusivity, c_s)
        checks.append(anderson_from_groups(wp_radius, heat.prater_number,
                                           heat.arrhenius_number).as_dict())
    if _all(heat.heat_of_reaction, heat.activation_energy, external.heat_transfer_coefficient,
            external.bulk_temperature):
        checks.append(criteria.mears_external_heat(
            r_obs, radius, heat.heat_of_reaction, heat.activation_energy,
            external.heat_transfer_coefficient, external.bulk_temperature).as_dict())
    diagnostics = []
    if heat_effects:
        diagnostics.append(diagnostic(
            "INVERSION_WITH_HEAT_EFFECTS",
            f"With heat effects the observed rate need not rise monotonically with the rate "
            f"constant; k = {inversion.rate_constant:.6g} reproduces the observed rate, but "
            f"another rate constant (another steady state) may reproduce it too.",
            field="observed_rate",
        ))
    return LabDataCheck(inversion, wp.value, own, c_s, checks,
                        _notes(result, order, wp.value, inversion), diagnostics)


def _all(*values) -> bool:
    return all(v is not None for v in values)


def _rate_law(case: Case, rate_constant: float):
    from .kinetics import build_rate_law

    try:
        return build_rate_law(case.model, **{**case.kinetic_parameters,
                                             "rate_constant": rate_constant})
    except (PhysicsInputError, TypeError):
        return None


def _surface_concentration(case: Case, r_obs: float, lc: float,
                           external: ExternalConditions) -> float:
    if external.mass_transfer_coefficient is not None and external.bulk_concentration:
        c_s = external.bulk_concentration - r_obs * lc / external.mass_transfer_coefficient
        if c_s > 0:
            return c_s
    if case.surface_concentration:
        return float(case.surface_concentration)
    if external.bulk_concentration:
        return float(external.bulk_concentration)
    raise PhysicsInputError("surface_concentration", case.surface_concentration,
                            "is needed for the Weisz-Prater modulus")


def _notes(result: EffectivenessResult, order: float, wp: float,
           inversion: RateConstantInversion) -> list[str]:
    apparent = (order + 1.0) / 2.0
    notes = [
        f"The intrinsic rate constant solves the service's own effectiveness relation for the "
        f"observed rate exactly (relative residual {inversion.relative_residual:.1e}); it is not "
        f"a rule-of-thumb correction.",
        f"The Weisz-Prater modulus {wp:.4g} is r_obs (V_p/S_p)^2 / (D_e c_s) on the pellet's "
        f"volume-to-surface ratio; its threshold there is 1/9, the sphere's value 1 on the "
        f"radius carried over by V_p/S_p (Weisz & Prater 1954).",
        f"In the strong pore-diffusion regime a measured rate shows about half the true "
        f"activation energy (E_app ~ E/2) and an apparent order (n + 1)/2, here "
        f"{apparent:.3g} for a true order of {order:.3g} (Weisz & Prater 1954).",
    ]
    if result.regime == "diffusion":
        notes.append("This rate was measured in the strong pore-diffusion regime: rate data of "
                     "this kind give falsified kinetics; use smaller particles to measure the "
                     "intrinsic kinetics.")
    elif result.regime == "transition":
        notes.append("This rate was measured between the kinetic and the diffusion regime: "
                     "apparent activation energy and order lie between the true values and "
                     "the strong-diffusion ones.")
    else:
        notes.append("This rate was measured in the kinetic regime: apparent and true kinetics "
                     "agree closely.")
    return notes


# --- sizing --------------------------------------------------------------------------


def scaled_dimensions(dimensions: dict, scale: float) -> dict:
    """Every dimension of a pellet scaled by the linear factor s [-] (volume s^3, area s^2,
    counts unchanged); ``dimensions`` [SI] as in ``Case.dimensions``."""
    s = float(scale)
    if not math.isfinite(s) or s <= 0:
        raise PhysicsInputError("scale", scale, "must be finite and > 0")
    out = {}
    for name, value in dimensions.items():
        if name not in DIMENSION_POWERS:
            raise PhysicsInputError("pellet", name, "dimension of unknown scaling")
        power = DIMENSION_POWERS[name]
        out[name] = value if power == 0 or value is None else value * s**power
    return out


def scaled_case(case: Case, scale: float) -> Case:
    """The same case with the pellet scaled by s [-]."""
    return replace(case, profile_points=0,
                   dimensions=scaled_dimensions(case.dimensions, scale))


@dataclass(frozen=True)
class Bed:
    """Packed-bed data for the trade-off: voidage eps [-] in (0, 1), fluid_density rho
    [kg/m^3], fluid_viscosity mu [Pa s], superficial_velocity u [m/s]."""

    voidage: float
    fluid_density: float
    fluid_viscosity: float
    superficial_velocity: float


@dataclass(frozen=True)
class SizeRow:
    """One row of the trade-off table (SI).

    scale [-], characteristic_length V_p/S_p [m], dimensions {name: SI value},
    effectiveness_factor [-], observed_rate per pellet volume [mol/(m^3 s)],
    observed_rate_per_reactor_volume (1 - eps) eta r(c_s) [mol/(m^3 s)] and
    pressure_gradient -dP/dz (Ergun) [Pa/m]; the last two None without a bed;
    diagnostics of the evaluation.
    """

    scale: float
    characteristic_length: float
    dimensions: dict
    effectiveness_factor: float
    observed_rate: float
    observed_rate_per_reactor_volume: float | None
    pressure_gradient: float | None
    diagnostics: list[Diagnostic] = field(default_factory=list)


@dataclass(frozen=True)
class SizingAnswer:
    """Largest pellet for a target effectiveness and the trade-off table.

    status : "found" (the largest size lies inside the search span), "every_size_meets_target"
        (eta >= target up to the largest scale searched; that size is returned),
        "target_not_reached" (no size down to the smallest scale searched meets it) or
        "failed" (the case could not be computed at a size the search needed);
        ``SIZE_MESSAGES`` has the sentence of each.
    largest : the row of the largest pellet (None unless found / every_size_meets_target).
    equivalent_particle_diameter d_p = 6 V_p/S_p [m]; sphericity [-] and
    volume_equivalent_diameter [m] when the pellet has a finite volume.
    rows : the trade-off table; search_scales : the scale span searched [-].
    """

    status: str
    message: str
    largest: SizeRow | None
    equivalent_particle_diameter: float | None
    sphericity: float | None
    volume_equivalent_diameter: float | None
    rows: list[SizeRow]
    search_scales: tuple[float, float]


SIZE_MESSAGES = {
    "found": "the largest pellet keeping the target effectiveness lies inside the search span",
    "every_size_meets_target": "every size up to the largest scale searched keeps the target "
                               "effectiveness; that size is returned",
    "target_not_reached": "no size down to the smallest scale searched keeps the target "
                          "effectiveness",
    "failed": "the effectiveness could not be computed at a size the search needed",
}


def size_row(case: Case, scale: float, bed: Bed | None,
             deadline: Deadline | None = None) -> SizeRow:
    """Evaluate the pellet scaled by s [-] and its bed pressure gradient."""
    scaled = scaled_case(case, scale)
    result = evaluate_finite(scaled, deadline)
    if result is None:
        raise PhysicsInputError("table", scale, "at this scale factor the pellet case leaves "
                                "the double range; narrow the range of scales")
    lc = result.characteristic_length
    per_reactor = gradient = None
    if bed is not None:
        per_reactor = (1.0 - bed.voidage) * result.observed_rate
        with np.errstate(all="ignore"):
            gradient = ergun_pressure_gradient(bed.superficial_velocity, bed.fluid_density,
                                               bed.fluid_viscosity, bed.voidage, 6.0 * lc)
        if not math.isfinite(gradient):
            raise PhysicsInputError("bed", gradient, f"the Ergun pressure gradient at scale "
                                    f"{scale:.4g} leaves the double range")
    return SizeRow(float(scale), lc, scaled.dimensions, result.effectiveness_factor,
                   result.observed_rate, per_reactor, gradient, list(result.diagnostics))


def table_scales(min_scale: float, max_scale: float, points: int, spacing: str) -> np.ndarray:
    """Scale factors of the trade-off table: ``points`` values from min to max [-],
    evenly spaced in ln s ("log") or in s ("linear")."""
    if not (0 < min_scale < max_scale and math.isfinite(max_scale)):
        raise PhysicsInputError("max_scale", max_scale, "need 0 < min_scale < max_scale")
    if spacing == "log":
        return np.geomspace(min_scale, max_scale, int(points))
    if spacing == "linear":
        return np.linspace(min_scale, max_scale, int(points))
    raise PhysicsInputError("spacing", spacing, "must be 'log' or 'linear'")


def largest_pellet(case: Case, target: float, bed: Bed | None = None, scales=(),
                   time_budget: float | None = None) -> SizingAnswer:
    """Largest pellet (all dimensions scaled by one factor) with eta >= target.

    Solves eta(s) = target for the scale s (1 = the given pellet) with ``solve_monotone``:
    from s = 1 it walks towards the target by factors of 4, at most to
    ``SIZE_SEARCH_SCALES`` (1e-4 .. 1e4), then Brent's method in ln s to a relative
    tolerance of 1e-13 in s. eta decreases with size for isothermal normal kinetics.
    Then it builds the trade-off rows at ``scales`` [-].

    The equivalent particle diameter for Ergun [5] is d_p = 6 V_p/S_p = psi d_v (sphericity
    times the volume-equivalent diameter) for every shape.
    target : eta wanted [-], 0 < target < 1.
    time_budget : seconds for the search and the table together (None: each evaluation
        its default); SolverBudgetExceeded when spent.
    """
    target = float(target)
    if not math.isfinite(target) or not 0 < target < 1:
        raise PhysicsInputError("target_effectiveness", target, "must lie in (0, 1)")

    deadline = Deadline.start(time_budget)

    def eta_of(scale):
        result = evaluate_finite(scaled_case(case, scale), deadline)
        return math.nan if result is None else result.effectiveness_factor

    found = solve_monotone(eta_of, target, 1.0, SIZE_SEARCH_SCALES, increasing=False)
    rows = [size_row(case, s, bed, deadline) for s in scales]
    if found.status == 0:
        status, size = "found", found.x
    elif found.status == 1 and found.g_edge > target:
        status, size = "every_size_meets_target", found.edge
    elif found.status == 1:
        status, size = "target_not_reached", None
    else:
        status, size = "failed", None
    if size is None:
        return SizingAnswer(status, SIZE_MESSAGES[status], None, None, None, None, rows,
                            SIZE_SEARCH_SCALES)
    best = size_row(case, size, bed, deadline)
    geometry = build_geometry(case.shape, **best.dimensions)
    psi = dv = None
    if geometry.volume is not None and geometry.external_area is not None:
        from .sizing import sphericity

        psi = float(sphericity(geometry.volume, geometry.external_area))
        dv = float(np.cbrt(6.0 * geometry.volume / np.pi))
    return SizingAnswer(status, SIZE_MESSAGES[status], best,
                        6.0 * best.characteristic_length, psi, dv, rows, SIZE_SEARCH_SCALES)
