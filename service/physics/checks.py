"""Argument checks shared by the physics modules (one place for each rule)."""

from __future__ import annotations

import math

import numpy as np

from .errors import PhysicsInputError


def positive_array(name: str, value) -> np.ndarray:
    """``value`` as a float array, every element finite and > 0, else PhysicsInputError."""
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise PhysicsInputError(name, value, "must be finite and > 0")
    return arr


def positive_float(name: str, value) -> float:
    """``value`` as a float, finite and > 0, else PhysicsInputError."""
    x = float(value)
    if not math.isfinite(x) or x <= 0:
        raise PhysicsInputError(name, value, "must be finite and > 0")
    return x


def nonnegative_float(name: str, value) -> float:
    """``value`` as a float, finite and >= 0, else PhysicsInputError."""
    x = float(value)
    if not math.isfinite(x) or x < 0:
        raise PhysicsInputError(name, value, "must be finite and >= 0")
    return x


def scalar_or_array(value, *templates):
    """A float when every template is a scalar, else the array ``value``."""
    return float(value) if all(np.ndim(t) == 0 for t in templates) else value
