"""The rules of a saved snippet: what it may hold, checked before anything is written.

A snippet is one calculation as the API knows it: its ``kind`` (a calculator
of ``webapp.calculators``), its ``inputs`` (the API request body) and its
``results`` (the API's answer), with a title, an optional job number, press
and station, notes, tags and who saved it. These functions raise
``calc.InputError`` for anything a user sent wrong.
"""

from __future__ import annotations

import re

from calc import InputError
from webapp.common import jsontext

# Longest text a field takes, in characters.
LIMITS = {
    "title": 120,
    "job_number": 40,
    "press": 60,
    "station": 40,
    "notes": 4000,
    "saved_by": 60,
}
MAX_TAGS = 12
MAX_TAG = 30
# What a snippet's inputs and results may hold (a twelve-station estimate holds a few hundred values).
MAX_VALUES = 5_000
MAX_VALUE_TEXT = 1_000
MAX_INTEGER = 10**18
META_FIELDS = ("title", "job_number", "press", "station", "notes", "tags", "saved_by")
KIND_PATTERN = re.compile(r"^[a-z][a-z0-9_]{0,39}$")
# A sender's id for a save: a UUID (a phone makes one with crypto.randomUUID), 36 characters with hyphens.
CLIENT_ID_PATTERN = re.compile(r"^[0-9a-fA-F]{8}-[0-9a-fA-F]{4}-[0-9a-fA-F]{4}-[0-9a-fA-F]{4}-[0-9a-fA-F]{12}$")


def parse_tags(value) -> list[str]:
    """Tags from ``"white, opaque"`` or ``["white", "opaque"]``: trimmed, lower case, each once.

    >>> parse_tags(" Opaque white, repeat job,,opaque white ")
    ['opaque white', 'repeat job']
    """
    if value is None:
        return []
    if isinstance(value, str):
        items = value.split(",")
    elif isinstance(value, list) and all(isinstance(item, str) for item in value):
        items = value
    else:
        raise InputError("tags", "must be text, tags separated by commas")
    tags: list[str] = []
    for item in items:
        if jsontext.has_lone_surrogate(item):
            raise InputError("tags", jsontext.BAD_TEXT)
        tag = " ".join(item.split()).lower()
        if tag and tag not in tags:
            if len(tag) > MAX_TAG:
                raise InputError("tags", f"a tag may be at most {MAX_TAG} characters long ('{tag[:MAX_TAG]}…')")
            tags.append(tag)
    if len(tags) > MAX_TAGS:
        raise InputError("tags", f"at most {MAX_TAGS} tags, please (this has {len(tags)})")
    return tags


def check_meta(data: dict, *, partial: bool = False) -> dict:
    """The title, job number, press, station, notes, tags and name in ``data``, checked.

    With ``partial`` only the fields present are checked (an edit); otherwise a
    title is required.
    """
    clean: dict = {}
    for name in META_FIELDS:
        if name not in data:
            continue
        value = data[name]
        if name == "tags":
            clean["tags"] = parse_tags(value)
            continue
        if value is None:
            value = ""
        if not isinstance(value, str):
            raise InputError(name, "must be text")
        if jsontext.has_lone_surrogate(value):
            raise InputError(name, jsontext.BAD_TEXT)
        # Notes keep their line breaks; one-line fields lose stray spaces.
        value = value.strip() if name == "notes" else " ".join(value.split())
        value = value.replace("\r\n", "\n")
        if len(value) > LIMITS[name]:
            raise InputError(name, f"may be at most {LIMITS[name]} characters long (this is {len(value)})")
        clean[name] = value
    if (not partial or "title" in clean) and not clean.get("title"):
        raise InputError("title", "is required: a few words to find this by")
    return clean


def check_client_id(value) -> str | None:
    """The sender's id for a new snippet, in lower case; ``None`` when none was sent.

    >>> check_client_id("3F2B8C1E-4D5A-4B6C-8D7E-9F0A1B2C3D4E")
    '3f2b8c1e-4d5a-4b6c-8d7e-9f0a1b2c3d4e'
    """
    if value is None or value == "":
        return None
    if not isinstance(value, str) or not CLIENT_ID_PATTERN.match(value):
        raise InputError(
            "client_id",
            "must be a UUID made by the sender for this save, such as 3f2b8c1e-4d5a-4b6c-8d7e-9f0a1b2c3d4e",
        )
    return value.lower()


def check_kind(kind, calculations: dict, field: str = "kind") -> str:
    if not isinstance(kind, str) or kind not in calculations:
        known = ", ".join(sorted(calculations))
        raise InputError(field, f"must be one of the calculations this inkfilm knows: {known}")
    return kind


def check_data(value, where: str) -> None:
    """A snippet's ``inputs`` or ``results`` (JSON objects) hold only what can be kept and shown:
    at most ``jsontext.MAX_DEPTH`` levels and ``MAX_VALUES`` values, texts of at most
    ``MAX_VALUE_TEXT`` characters without lone surrogates, finite numbers."""
    if not isinstance(value, dict):
        raise InputError(where, "must be a JSON object")
    jsontext.check(value, where, max_text=MAX_VALUE_TEXT, max_values=MAX_VALUES, finite=True, max_integer=MAX_INTEGER)


def compute(kind: str, inputs, calculations: dict) -> dict:
    """The API's answer for ``inputs``; a bad input is reported inside ``inputs``."""
    if not isinstance(inputs, dict):
        raise InputError("inputs", "must be a JSON object: the calculation's request body")
    check_data(inputs, "inputs")
    try:
        return calculations[kind](dict(inputs))
    except InputError as exc:
        raise exc.within("inputs") from None
