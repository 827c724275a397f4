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


def _first_order_constant(case: Case) -> float:
    params = case.kinetic_parameters
    if case.model != "power_law" or params.get("order", 1.0) != 1.0:
        raise PhysicsInputError(
            "kinetics", case.model, "only first-order power-law kinetics have a closed form here"
        )
    return params["rate_constant"]


def evaluate(case: Case) -> EffectivenessResult:
    """Evaluate one case.

    Raises PhysicsInputError when the inputs are individually valid but their
    combination overflows (a result that would not be finite is never returned).
    """
    try:
        with np.errstate(all="ignore"):
            result = _evaluate(case)
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


def _evaluate(case: Case) -> EffectivenessResult:
    pore = None
    if case.effective_diffusivity is None:
        pore = resolve_pore(case.pore)
        case = replace(case, effective_diffusivity=pore.effective_diffusivity)
    geometry = build_geometry(case.shape, **case.dimensions)
    k = _first_order_constant(case)
    result = _first_order(case, geometry, k)
    result.pore = pore
    result.diagnostics = regime_diagnostics(result.generalized_modulus,
                                            result.effectiveness_factor, order=1.0)
    result.diagnostics += shape_diagnostics(case, result)
    result.diagnostics += range_diagnostics(
        diffusion_length=float(geometry.diffusion_length),
        effective_diffusivity=case.effective_diffusivity,
        surface_concentration=case.surface_concentration,
    )
    if pore is not None:
        result.diagnostics += list(pore.diagnostics)
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
    cs = case.surface_concentration
    m = geometry.shape_exponent
    if m is not None or k == 0.0:
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
    if case.profile_points > 0 and m is not None:
        xi = np.linspace(0.0, 1.0, case.profile_points)
        result.profile_position = xi * geometry.diffusion_length
        result.profile_concentration = cs * closed_form.profile_first_order(xi, phi, m)
    return result


def shape_diagnostics(case: Case, result: EffectivenessResult) -> list[Diagnostic]:
    """Notes on approximate shape methods and profiles that a shape cannot give."""
    out = []
    if result.method_detail == "generalized_modulus_estimate":
        out.append(diagnostic(
            "GENERALIZED_MODULUS_ESTIMATE",
            f"A custom shape is answered from V_p/S_p alone (the infinite-cylinder curve at the "
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


def regime_diagnostics(generalized: float, eta: float, order: float) -> list[Diagnostic]:
    """STRONG_PORE_DIFFUSION / TRANSITION_REGIME for a generalized modulus [-]."""
    regime = regime_of(generalized)
    if regime == "diffusion":
        apparent_order = (order + 1.0) / 2.0
        return [
            diagnostic(
                "STRONG_PORE_DIFFUSION",
                f"Generalized modulus {generalized:.4g} > {DIFFUSION_LIMIT:g}: strong pore "
                f"diffusion (eta = {eta:.4g}). Rates measured in this regime show about half the "
                f"true activation energy and an apparent order of {apparent_order:g} instead of "
                f"{order:g} (Weisz & Prater, Adv. Catal. 6, 1954).",
            )
        ]
    if regime == "transition":
        return [
            diagnostic(
                "TRANSITION_REGIME",
                f"Generalized modulus {generalized:.4g} lies between {KINETIC_LIMIT:g} and "
                f"{DIFFUSION_LIMIT:g}: transition between kinetic and diffusion control "
                f"(eta = {eta:.4g}).",
            )
        ]
    return []


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
    diagnostics: list[list[Diagnostic]]
    finite: np.ndarray  # rows whose results are all finite (the others are re-run one by one)

    def subset(self, mask: np.ndarray) -> "ColumnResult":
        """The rows where ``mask`` is true."""
        picked = np.flatnonzero(mask).tolist()
        values = {}
        for name, value in vars(self).items():
            if value is None:
                values[name] = None
            elif isinstance(value, list):
                values[name] = [value[i] for i in picked]
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
    regime table), applied to whole columns; diagnostics built only for the rows
    that carry one.
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
    regime = np.where(
        generalized < KINETIC_LIMIT,
        "kinetic",
        np.where(generalized > DIFFUSION_LIMIT, "diffusion", "transition"),
    ).tolist()
    diagnostics: list[list[Diagnostic]] = [[] for _ in range(n)]
    out_of_range = _out_of_range_mask(length, effective_diffusivity, surface_concentration)
    for i in np.flatnonzero(finite & ((generalized >= KINETIC_LIMIT) | out_of_range)).tolist():
        diagnostics[i] = regime_diagnostics(float(generalized[i]), float(eta[i]), 1.0)
        if out_of_range[i]:
            diagnostics[i] += range_diagnostics(
                diffusion_length=float(length[i]),
                effective_diffusivity=float(effective_diffusivity[i]),
                surface_concentration=float(surface_concentration[i]),
            )
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
        diagnostics=diagnostics,
        finite=finite,
    )


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
