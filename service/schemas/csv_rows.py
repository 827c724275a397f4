"""CSV batch input -> case dicts (the same nested form as a JSON case).

The header holds dotted field names, each optionally with a unit in brackets:
``pellet.radius [mm]``. A cell of a column with a header unit is a number in that
unit (converted to SI here, with the very conversion the schemas use), or a
string carrying its own unit. Empty cells mean "not given".
"""

from __future__ import annotations

import csv
import io
import re

from .. import units
from .query import _plain
from .rules import FIELD_RULES

_HEADER = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_.]*)\s*(?:\[(.*)\])?\s*$")


class CsvProblem(ValueError):
    """The CSV as a whole cannot be read (encoding, header). ``field`` names the column."""

    def __init__(self, message: str, field: str = "(body)", malformed: bool = False):
        self.field = field
        self.malformed = malformed
        super().__init__(message)


def _columns(header: list[str]) -> list[tuple[list[str], str, str | None, tuple | None]]:
    columns = []
    seen = set()
    for cell in header:
        match = _HEADER.match(cell)
        if not match:
            raise CsvProblem(f"cannot read header cell {cell[:60]!r}", field=cell[:60] or "(header)")
        name, unit = match.group(1), (match.group(2) or "").strip() or None
        if name in seen:
            raise CsvProblem("column given twice", field=name)
        seen.add(name)
        rule = FIELD_RULES.get(name)
        if rule is None:
            raise CsvProblem("unknown column (not a field of a case)", field=name)
        conversion = None
        if unit is not None and rule.kind == "quantity" and rule.unit is None:
            conversion = "append"  # unit depends on other fields: the schema converts
        elif unit is not None:
            if rule.kind != "quantity":
                raise CsvProblem("this column takes no unit in the header", field=name)
            try:
                conversion = units.conversion(unit, rule.unit)
            except units.QuantityError as exc:
                raise CsvProblem(f"header unit: {exc}", field=name) from None
        columns.append((name.split("."), name, unit, conversion))
    return columns


def read_csv_cases(raw: bytes, max_rows: int) -> tuple[list, int]:
    """(cases, row count) from CSV bytes. A ragged row becomes a string, so the
    schema reports it as a bad row; CsvProblem for an unreadable file or header."""
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CsvProblem(f"the CSV is not UTF-8 text ({exc.reason} at byte {exc.start})",
                         malformed=True) from None
    try:
        rows = list(csv.reader(io.StringIO(text, newline="")))
    except csv.Error as exc:
        raise CsvProblem(f"the CSV cannot be read: {exc}", malformed=True) from None
    rows = [r for r in rows if any(cell.strip() for cell in r)]
    if not rows:
        raise CsvProblem("the CSV has no header row", malformed=True)
    columns = _columns(rows[0])
    data = rows[1:]
    if len(data) > max_rows:
        return [], len(data)
    width = len(columns)
    cases = []
    for row in data:
        if len(row) != width:
            cases.append(f"row has {len(row)} cells; the header has {width}")
            continue
        case: dict = {}
        for (path, name, unit, conversion), cell in zip(columns, row):
            cell = cell.strip()
            if cell == "":
                continue
            node = case
            for part in path[:-1]:
                node = node.setdefault(part, {})
            node[path[-1]] = _cell_value(name, cell, unit, conversion)
        cases.append(case)
    return cases, len(data)


def _cell_value(name: str, cell: str, unit: str | None, conversion):
    if conversion is None:
        return _plain(name, cell)
    if conversion == "append":
        return f"{cell} {unit}"
    try:
        number = float(cell)
    except ValueError:
        return cell  # carries its own unit, or is garbage: the schema says which
    multiplier, divisor, offset = conversion
    return number * multiplier / divisor + offset  # units.to_si's arithmetic: identical values
