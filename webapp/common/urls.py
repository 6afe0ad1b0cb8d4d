"""One safe local redirect target, for every ``next`` a form or link carries."""

from __future__ import annotations


def safe_next(target, default: str = "/") -> str:
    """``target`` if it is a path on this server, else ``default``.

    Only ``/path`` forms pass: never a scheme-relative ``//host``, a backslash
    (browsers read ``/\\host`` as ``//host``) or a control character (a tab or
    line break inside ``/\\t/host`` is dropped by browsers, leaving ``//host``).

    >>> safe_next("/film?x=1"), safe_next("//evil.example/"), safe_next("/\\t/evil.example")
    ('/film?x=1', '/', '/')
    """
    if not isinstance(target, str) or not target.startswith("/") or target.startswith("//"):
        return default
    if "\\" in target or any(ord(char) < 0x20 or ord(char) == 0x7F for char in target):
        return default
    return target
