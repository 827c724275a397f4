"""The one domain error type raised by physics code for bad input."""

from __future__ import annotations


class PhysicsInputError(ValueError):
    """An argument is outside the domain a physics function accepts.

    Attributes
    ----------
    argument : str
        Name of the offending argument (the physics name, e.g. ``"radius"``).
    value : object
        The value received.
    reason : str
        A plain sentence saying what is wrong.
    """

    def __init__(self, argument: str, value: object, reason: str):
        self.argument = argument
        self.value = value
        self.reason = reason
        super().__init__(f"{argument}={value!r}: {reason}")


class SolverBudgetExceeded(RuntimeError):
    """A numerical solve ran past its wall-clock budget [s]."""

    def __init__(self, budget_seconds: float, what: str = "solve"):
        self.budget_seconds = budget_seconds
        self.what = what
        super().__init__(f"{what} exceeded its time budget of {budget_seconds:g} s")
