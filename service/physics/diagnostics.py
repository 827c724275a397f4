"""Diagnostics returned with results: the one table of warning codes.

A diagnostic is data (code, severity, message, field), never ``warnings.warn``.
Every code the service can emit is listed in ``WARNING_CODES`` with its severity
and meaning; the OpenAPI file lists the same codes (a test keeps them equal).

Severities: ``info`` (worth knowing), ``warning`` (the number needs care),
``caution`` (safety-relevant: large temperature rise, several steady states,
eta > 1; the message defers to plant data, codes and licensed practice).
"""

from __future__ import annotations

from typing import NamedTuple

SEVERITIES = ("info", "warning", "caution")

SAFETY_NOTE = (
    "This is a screening estimate for engineering judgement; design and operating decisions "
    "follow plant data, applicable codes and licensed engineering practice."
)

# code -> (severity, meaning)
WARNING_CODES: dict[str, tuple[str, str]] = {
    "STRONG_PORE_DIFFUSION": (
        "warning",
        "The generalized modulus is in the strong pore-diffusion regime: the observed rate is "
        "limited by diffusion inside the pellet, and rate data measured here show falsified "
        "kinetics (about half the true activation energy, apparent order (n+1)/2).",
    ),
    "TRANSITION_REGIME": (
        "info",
        "The generalized modulus lies between the kinetic and diffusion regimes: neither "
        "asymptote applies and the effectiveness factor depends on shape and rate law.",
    ),
    "GENERALIZED_MODULUS_ESTIMATE": (
        "warning",
        "The shape is known only by its volume and external area: the effectiveness factor is "
        "estimated from the generalized modulus, exact at both asymptotes, with a measured error "
        "band in the transition region.",
    ),
    "NUMERICAL_SHAPE_SOLUTION": (
        "info",
        "The effectiveness factor comes from a numerical 2-D solution of the pellet "
        "cross-section, with the stated accuracy.",
    ),
    "PROFILE_UNAVAILABLE": (
        "info",
        "The shape has no 1-D concentration profile; the requested profile is not returned.",
    ),
    "LARGE_TEMPERATURE_RISE": (
        "caution",
        "Heat effects: the maximum internal temperature rise (Prater relation) can at least "
        "double the rate at the pellet centre, or exceeds 50 K.",
    ),
    "MULTIPLE_STEADY_STATES": (
        "caution",
        "Several steady states exist (ignition/extinction, possible runaway); the headline is "
        "the stable state with the largest effectiveness factor.",
    ),
    "EFFECTIVENESS_ABOVE_ONE": (
        "caution",
        "The effectiveness factor exceeds one (heat effects or self-inhibiting kinetics).",
    ),
    "DEAD_ZONE": (
        "info",
        "An order below one consumes the reactant before the centre; the dead-zone extent is "
        "reported.",
    ),
    "SOLVER_PARTIAL": (
        "warning",
        "The steady-state search did not converge from every start; a state may be missing.",
    ),
    "EXTERNAL_FILM_SIGNIFICANT": (
        "info",
        "The external film takes more than 5 % of the concentration driving force.",
    ),
    "HEAT_FILM_NEGLECTED": (
        "warning",
        "Heat effects with a film but no heat transfer coefficient: the surface is taken at the "
        "bulk temperature.",
    ),
    "CORRELATION_OUT_OF_RANGE": (
        "warning",
        "A dimensionless group lies outside the range the transfer correlation was fitted "
        "to; the coefficient is an extrapolation.",
    ),
    "INPUT_OUTSIDE_COMMON_RANGE": (
        "info",
        "An input lies outside the range commonly met for catalyst pellets; check its value "
        "and unit.",
    ),
    "INVERSION_WITH_HEAT_EFFECTS": (
        "warning",
        "POST /v1/diagnose with thermal data: the observed rate need not rise monotonically "
        "with the rate constant, so the inferred rate constant may not be the only one that "
        "reproduces the observed rate.",
    ),
}


class Diagnostic(NamedTuple):
    """One warning attached to a result (a named tuple: cheap to build by the 100k)."""

    code: str
    severity: str
    message: str
    field: str | None = None

    def as_dict(self) -> dict:
        out = {"code": self.code, "severity": self.severity, "message": self.message}
        if self.field is not None:
            out["field"] = self.field
        return out


def diagnostic(code: str, message: str, field: str | None = None) -> Diagnostic:
    """Build a diagnostic of a registered code (its severity comes from the table)."""
    severity, _meaning = WARNING_CODES[code]
    if severity == "caution" and SAFETY_NOTE not in message:
        message = f"{message} {SAFETY_NOTE}"
    return Diagnostic(code, severity, message, field)
