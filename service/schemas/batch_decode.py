"""Typed decoding of ``{"cases": [...]}`` batches straight into columns.

Most batches are screening grids whose every row is of the fast-path form (an ideal
shape, a first-order power law, a diffusivity and a surface concentration). For
them, parsing the body into 100k nested dicts, flattening those into columns and
freeing them again cost more than everything else of the batch. msgspec decodes
such a body into slot objects declared from the fast-path fields instead, about
three times faster, and the columns are read off attribute by attribute.

The declared types are a strict subset of what the case schema accepts, so the
decoder only ever *declines*: a body with any other field, section or value type
(a thermal block, a null, a boolean...) makes ``decode_cases`` return None and the
batch is read the general way. Values are kept as sent (numbers, strings with a
unit, ``{value, unit}`` objects): the column validator and, for every row it does
not accept, the case schema judge them exactly as for the general path.
"""

from __future__ import annotations

from operator import attrgetter
from typing import Union

import msgspec

from .columnar import FAST_FIELDS, MISSING
from .rules import FIELD_RULES

_UNSET = msgspec.UnsetType


def _value_type(key: str):
    """The declared JSON type of one fast-path field (absent allowed)."""
    rule = FIELD_RULES[key]
    if rule.kind == "quantity":
        return Union[int, float, str, dict, _UNSET]
    if rule.kind == "choice":
        if rule.choices and isinstance(rule.choices[0], int):
            return Union[int, _UNSET]
        return Union[str, _UNSET]
    if rule.kind == "integer":
        return Union[int, _UNSET]
    return Union[int, float, _UNSET]  # "number"


def _build_types():
    sections: dict[str, list[str]] = {}
    for key in sorted(FAST_FIELDS):
        section, name = key.split(".")
        sections.setdefault(section, []).append(name)
    section_types = {
        section: msgspec.defstruct(
            f"Fast{section.title()}",
            [(name, _value_type(f"{section}.{name}"), MISSING) for name in names],
            forbid_unknown_fields=True, gc=False,
        )
        for section, names in sections.items()
    }
    case_type = msgspec.defstruct(
        "FastCase",
        [(section, Union[kind, _UNSET], MISSING) for section, kind in section_types.items()],
        forbid_unknown_fields=True, gc=False,
    )
    body_type = msgspec.defstruct("FastBatch", [("cases", list[case_type])],
                                  forbid_unknown_fields=True)
    return sections, section_types, msgspec.json.Decoder(body_type)


_SECTIONS, _SECTION_TYPES, _DECODER = _build_types()


class DecodedCases:
    """The rows of a typed-decoded batch: dotted columns (and which of them every row
    gives), and each row as a plain case."""

    def __init__(self, cases: list):
        self._cases = cases
        self.count = len(cases)
        self.columns, self.complete = _columns(cases)

    def case(self, index: int) -> dict:
        """Row ``index`` as the JSON object it was sent as (absent fields left out)."""
        return msgspec.to_builtins(self._cases[index])


def decode_cases(raw: bytes) -> DecodedCases | None:
    """The batch's rows, or None when the body is not a batch of fast-path-form rows
    (then read it the general way: this decoder never rejects a body itself)."""
    try:
        body = _DECODER.decode(raw)
    except (msgspec.DecodeError, msgspec.ValidationError):
        return None
    return DecodedCases(body.cases)


def _columns(cases: list) -> tuple[dict[str, list], set[str]]:
    """Dotted columns of the given fields (MISSING where a row leaves one out) and the
    names of the columns no row leaves out; a field no row gives has no column, as in
    the general path."""
    n = len(cases)
    columns: dict[str, list] = {}
    complete = set()
    for section, names in _SECTIONS.items():
        try:  # one dotted look-up per row and field: every row gives the section
            values = {name: list(map(attrgetter(f"{section}.{name}"), cases)) for name in names}
        except AttributeError:  # some row leaves the section out (it is MISSING there)
            blocks = list(map(attrgetter(section), cases))
            if blocks.count(MISSING) == n:
                continue
            empty = _SECTION_TYPES[section]()
            blocks = [empty if b is MISSING else b for b in blocks]
            values = {name: list(map(attrgetter(name), blocks)) for name in names}
        for name, column in values.items():
            missing = column.count(MISSING)
            if missing != n:
                columns[f"{section}.{name}"] = column
            if missing == 0:
                complete.add(f"{section}.{name}")
    return columns, complete
