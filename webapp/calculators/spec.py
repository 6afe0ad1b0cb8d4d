"""What a calculator is, to the rest of the web side: one small spec.

The registry (``webapp.calculators``) derives everything that must agree from
the specs: the API's calculations, the nav, the service worker's shell pages,
the snippet kind names and which saved fields are shares or money.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

# A request field's kind (the field convention): "quantity" (text "<number> <unit>"),
# "share" (a number from 0 to 1), "number", "integer", "text", "boolean"; and "list"
# for a list of objects whose fields ``Calculator.nested`` gives.
KINDS = frozenset({"quantity", "share", "number", "integer", "text", "boolean", "list"})


@dataclass(frozen=True)
class Answer:
    """The shape of an answer, for the OpenAPI description (``webapp.common.openapi``).

    ``fields`` are always there, ``optional`` ones where the inputs allow. A
    field's kind is an answer kind (``"quantity"`` for ``{"value", "unit"}``,
    ``"number"``, ``"integer"``, ``"text"``, ``"text or null"``, ``"boolean"``),
    an ``Answer`` (an object) or a one-item list ``[kind]`` (a list of them).
    """

    fields: Mapping[str, object]
    optional: Mapping[str, object] = field(default_factory=dict)


@dataclass(frozen=True)
class Calculator:
    """One calculation, as the API, the pages and saved snippets know it.

    - ``kind``: its name in ``/api/v1/<kind>`` and in a saved snippet.
    - ``title``: what people call it (the nav, a saved snippet's kind).
    - ``compute``: the API's adapter, request body → answer; a saved snippet
      keeps exactly these two and re-runs ``compute``.
    - ``path``, ``view`` and ``nav``: its page and the nav's short label for it,
      if it has one (``None`` for API-only ones).
    - ``shares``: input and answer fields that are shares from 0 to 1 (shown as %).
    - ``money``: fields that are amounts of money (shown to the cent).
    - ``main_input``: the input a saved snippet's default title names.
    - ``required``, ``optional``: the request's fields, name → kind (see ``KINDS``),
      the very dicts ``compute`` passes to ``check_fields``; ``nested``: for a
      ``"list"`` field, its items' ``(required, optional)`` dicts.
    - ``limits``: per field (``"stations"``, ``"stations.name"``), the bounds the
      code enforces as JSON Schema keywords (``maximum``, ``maxItems``,
      ``description`` for a quantity's range…).
    - ``answer``: the shape of a 200 answer.

    The request fields, limits and answer are what ``/api/v1/openapi.json`` is made of.
    """

    kind: str
    title: str
    compute: Callable[[dict], dict]
    path: str | None = None
    view: Callable | None = None
    nav: str | None = None
    shares: frozenset[str] = field(default_factory=frozenset)
    money: frozenset[str] = field(default_factory=frozenset)
    main_input: str | None = None
    # Whether the installed app fetches its page when it installs (the press operator's quick
    # pages); the others are kept once visited. Keeps the first load of the app small.
    precache: bool = False
    # Another address under /api/v1 that serves the same calculation (e.g. "/density/fit").
    also_at: str | None = None
    required: Mapping[str, str] = field(default_factory=dict)
    optional: Mapping[str, str] = field(default_factory=dict)
    nested: Mapping[str, tuple[Mapping[str, str], Mapping[str, str]]] = field(default_factory=dict)
    limits: Mapping[str, Mapping] = field(default_factory=dict)
    answer: Answer | None = None
