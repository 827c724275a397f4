"""Dotted query parameters (spreadsheet GET) -> the nested body the case schema reads.

``pellet.radius=1.5mm&kinetics.order=1`` becomes
``{"pellet": {"radius": "1.5mm"}, "kinetics": {"order": 1.0}}``: quantities stay strings
(the schema parses "number unit"), plain numbers, integers and integer choices are
converted with the field table, so the GET is validated by the very schema of the POST.
"""

from __future__ import annotations

from .rules import FIELD_RULES

MAX_DEPTH = 4


def _plain(key: str, text: str):
    rule = FIELD_RULES.get(key)
    if rule is None:
        return text
    if rule.kind in ("number", "integer"):
        try:
            return float(text) if rule.kind == "number" else _int_or_float(text)
        except ValueError:
            return text
    if rule.kind == "choice" and rule.choices and isinstance(rule.choices[0], int):
        try:
            return int(text)
        except ValueError:
            return text
    return text


def _int_or_float(text: str):
    value = float(text)
    return int(value) if value.is_integer() else value


def query_to_body(args, reserved: tuple[str, ...]) -> tuple[dict, list[dict]]:
    """(nested body, errors) from a MultiDict of query parameters.

    Keys in ``reserved`` (format, field) are skipped; a key given twice or
    nested too deep is an error naming it.
    """
    body: dict = {}
    errors: list[dict] = []
    for key in args.keys():
        if key in reserved:
            continue
        values = args.getlist(key)
        if len(values) > 1:
            errors.append({"field": key, "message": f"given {len(values)} times; give it once"})
            continue
        parts = key.split(".")
        if len(parts) > MAX_DEPTH or not all(parts):
            errors.append({"field": key or "(empty key)",
                           "message": "unknown field (not part of this request's schema)"})
            continue
        node = body
        clash = False
        for part in parts[:-1]:
            child = node.setdefault(part, {})
            if not isinstance(child, dict):
                clash = True
                break
            node = child
        if clash or isinstance(node.get(parts[-1]), dict):
            errors.append({"field": key, "message": "conflicts with another parameter"})
            continue
        node[parts[-1]] = _plain(key, values[0])
    return body, errors
