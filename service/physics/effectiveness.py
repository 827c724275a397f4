"""One pellet case -> effectiveness factor, moduli, profile and diagnostics.

This is the single entry point the web layer calls for ``/v1/effectiveness``.
It picks the method (closed form where one exists, else numerical), then adds
the regime and the diagnostics.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import closed_form
from .case import Case
from .diagnostics import Diagnostic, diagnostic
from .errors import PhysicsInputError
from .geometry import PelletGeometry, build_geometry
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


def _first_order_constant(case: Case) -> float:
    params = case.kinetic_parameters
    if case.model != "power_law" or params.get("order", 1.0) != 1.0:
        raise PhysicsInputError(
            "kinetics", case.model, "only first-order power-law kinetics have a closed form here"
        )
    return params["rate_constant"]


def evaluate(case: Case) -> EffectivenessResult:
    """Evaluate one case (isothermal, first order, ideal shapes)."""
    geometry = build_geometry(case.shape, **case.dimensions)
    k = _first_order_constant(case)
    de = case.effective_diffusivity
    phi = float(closed_form.thiele_modulus(geometry.diffusion_length, k, de))
    generalized = float(closed_form.thiele_modulus(geometry.characteristic_length, k, de))
    eta = closed_form.effectiveness_first_order(phi, geometry.shape_exponent)
    cs = case.surface_concentration
    result = EffectivenessResult(
        effectiveness_factor=eta,
        thiele_modulus=phi,
        thiele_length=float(geometry.diffusion_length),
        generalized_modulus=generalized,
        characteristic_length=float(geometry.characteristic_length),
        observed_rate=eta * k * cs,
        regime=regime_of(generalized),
        method="closed_form",
        geometry=geometry,
    )
    if case.profile_points > 0:
        xi = np.linspace(0.0, 1.0, case.profile_points)
        result.profile_position = xi * geometry.diffusion_length
        result.profile_concentration = cs * closed_form.profile_first_order(
            xi, phi, geometry.shape_exponent
        )
    result.diagnostics = regime_diagnostics(generalized, eta, order=1.0)
    result.diagnostics += range_diagnostics(
        diffusion_length=float(geometry.diffusion_length),
        effective_diffusivity=de,
        surface_concentration=cs,
    )
    return result


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
    length = np.broadcast_to(np.asarray(geometry.diffusion_length, dtype=float), (n,))
    char_length = np.broadcast_to(np.asarray(geometry.characteristic_length, dtype=float), (n,))
    phi = closed_form.thiele_modulus(length, rate_constant, effective_diffusivity)
    generalized = closed_form.thiele_modulus(char_length, rate_constant, effective_diffusivity)
    eta = closed_form.effectiveness_first_order(phi, geometry.shape_exponent)
    rate = eta * rate_constant * surface_concentration
    regime = np.where(
        generalized < KINETIC_LIMIT,
        "kinetic",
        np.where(generalized > DIFFUSION_LIMIT, "diffusion", "transition"),
    ).tolist()
    diagnostics: list[list[Diagnostic]] = [[] for _ in range(n)]
    out_of_range = _out_of_range_mask(length, effective_diffusivity, surface_concentration)
    for i in np.flatnonzero((generalized >= KINETIC_LIMIT) | out_of_range).tolist():
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
