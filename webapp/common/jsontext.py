"""JSON a client sent, checked for what the rest of the app cannot hold.

Python's ``json`` takes things SQLite, Jinja or a browser then choke on:
nesting a thousand deep (``RecursionError``), a lone UTF-16 surrogate such
as ``"\\ud800"`` (SQLite cannot store it, a page cannot encode it), ``1e400``
(read as ``inf``) and ``NaN``. ``loads`` turns the first into an
``InputError``; ``problem`` finds the others, with the place they are at, by
walking the value without recursion.
"""

from __future__ import annotations

import json
import math
import re

from calc import InputError

SURROGATE = re.compile("[\ud800-\udfff]")
# Deeper than any calculation's body (an estimate is 3 levels); far below Python's recursion limit.
MAX_DEPTH = 20
BAD_TEXT = "holds a character that is not text (a lone UTF-16 surrogate such as \\ud800)"


def loads(data: bytes | str):
    """``json.loads`` with nesting too deep for Python answered as an ``InputError``.

    Bytes may be UTF-8 with or without a byte-order mark (as an upload is).
    A text that is not JSON raises ``ValueError`` as ``json.loads`` does.
    """
    try:
        return json.loads(data)
    except RecursionError:
        raise InputError(None, f"is nested too deeply: at most {MAX_DEPTH} levels") from None


def has_lone_surrogate(text: str) -> bool:
    return SURROGATE.search(text) is not None


def _at(where: str, key) -> str:
    if isinstance(key, int):
        return f"{where}[{key}]"
    return f"{where}.{key}" if where else str(key)


def problem(
    value,
    where: str = "",
    *,
    max_depth: int = MAX_DEPTH,
    max_text: int | None = None,
    max_values: int | None = None,
    finite: bool = False,
    max_integer: int | None = None,
) -> tuple[str | None, str] | None:
    """The first ``(field, message)`` in ``value`` that the app cannot keep, or ``None``.

    Always checked: nesting beyond ``max_depth`` and lone surrogates (in keys
    and texts). Optionally: texts longer than ``max_text`` characters, more
    than ``max_values`` values in all, numbers that are not finite, whole
    numbers beyond ``±max_integer``. A bad key is reported at the object
    holding it; too deep or too many at ``where``.
    """
    if _fine(value, max_depth, max_text, max_values, finite, max_integer):
        return None  # the usual case, found without building a single path
    stack = [(value, where, 0)]
    count = 0
    while stack:
        item, place, depth = stack.pop()
        count += 1
        if max_values is not None and count > max_values:
            return where or None, f"holds too many values: at most {max_values:,}"
        if isinstance(item, dict):
            if depth >= max_depth:
                return where or None, f"is nested too deeply: at most {max_depth} levels"
            for key, inner in item.items():
                if has_lone_surrogate(key):
                    return place or None, f"has a name that {BAD_TEXT}"
                stack.append((inner, _at(place, key), depth + 1))
        elif isinstance(item, list):
            if depth >= max_depth:
                return where or None, f"is nested too deeply: at most {max_depth} levels"
            stack.extend((inner, _at(place, index), depth + 1) for index, inner in enumerate(item))
        elif isinstance(item, str):
            if has_lone_surrogate(item):
                return place or None, BAD_TEXT
            if max_text is not None and len(item) > max_text:
                return place or None, f"may be at most {max_text:,} characters long (this is {len(item):,})"
        elif isinstance(item, float):
            if finite and not math.isfinite(item):
                return place or None, "must be a finite number (not infinite, not NaN)"
        elif isinstance(item, int) and not isinstance(item, bool):
            if max_integer is not None and abs(item) > max_integer:
                return place or None, f"is too large a number (at most {max_integer:.0e})"
    return None


def _fine(value, max_depth, max_text, max_values, finite, max_integer) -> bool:
    """Whether ``problem`` would find nothing: the same checks, no paths (an import walks millions of values)."""
    stack = [(value, 0)]
    count = 0
    no_text_limit = max_text is None
    while stack:
        item, depth = stack.pop()
        count += 1
        kind = type(item)
        if kind is str:
            if not item.isascii() and SURROGATE.search(item) or not no_text_limit and len(item) > max_text:
                return False
        elif kind is dict:
            if depth >= max_depth or any(not key.isascii() and SURROGATE.search(key) for key in item):
                return False
            stack.extend((inner, depth + 1) for inner in item.values())
        elif kind is list:
            if depth >= max_depth:
                return False
            stack.extend((inner, depth + 1) for inner in item)
        elif kind is float:
            if finite and not math.isfinite(item):
                return False
        elif kind is int:
            if max_integer is not None and abs(item) > max_integer:
                return False
        elif kind is not bool and item is not None:
            return False  # not JSON: let the full walk say what it makes of it
        if max_values is not None and count > max_values:
            return False
    return True


def check(value, where: str = "", **limits) -> None:
    """Raise ``InputError`` for the first thing ``problem`` finds."""
    found = problem(value, where, **limits)
    if found is not None:
        raise InputError(*found)


def check_body(body: dict, max_depth: int = MAX_DEPTH) -> None:
    """A request body (an object): each field checked under its own name, so an error names it."""
    for name, value in body.items():
        if has_lone_surrogate(name):
            raise InputError(None, f"the request body has a field name that {BAD_TEXT}")
        check(value, name, max_depth=max_depth - 1)
