"""Custom marshmallow fields driven by the field table (``rules.FIELD_RULES``)."""

from __future__ import annotations

import math

from marshmallow import Schema, ValidationError, fields

from .. import units
from .rules import FIELD_RULES, FieldRule


class Quantity(fields.Field):
    """A dimensional value -> float in the field's SI unit, range-checked.

    Accepts a number (SI), ``"1.5 mm"`` or ``{"value": 1.5, "unit": "mm"}``.
    """

    def __init__(self, rule: str, **kwargs):
        self.rule: FieldRule = FIELD_RULES[rule]
        super().__init__(**kwargs)

    def _deserialize(self, value, attr, data, **kwargs) -> float:
        try:
            si = units.parse_quantity(value, self.rule.unit)
        except units.QuantityError as exc:
            raise ValidationError(str(exc)) from None
        problem = self.rule.range_error(si)
        if problem:
            raise ValidationError(problem)
        return si


class RawQuantity(fields.Field):
    """A quantity whose SI unit depends on other fields: -> (magnitude, unit or None).

    The owning schema converts it once the unit is known (``units.to_si``).
    """

    def _deserialize(self, value, attr, data, **kwargs):
        try:
            return units.split_quantity(value)
        except units.QuantityError as exc:
            raise ValidationError(str(exc)) from None


class Number(fields.Field):
    """A plain finite number (no unit), range-checked by its rule; booleans rejected."""

    def __init__(self, rule: str, **kwargs):
        self.rule: FieldRule = FIELD_RULES[rule]
        if self.rule.default is not None:
            kwargs.setdefault("load_default", self.rule.default)
        super().__init__(**kwargs)

    def _deserialize(self, value, attr, data, **kwargs) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise ValidationError("must be a number")
        value = float(value)
        if not math.isfinite(value):
            raise ValidationError("must be a finite number (NaN and Infinity are not accepted)")
        problem = self.rule.range_error(value)
        if problem:
            raise ValidationError(problem)
        return value


class Integer(Number):
    """A whole number (JSON 3 or 3.0), range-checked by its rule."""

    def _deserialize(self, value, attr, data, **kwargs) -> int:
        number = super()._deserialize(value, attr, data, **kwargs)
        if number != int(number):
            raise ValidationError("must be a whole number")
        return int(number)


class Choice(fields.Field):
    """One of the rule's choices (exact JSON type: 2 is not "2")."""

    def __init__(self, rule: str, choices=None, **kwargs):
        self.rule: FieldRule = FIELD_RULES[rule]
        self.choices = tuple(choices if choices is not None else self.rule.choices)
        if self.rule.default is not None:
            kwargs.setdefault("load_default", self.rule.default)
        super().__init__(**kwargs)

    def _deserialize(self, value, attr, data, **kwargs):
        for choice in self.choices:
            if value == choice and type(value) is type(choice):
                return value
        listed = ", ".join(repr(c) if isinstance(c, str) else str(c) for c in self.choices)
        raise ValidationError(f"must be one of {listed}")


class Tagged(fields.Field):
    """An object whose schema is chosen by one of its keys (``shape``, ``model``).

    ``registry`` maps the tag value to a schema instance; an unknown tag is an
    error on ``<field>.<key>`` listing the valid choices.
    """

    def __init__(self, key: str, registry: dict[str, Schema], **kwargs):
        self.key = key
        self.registry = registry
        super().__init__(**kwargs)

    def _deserialize(self, value, attr, data, **kwargs):
        if not isinstance(value, dict):
            raise ValidationError("must be an object")
        tag = value.get(self.key)
        if tag is None:
            raise ValidationError({self.key: ["required: one of " + ", ".join(self.registry)]})
        schema = self.registry.get(tag) if isinstance(tag, str) else None
        if schema is None:
            raise ValidationError({self.key: ["must be one of " + ", ".join(self.registry)]})
        return schema.load(value)


def field_for(rule_name: str, required: bool = False) -> fields.Field:
    """The marshmallow field for a rule of the table, by its kind."""
    rule = FIELD_RULES[rule_name]
    factory = {"quantity": Quantity, "number": Number, "integer": Integer, "choice": Choice}[rule.kind]
    return factory(rule_name, required=required)
