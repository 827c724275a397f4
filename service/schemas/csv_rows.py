"""CSV batch input -> dotted columns holding the values a JSON case would carry.

The header holds dotted field names, each optionally with a unit in brackets:
``pellet.radius [mm]``. A cell of a column with a header unit is a number in that
unit, or a string carrying its own unit. Empty cells mean "not given".
"""

from __future__ import annotations

import csv
import io
import re

from .. import units
from .columnar import MISSING
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
        if unit is not None:
            if rule.kind != "quantity":
                raise CsvProblem("this column takes no unit in the header", field=name)
            if rule.unit is not None:  # else the unit depends on other fields (rate constant)
                try:
                    conversion = units.conversion(unit, rule.unit)
                except units.QuantityError as exc:
                    raise CsvProblem(f"header unit: {exc}", field=name) from None
        columns.append((name.split("."), name, unit, conversion))
    return columns


def read_csv_columns(raw: bytes, max_rows: int) -> tuple[dict[str, list], int, dict[int, str]]:
    """(dotted columns, row count, {row: problem}) from CSV bytes.

    Cells become the values a JSON case would carry: a quantity cell without its own
    unit gets the header's unit appended ("1.5" under ``[mm]`` reads "1.5 mm"), plain
    numbers and integer choices are converted by the field table, an empty cell is
    MISSING. A ragged row is reported by its index; CsvProblem for an unreadable file
    or header.
    """
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
    header = _columns(rows[0])
    data = rows[1:]
    n = len(data)
    if n > max_rows:
        return {}, n, {}
    width = len(header)
    ragged = {i: f"row has {len(row)} cells; the header has {width}"
              for i, row in enumerate(data) if len(row) != width}
    if ragged:
        data = [row if i not in ragged else [""] * width for i, row in enumerate(data)]
    columns: dict[str, list] = {}
    for (path, name, unit, conversion), cells in zip(header, zip(*data) if data else [()] * width):
        columns[name] = [_cell_value(name, cell.strip(), unit) for cell in cells]
    return columns, n, ragged


def _cell_value(name: str, cell: str, unit: str | None):
    if cell == "":
        return MISSING
    if unit is None:
        return _plain(name, cell)
    match = units.NUMBER_PATTERN.match(cell)
    if match is None or match.group(2):
        return cell  # carries its own unit, or is garbage: the schema says which
    return f"{cell} {unit}"
