"""CSV batch input -> dotted columns holding the values a JSON case would carry.

The header holds dotted field names, each optionally with a unit in brackets:
``pellet.radius [mm]``. A cell of a column with a header unit is a number in that
unit, or a string carrying its own unit. Empty cells mean "not given".
"""

from __future__ import annotations

import csv
import io
import re
from itertools import repeat

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


def read_header(header: list[str]) -> list[tuple[str, str | None]]:
    """(field name, unit or None) per header cell ``name [unit]``; CsvProblem naming a bad
    cell, an unknown or repeated field, or a unit of the wrong dimension."""
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
        if unit is not None:
            if rule.kind != "quantity":
                raise CsvProblem("this column takes no unit in the header", field=name)
            if rule.unit is not None:  # else the unit depends on other fields (rate constant)
                try:
                    units.conversion(unit, rule.unit)
                except units.QuantityError as exc:
                    raise CsvProblem(f"header unit: {exc}", field=name) from None
        columns.append((name, unit))
    return columns


def _numeric_choices(rule) -> bool:
    return bool(rule.choices) and isinstance(rule.choices[0], int)


def _plain_lines(text: str) -> list[str] | None:
    """The lines of a CSV text without quotes, carriage returns other than in CRLF line
    ends, NUL characters or over-long lines; None for any other text (then the csv
    module reads it). For such text the csv module (excel dialect) splits exactly at
    every comma and line end, only five times slower than plain string operations.
    """
    if '"' in text or "\x00" in text:
        return None
    if "\r" in text:
        text = text.replace("\r\n", "\n")
        if "\r" in text:
            return None
    lines = text.split("\n")
    if max(map(len, lines)) > csv.field_size_limit():
        return None  # the csv module's limit and its error apply
    return lines


def _plain_rows(text: str) -> list[list[str]] | None:
    """The rows of a plain CSV text (see ``_plain_lines``), or None."""
    lines = _plain_lines(text)
    return None if lines is None else [line.split(",") for line in lines]


def _plain_table(text: str) -> tuple[list[str], list[list[str]]] | None:
    """(header cells, data cells column by column, stripped) of a plain CSV text whose
    every line has the header's number of cells and no line is blank (the common
    table), or None. The whole text is split at once and the columns are sliced out
    of the cells, instead of one split and one transposition per line."""
    lines = _plain_lines(text)
    if lines is None:
        return None
    if lines and lines[-1] == "":
        lines.pop()  # the line end of the last line
    if not lines or not lines[0].strip():
        return None
    commas = lines[0].count(",")
    if any(count != commas for count in map(str.count, lines, repeat(","))):
        return None  # ragged rows: reported row by row
    width = commas + 1
    cells = ",".join(lines).split(",")
    columns = [list(map(str.strip, cells[width + j::width])) for j in range(width)]
    # a blank line is no row; only rows with an empty first cell can be one
    maybe_blank = [i for i, cell in enumerate(columns[0]) if cell == ""]
    if any(all(column[i] == "" for column in columns) for i in maybe_blank):
        return None
    return cells[:width], columns


def read_csv_columns(raw: bytes, max_rows: int):
    """(dotted columns, row count, {row: problem}, {column: header unit}) from CSV bytes.

    Cells become the values a JSON case would carry: quantity cells stay text (read with
    the header's unit when they have none of their own), plain numbers and integer
    choices are converted by the field table, an empty cell is MISSING. A ragged row is
    reported by its index; CsvProblem for an unreadable file or header.
    """
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CsvProblem(f"the CSV is not UTF-8 text ({exc.reason} at byte {exc.start})",
                         malformed=True) from None
    table = _plain_table(text)
    if table is not None:
        header_cells, stripped_columns = table
        header = read_header(header_cells)
        n = len(stripped_columns[0])
        if n > max_rows:
            return {}, n, {}, {}
        return _result(header, stripped_columns, n, {})
    rows = _plain_rows(text)
    if rows is None:
        try:
            rows = list(csv.reader(io.StringIO(text, newline="")))
        except csv.Error as exc:
            raise CsvProblem(f"the CSV cannot be read: {exc}", malformed=True) from None
    # blank lines are not rows (the first cell decides for almost every row)
    rows = [r for r in rows if r and (r[0].strip() or "".join(r).strip())]
    if not rows:
        raise CsvProblem("the CSV has no header row", malformed=True)
    header = read_header(rows[0])
    data = rows[1:]
    n = len(data)
    if n > max_rows:
        return {}, n, {}, {}
    width = len(header)
    ragged = {} if set(map(len, data)) <= {width} else {
        i: f"row has {len(row)} cells; the header has {width}"
        for i, row in enumerate(data) if len(row) != width}
    if ragged:
        data = [row if i not in ragged else [""] * width for i, row in enumerate(data)]
    stripped_columns = [list(map(str.strip, cells))
                        for cells in (zip(*data) if data else [()] * width)]
    return _result(header, stripped_columns, n, ragged)


def _result(header, stripped_columns, n, ragged):
    """read_csv_columns' answer from the stripped cells of each column."""
    columns: dict[str, list] = {}
    column_units: dict[str, str] = {}
    for (name, unit), stripped in zip(header, stripped_columns):
        rule = FIELD_RULES[name]
        if rule.kind == "quantity" or (rule.kind == "choice" and not _numeric_choices(rule)):
            columns[name] = [MISSING if c == "" else c for c in stripped] if "" in stripped \
                else stripped
            if unit:
                column_units[name] = unit
        else:
            columns[name] = [MISSING if c == "" else _plain(name, c) for c in stripped]
    return columns, n, ragged, column_units
