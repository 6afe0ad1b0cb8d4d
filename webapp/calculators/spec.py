"""What a calculator is, to the rest of the web side: one small spec.

The registry (``webapp.calculators``) derives everything that must agree from
the specs: the API's calculations, the nav, the service worker's shell pages,
the snippet kind names and which saved fields are shares or money.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field


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
