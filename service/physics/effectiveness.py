"""One pellet case -> effectiveness factor, moduli, profile and diagnostics.

This is the single entry point the web layer calls for ``/v1/effectiveness``.
It picks the method (closed form where one exists, else numerical), then adds
the regime and the diagnostics.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from . import closed_form
from .case import Case
from .diagnostics import Diagnostic, diagnostic
from .errors import PhysicsInputError
from .geometry import PelletGeometry, build_geometry
from .transport import resolve_pore
from .regime import DIFFUSION_LIMIT, KINETIC_LIMIT, regime_of

# Ranges commonly met for catalyst pellets (common practice; used only for info diagnostics).
COMMON_RANGES = {
    # diffusion length [m]: washcoats of ~10 um up to large pellets of ~25 mm radius
    "diffusion_length": (1e-6, 0.05),
    # effective diffusivity [m^2/s]: liquid-filled pores ~1e-11 up to coarse gas-phase pellets ~1e-5
    "effective_diffusivity": (1e-12, 1e-4),
    # concentration [mol/m^3]: above ~55,000 (pure liquid water) is no fluid-phase concentration
    "surface_concentration": (0.0, 6e4),
}


@dataclass
class EffectivenessResult:
    """Everything one case answers (SI floats)."""

    effectiveness_factor: float
    thiele_modulus: float
    thiele_length: float
    generalized_modulus: float
    characteristic_length: float
    observed_rate: float
    regime: str
    method: str
    geometry: PelletGeometry
    diagnostics: list[Diagnostic] = field(default_factory=list)
    profile_position: np.ndarray | None = None
    profile_concentration: np.ndarray | None = None
    method_detail: str | None = None
    error_band: float | None = None
    pore: object | None = None  # transport.PoreResult when the pore structure gave D_e
    general: object | None = None  # general_case.GeneralSolution (numerical engine)
    overall_effectiveness: float | None = None  # with a film: rate / rate at bulk conditions
    surface_concentration: float | None = None  # actual surface value (differs with a film)
    film: object | None = None  # general_case.FilmNumbers


def _is_first_order(case: Case) -> bool:
    return case.model == "power_law" and case.kinetic_parameters.get("order", 1.0) == 1.0


def evaluate(case: Case, time_budget: float = 5.0) -> EffectivenessResult:
    """Evaluate one case; ``time_budget`` [s] bounds a numerical solve (SolverBudgetExceeded).

    Raises PhysicsInputError when the inputs are individually valid but their
    combination overflows (a result that would not be finite is never returned).
    """
    try:
        with np.errstate(all="ignore"):
            result = _evaluate(case, time_budget)
    except (OverflowError, ZeroDivisionError):
        result = None
    except PhysicsInputError as exc:
        if exc.argument != "thiele_modulus":  # an infinite modulus is the overflow below
            raise
        result = None
    if result is None or not _all_finite(result):
        raise PhysicsInputError(
            "(case)", None,
            "the inputs give a non-finite result (an overflow); check the magnitudes and "
            "units of the rate constant, diffusivity, sizes and concentration",
        )
    return result


def _all_finite(result: EffectivenessResult) -> bool:
    numbers = [result.effectiveness_factor, result.thiele_modulus, result.thiele_length,
               result.generalized_modulus, result.characteristic_length, result.observed_rate]
    geometry = result.geometry
    if geometry.volume is not None:
        numbers += [geometry.volume, geometry.external_area]
    if not all(np.isfinite(numbers)):
        return False
    return result.profile_concentration is None or bool(
        np.all(np.isfinite(result.profile_concentration)))


def _evaluate(case: Case, time_budget: float) -> EffectivenessResult:
    pore = None
    if case.effective_diffusivity is None:
        pore = resolve_pore(case.pore)
        case = replace(case, effective_diffusivity=pore.effective_diffusivity)
    geometry = build_geometry(case.shape, **case.dimensions)
    k = case.kinetic_parameters["rate_constant"]
    first_order = _is_first_order(case)
    if k == 0.0:
        result = _no_reaction(case, geometry)
    elif case.reference_concentration == 0.0 and not (first_order and case.thermal is None):
        raise PhysicsInputError(
            "concentration", 0.0,
            "must be > 0 for this case: the effectiveness factor of a non-linear or "
            "non-isothermal rate law depends on the concentration",
        )
    elif first_order and case.thermal is None:
        result = _first_order(case, geometry, k)
    else:
        result = _general(case, geometry, time_budget)
    result.pore = pore
    order = case.kinetic_parameters.get("order", 1.0) if case.model == "power_law" else 1.0
    result.diagnostics = regime_diagnostics(result.generalized_modulus,
                                            result.effectiveness_factor, order=order,
                                            regime=result.regime)
    result.diagnostics += shape_diagnostics(case, result)
    result.diagnostics += safety_diagnostics(result)
    result.diagnostics += range_diagnostics(
        diffusion_length=float(geometry.diffusion_length),
        effective_diffusivity=case.effective_diffusivity,
        surface_concentration=case.reference_concentration,
    )
    if result.film is not None:
        result.diagnostics += list(result.film.diagnostics)
    if pore is not None:
        result.diagnostics += list(pore.diagnostics)
    return result


def _no_reaction(case: Case, geometry: PelletGeometry) -> EffectivenessResult:
    """A zero rate constant: no reaction, no gradient; eta = 1, its limit at zero modulus."""
    result = EffectivenessResult(
        effectiveness_factor=1.0, thiele_modulus=0.0,
        thiele_length=float(geometry.diffusion_length), generalized_modulus=0.0,
        characteristic_length=float(geometry.characteristic_length), observed_rate=0.0,
        regime="kinetic", method="closed_form", geometry=geometry,
        overall_effectiveness=1.0 if case.film is not None else None,
        surface_concentration=case.reference_concentration,
    )
    if case.profile_points > 0 and geometry.shape_exponent is not None:
        xi = np.linspace(0.0, 1.0, case.profile_points)
        result.profile_position = xi * geometry.diffusion_length
        result.profile_concentration = np.full(xi.shape, float(case.reference_concentration))
    return result


def _general(case: Case, geometry: PelletGeometry, time_budget: float) -> EffectivenessResult:
    from .general_case import solve_general

    solution = solve_general(case, geometry, time_budget)
    result = EffectivenessResult(
        effectiveness_factor=solution.effectiveness_factor,
        thiele_modulus=solution.thiele_modulus,
        thiele_length=float(geometry.diffusion_length),
        generalized_modulus=solution.generalized_modulus,
        characteristic_length=float(geometry.characteristic_length),
        observed_rate=solution.observed_rate,
        regime=regime_of(solution.generalized_modulus, solution.effectiveness_factor,
                         heat_effects=solution.thermal is not None),
        method=solution.method,
        geometry=geometry,
        method_detail="generalized_modulus_estimate" if solution.approximated else solution.method,
        error_band=None,
        general=solution,
        overall_effectiveness=solution.overall_effectiveness,
        surface_concentration=(solution.surface_concentration
                               if solution.surface_concentration is not None
                               else case.surface_concentration),
        film=solution.film,
    )
    if solution.approximated:
        from .industrial_shapes import GENERALIZED_MODULUS_ERROR_BAND

        result.error_band = GENERALIZED_MODULUS_ERROR_BAND
    result.profile_position = solution.profile_position
    result.profile_concentration = solution.profile_concentration
    return result


# method labels of the shape functions -> the three published method names
_METHOD_NAMES = {
    "closed_form": "closed_form",
    "series": "closed_form",  # eigenfunction series summed to full double precision
    "numerical": "numerical",
    "asymptotic": "asymptotic",
    "generalized_modulus_estimate": "asymptotic",  # built on the shape-free asymptotes
}


def _first_order(case: Case, geometry: PelletGeometry, k: float) -> EffectivenessResult:
    """First-order isothermal case: closed forms, series or the 2-D section table."""
    de = case.effective_diffusivity
    cs = case.reference_concentration
    m = geometry.shape_exponent
    if m is not None:
        phi = float(closed_form.thiele_modulus(geometry.diffusion_length, k, de))
        generalized = float(closed_form.thiele_modulus(geometry.characteristic_length, k, de))
        eta = closed_form.effectiveness_first_order(phi, m) if m is not None else 1.0
        detail, band = "closed_form", None
    else:
        from .industrial_shapes import effectiveness_first_order_pellet

        shaped = effectiveness_first_order_pellet(case.shape, k, de, **case.dimensions)
        phi, generalized = shaped.thiele_modulus, shaped.generalized_modulus
        eta, detail, band = shaped.effectiveness_factor, shaped.method, shaped.error_band
    result = EffectivenessResult(
        effectiveness_factor=float(eta),
        thiele_modulus=phi,
        thiele_length=float(geometry.diffusion_length),
        generalized_modulus=generalized,
        characteristic_length=float(geometry.characteristic_length),
        observed_rate=float(eta) * k * cs,
        regime=regime_of(generalized),
        method="numerical" if band is not None and detail == "series" else _METHOD_NAMES[detail],
        geometry=geometry,
        method_detail=detail,
        error_band=band,
    )
    surface = cs
    if case.film is not None:
        from .film import overall_effectiveness_first_order
        from .general_case import film_numbers

        result.film = film_numbers(case, geometry, de, None)
        biot_vs = (result.film.mass_transfer_coefficient * float(geometry.characteristic_length)
                   / de)
        overall = float(overall_effectiveness_first_order(float(eta), generalized, biot_vs))
        result.overall_effectiveness = overall
        surface = cs * overall / float(eta)
        result.observed_rate = overall * k * cs
    result.surface_concentration = surface
    if case.profile_points > 0 and m is not None:
        xi = np.linspace(0.0, 1.0, case.profile_points)
        result.profile_position = xi * geometry.diffusion_length
        result.profile_concentration = surface * closed_form.profile_first_order(xi, phi, m)
    return result


# Heat-effect caution thresholds (see safety_diagnostics).
RATE_ENHANCEMENT_CAUTION = 2.0  # exp(gamma beta / (1 + beta)): the hottest point may double the rate
TEMPERATURE_RISE_CAUTION = 50.0  # [K] maximum internal rise, common practice (sintering, selectivity)
EXTERNAL_SHARE_NOTE = 0.05  # 1 - c_s/c_b above 5 %: the film matters (the Mears criterion's basis)


def safety_diagnostics(result: EffectivenessResult) -> list[Diagnostic]:
    """Cautions for heat effects, several steady states and eta > 1; notes on the film,
    dead zones and partial convergence.

    The large-temperature-rise caution fires when the Arrhenius factor at the maximum
    internal temperature (Prater relation, T_max = T_s (1 + beta)) could at least double
    the rate, exp(gamma beta / (1 + beta)) >= 2: beyond that the heat effect, not
    diffusion, dominates the effectiveness factor and multiplicity becomes possible
    (Weisz & Hicks 1962); or when the rise itself exceeds 50 K (common practice).
    """
    out: list[Diagnostic] = []
    general = result.general
    th = getattr(general, "thermal", None)
    if th is not None and th.prater_number > 0:
        enhancement = float(np.exp(min(th.arrhenius_number * th.prater_number
                                       / (1.0 + th.prater_number), 700.0)))
        rise = th.maximum_temperature_rise
        if enhancement >= RATE_ENHANCEMENT_CAUTION or (rise is not None and rise >= TEMPERATURE_RISE_CAUTION):
            rise_text = (f"{rise:.4g} K" if rise is not None else
                         f"{100 * th.prater_number:.3g} % (of the absolute surface temperature)")
            out.append(diagnostic(
                "LARGE_TEMPERATURE_RISE",
                f"The pellet centre can run up to {rise_text} hotter than its surface "
                f"(Prater number {th.prater_number:.4g}, Arrhenius number "
                f"{th.arrhenius_number:.4g}); the rate there can be {enhancement:.3g} times "
                f"the surface rate, and hot spots, runaway or catalyst damage are possible.",
                field="thermal",
            ))
    if general is not None and len(general.steady_states) > 1:
        states = ", ".join(
            f"eta = {st.effectiveness_factor:.4g} ({'stable' if st.stable else 'unstable'})"
            for st in general.steady_states)
        out.append(diagnostic(
            "MULTIPLE_STEADY_STATES",
            f"The pellet has {len(general.steady_states)} steady states ({states}); which one "
            f"it sits in depends on its history (ignition and extinction). The headline "
            f"effectiveness factor is the stable state with the largest eta, the worst case "
            f"for heat release; all states are listed under steady_states.",
            field="kinetics",
        ))
    if result.effectiveness_factor > 1.0:
        out.append(diagnostic(
            "EFFECTIVENESS_ABOVE_ONE",
            f"The effectiveness factor is {result.effectiveness_factor:.4g} > 1: the pellet "
            f"interior runs faster than its surface (heat effects or rate inhibition), a sign "
            f"of strong coupling that makes the result sensitive to every input.",
            field="kinetics",
        ))
    if general is not None and general.dead_zone_fraction:
        out.append(diagnostic(
            "DEAD_ZONE",
            f"The reactant is used up before the centre: a dead zone of "
            f"{general.dead_zone_fraction:.4g} of the diffusion length (order below one).",
            field="kinetics",
        ))
    if general is not None and general.solver.get("status") == "partially_converged":
        out.append(diagnostic(
            "SOLVER_PARTIAL",
            f"The steady-state search did not converge from every start: {general.solver['message']}",
        ))
    if result.overall_effectiveness is not None and result.effectiveness_factor > 0:
        share = 1.0 - result.overall_effectiveness / result.effectiveness_factor
        if th is None and share > EXTERNAL_SHARE_NOTE:
            out.append(diagnostic(
                "EXTERNAL_FILM_SIGNIFICANT",
                f"The external film takes {100 * share:.3g} % of the concentration driving "
                f"force (surface concentration {100 * (1 - share):.4g} % of bulk).",
                field="film",
            ))
    film = result.film
    if film is not None and th is not None and film.heat_biot_number is None:
        out.append(diagnostic(
            "HEAT_FILM_NEGLECTED",
            "No heat transfer coefficient (or the data to estimate it) was given: the pellet "
            "surface is taken at the bulk temperature, which underestimates the heating.",
            field="film.heat_transfer_coefficient",
        ))
    return out


def shape_diagnostics(case: Case, result: EffectivenessResult) -> list[Diagnostic]:
    """Notes on approximate shape methods and profiles that a shape cannot give."""
    out = []
    if result.method_detail == "generalized_modulus_estimate":
        what = ("A custom shape is answered" if case.shape == "custom" else
                f"This {case.shape} case (rate law, heat or film beyond the exact solutions for "
                f"the shape) is answered")
        out.append(diagnostic(
            "GENERALIZED_MODULUS_ESTIMATE",
            f"{what} from V_p/S_p alone (the infinite-cylinder solution at the "
            f"same generalized modulus); against exact shapes we measured deviations up to "
            f"{100 * result.error_band:.0f} % in the transition region (generalized modulus "
            f"0.05 to 20), less at both ends.",
            field="pellet",
        ))
    elif result.error_band is not None:
        out.append(diagnostic(
            "NUMERICAL_SHAPE_SOLUTION",
            f"The {case.shape} effectiveness comes from a 2-D solution of its cross-section "
            f"(method {result.method_detail}); its relative accuracy is about "
            f"{result.error_band:.0e}.",
            field="pellet",
        ))
    if case.profile_points > 0 and result.profile_position is None:
        out.append(diagnostic(
            "PROFILE_UNAVAILABLE",
            f"No 1-D concentration profile exists for a {case.shape} of this form; "
            f"options.profile_points was ignored.",
            field="options.profile_points",
        ))
    return out


# regime -> the code of its diagnostic (kinetic has none)
REGIME_WARNINGS = {"diffusion": "STRONG_PORE_DIFFUSION", "transition": "TRANSITION_REGIME"}


def regime_diagnostics(generalized: float, eta: float, order: float,
                       regime: str | None = None) -> list[Diagnostic]:
    """STRONG_PORE_DIFFUSION / TRANSITION_REGIME for a generalized modulus [-]."""
    if regime == "transition" and generalized < KINETIC_LIMIT:  # moved there by heat effects
        return [
            diagnostic(
                "TRANSITION_REGIME",
                f"Heat effects move the pellet out of the kinetic regime: eta = {eta:.4g} "
                f"although the isothermal generalized modulus is only {generalized:.4g}.",
            )
        ]
    regime = regime_of(generalized)
    if regime == "kinetic":
        return []
    return [diagnostic(REGIME_WARNINGS[regime],
                       _regime_message(regime, f"{generalized:.4g}", f"{eta:.4g}", order))]


def _regime_message(regime: str, generalized: str, eta: str, order: float) -> str:
    """The message of a regime's diagnostic, the generalized modulus and eta given as text."""
    if regime == "diffusion":
        apparent_order = (order + 1.0) / 2.0
        return (
            f"Generalized modulus {generalized} > {DIFFUSION_LIMIT:g}: strong pore "
            f"diffusion (eta = {eta}). Rates measured in this regime show about half the "
            f"true activation energy and an apparent order of {apparent_order:g} instead of "
            f"{order:g} (Weisz & Prater, Adv. Catal. 6, 1954)."
        )
    return (
        f"Generalized modulus {generalized} lies between {KINETIC_LIMIT:g} and "
        f"{DIFFUSION_LIMIT:g}: transition between kinetic and diffusion control "
        f"(eta = {eta})."
    )


def regime_message_template(regime: str, order: float) -> str:
    """The message of ``regime_diagnostics`` for a regime as a %-template taking the
    generalized modulus and eta (in that order) as floats: ``template % (phi, eta)``
    gives the very text of ``regime_diagnostics(phi, eta, order)`` (a test checks),
    for writers that format it for many rows."""
    text = _regime_message(regime, "\x00", "\x01", order)
    assert text.index("\x00") < text.index("\x01")
    return text.replace("%", "%%").replace("\x00", "%.4g").replace("\x01", "%.4g")


def first_order_row_diagnostics(generalized: float, eta: float, diffusion_length: float,
                                effective_diffusivity: float,
                                surface_concentration: float) -> list[Diagnostic]:
    """The diagnostics of one row of ``evaluate_first_order_columns`` (what ``evaluate``
    gives an isothermal first-order case of an ideal shape)."""
    return regime_diagnostics(generalized, eta, 1.0) + range_diagnostics(
        diffusion_length=diffusion_length,
        effective_diffusivity=effective_diffusivity,
        surface_concentration=surface_concentration,
    )


def range_diagnostics(**values: float) -> list[Diagnostic]:
    """INPUT_OUTSIDE_COMMON_RANGE for each value outside ``COMMON_RANGES`` (common practice)."""
    out = []
    for name, value in values.items():
        low, high = COMMON_RANGES[name]
        if not (low <= value <= high):
            out.append(
                diagnostic(
                    "INPUT_OUTSIDE_COMMON_RANGE",
                    f"{name.replace('_', ' ')} = {value:.4g} (SI) is outside the range "
                    f"{low:g} to {high:g} commonly met for catalyst pellets; check the value "
                    f"and its unit.",
                    field=name,
                )
            )
    return out


@dataclass
class ColumnResult:
    """First-order closed-form results for many pellets of one shape (numpy arrays)."""

    effectiveness_factor: np.ndarray
    thiele_modulus: np.ndarray
    thiele_length: np.ndarray
    generalized_modulus: np.ndarray
    characteristic_length: np.ndarray
    observed_rate: np.ndarray
    regime: list[str]
    volume: np.ndarray | None
    external_area: np.ndarray | None
    finite: np.ndarray  # rows whose results are all finite (the others are re-run one by one)
    codes: list[str]  # per row, the warning codes joined by ";" (messages: see
    # ``first_order_row_diagnostics``)
    out_of_range: np.ndarray  # rows with an INPUT_OUTSIDE_COMMON_RANGE warning

    def subset(self, mask: np.ndarray) -> "ColumnResult":
        """The rows where ``mask`` is true."""
        picked = np.flatnonzero(mask).tolist()
        values = {}
        for name, value in vars(self).items():
            if value is None:
                values[name] = None
            elif isinstance(value, list):
                values[name] = [value[i] for i in picked]
            elif np.ndim(value) == 0:
                values[name] = value
            else:
                values[name] = np.asarray(value)[mask]
        return ColumnResult(**values)


def evaluate_first_order_columns(
    shape: str,
    dimensions: dict[str, np.ndarray],
    rate_constant: np.ndarray,
    effective_diffusivity: np.ndarray,
    surface_concentration: np.ndarray,
) -> ColumnResult:
    """Vectorized ``evaluate`` for isothermal first-order cases of one shape.

    Same formulas as ``evaluate`` (one source of truth: the closed forms and the
    regime table), applied to whole columns. The warnings come as codes per row;
    ``first_order_row_diagnostics`` gives a row's diagnostics with their messages.
    """
    geometry = build_geometry(shape, **dimensions)
    n = len(rate_constant)
    with np.errstate(all="ignore"):
        return _columns(geometry, n, rate_constant, effective_diffusivity, surface_concentration)


def _columns(geometry, n, rate_constant, effective_diffusivity, surface_concentration):
    length = np.broadcast_to(np.asarray(geometry.diffusion_length, dtype=float), (n,))
    char_length = np.broadcast_to(np.asarray(geometry.characteristic_length, dtype=float), (n,))
    phi = closed_form.thiele_modulus(length, rate_constant, effective_diffusivity)
    generalized = closed_form.thiele_modulus(char_length, rate_constant, effective_diffusivity)
    finite = np.isfinite(phi) & np.isfinite(generalized)
    eta = closed_form.effectiveness_first_order(np.where(finite, phi, 0.0), geometry.shape_exponent)
    rate = eta * rate_constant * surface_concentration
    finite &= np.isfinite(rate)
    kinetic, diffusion = generalized < KINETIC_LIMIT, generalized > DIFFUSION_LIMIT
    regime = np.where(kinetic, "kinetic", np.where(diffusion, "diffusion", "transition")).tolist()
    codes = np.where(kinetic, "", np.where(diffusion, REGIME_WARNINGS["diffusion"],
                                           REGIME_WARNINGS["transition"])).tolist()
    out_of_range = _out_of_range_mask(length, effective_diffusivity, surface_concentration)
    for i in np.flatnonzero(out_of_range).tolist():
        extra = ["INPUT_OUTSIDE_COMMON_RANGE"] * _out_of_range_count(
            float(length[i]), float(effective_diffusivity[i]), float(surface_concentration[i]))
        codes[i] = ";".join(([codes[i]] if codes[i] else []) + extra)
    return ColumnResult(
        effectiveness_factor=eta,
        thiele_modulus=phi,
        thiele_length=length,
        generalized_modulus=generalized,
        characteristic_length=char_length,
        observed_rate=rate,
        regime=regime,
        volume=None if geometry.volume is None else np.broadcast_to(geometry.volume, (n,)),
        external_area=(
            None if geometry.external_area is None else np.broadcast_to(geometry.external_area, (n,))
        ),
        finite=finite,
        codes=codes,
        out_of_range=out_of_range,
    )


def _out_of_range_count(length: float, diffusivity: float, concentration: float) -> int:
    """How many INPUT_OUTSIDE_COMMON_RANGE diagnostics ``range_diagnostics`` gives."""
    return len(range_diagnostics(diffusion_length=length, effective_diffusivity=diffusivity,
                                 surface_concentration=concentration))


def _out_of_range_mask(length, diffusivity, concentration) -> np.ndarray:
    bad = np.zeros(len(length), dtype=bool)
    for name, values in (
        ("diffusion_length", length),
        ("effective_diffusivity", diffusivity),
        ("surface_concentration", concentration),
    ):
        low, high = COMMON_RANGES[name]
        bad |= (values < low) | (values > high)
    return bad
