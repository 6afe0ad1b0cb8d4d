"""The offline document: the core's data (``calc.offline``) and how the pages' forms read.

Served at ``/offline-data.json``, and with the code that uses it as one
script, ``/offline-calc.js?v=<hash>`` (:func:`offline_bundle`), which the
service worker imports when it installs: it works out the converter and the
film chain with them when the server is out of reach
(``static/js/offline-calc.js``, the source). The form
part (which unit menu each page has, the words of each form error, and the
unit spellings a value may carry, as ``4.5 bcm``) is read here from
``webapp.common.forms`` by giving it such input, so that a change there
shows in the document and the phone reads a form as the server does.
"""

from __future__ import annotations

import hashlib
import json
from functools import cache
from pathlib import Path

import rjsmin

from calc.display import UNIT_LABELS
from calc.errors import InputError
from calc.offline import document as core_document
from calc.units import parse_unit
from webapp.calculators import BY_KIND, convert, film, kind_name
from webapp.common import forms
from webapp.common.assets import compressed_forms
from webapp.snippets import rules as snippet_rules

# The unit menus a typed unit may set, by the name the phone uses for them.
MENUS = {
    "converter": convert.UNIT_ORDER,
    "density": convert.DENSITY_UNITS,
    "anilox": film.ANILOX_UNITS,
}
_TEXT = "§"

# Everyday spellings tried beside the units' own spellings and labels; only
# those the server reads (through parse_unit) go into the document.
_EXTRA_SPELLINGS = (
    "bcm", "BCM", "bcm/in2", "bcm/in²", "BCM/sq in", "bcm/sq in", "mm3/in2", "cm3/m2", "cc/m2", "ccm/m2",
    "micron", "microns", "µ", "um", "μm", "micrometer", "micrometre", "mils", "thou", "inch", "inches",
    "millimeter", "millimetre", "lines/in", "lines/inch", "line/in", "lines/cm", "line/cm", "lpi", "lpcm",
    "gsm", "g/m^2", "lbs/ream", "m^2/kg", "ft^2/lb", "sq ft", "sqft", "ft^2", "m^2", "in^2", "sq in",
    "liter", "litre", "liters", "litres", "L", "gallon", "gallons", "US gal", "kilogram", "kilograms",
    "pound", "pounds", "lbs", "g/cc", "g/ml", "g/mL", "kg/L", "kg/dm3", "lb/US gal", "lbs/gal",
)  # fmt: skip


def _candidates() -> list[str]:
    seen = []
    for spelling in list(UNIT_LABELS) + list(UNIT_LABELS.values()) + list(_EXTRA_SPELLINGS):
        cases = (spelling, spelling.lower(), spelling.replace("µ", "μ"), spelling.replace("µ", "u"))
        for text in cases:
            for variant in (text, text.replace("2", "²").replace("3", "³"), text.replace("2", "^2").replace("3", "^3")):
                if variant not in seen:
                    seen.append(variant)
    return seen


def _message(make) -> str:
    try:
        make()
    except InputError as exc:
        return exc.message
    raise AssertionError("expected an InputError")  # pragma: no cover


def spellings() -> tuple[dict, dict]:
    """``({text: unit number}, {menu: {unit number: menu spelling}})`` for every spelling the server reads.

    A text's unit number is shared by all texts of one pint unit; a menu
    maps the unit numbers it takes to its own spelling, exactly as
    ``webapp.common.forms`` reads a unit typed with a value.
    """
    keys: dict[str, int] = {}
    texts: dict[str, int] = {}
    menus: dict[str, dict] = {name: {} for name in MENUS}
    for text in _candidates():
        try:
            unit = parse_unit(text, "x")
        except InputError:
            continue
        key = keys.setdefault(str(unit), len(keys))
        texts[text] = key
        for name, allowed in MENUS.items():
            try:
                menus[name][str(key)] = forms._menu_unit(text, allowed, "x")
            except InputError:
                pass
    return texts, menus


def form_document() -> dict:
    texts, menus = spellings()
    # a unit every menu refuses stands for the typed text: "'§' is not one of ..." (a unit that does parse)
    refusals = {
        name: _message(lambda allowed=allowed: forms._menu_unit("furlong", allowed, "x")).replace("furlong", "{text}")
        for name, allowed in MENUS.items()
    }
    return {
        "menus": {name: list(units) for name, units in MENUS.items()},
        "spellings": texts,
        "menu_units": menus,
        "bare": forms._BARE,
        "refusals": refusals,
        "messages": {
            "needs_number": _message(lambda: forms.parse_number("", "x")),
            "too_long": _message(lambda: forms.parse_number("1" * 41, "x")),
            "not_number": _message(lambda: forms.parse_number("x" + _TEXT, "x")).replace("x" + _TEXT, "{text}"),
            "too_large": _message(lambda: forms.parse_number("1e99", "x")),
            "percent_range": _message(lambda: forms.parse_percent("101", "x")),
            "choose": _message(lambda: forms.choose("?", (), "x")),
        },
        # "Save this…" under an answer worked out on the phone: the title it gets if it waits
        # in the outbox, as webapp/snippets/pages.py names it (kind's name: main input).
        "saving": {
            "title_limit": snippet_rules.LIMITS["title"],
            "kinds": {
                kind: {"name": kind_name(kind), "main": BY_KIND[kind].main_input} for kind in ("equivalents", "film")
            },
        },
        "converter": {"form_fields": convert.FORM_FIELDS, "defaults": convert.DEFAULTS},
        "film": {
            "rows": [list(row) for row in film.ROWS],
            "layers": [list(layer) for layer in film.LAYERS],
            "defaults": film.DEFAULTS,
        },
    }


@cache
def offline_document() -> tuple[bytes, str]:
    """The document as compact JSON, and a short hash of it (its address's version)."""
    doc = core_document(conversion_units=convert.UNIT_ORDER)
    doc["forms"] = form_document()
    body = json.dumps(doc, ensure_ascii=False, separators=(",", ":"), sort_keys=True).encode("utf-8")
    return body, hashlib.sha256(body).hexdigest()[:16]


OFFLINE_CALC_SOURCE = Path(__file__).resolve().parents[1] / "static" / "js" / "offline-calc.js"


class Bundle:
    """The phone's offline script: the code without comments and spaces, then the document
    (``self.inkfilmOfflineData``); kept compressed once (Brotli at its best, gzip) as it is
    part of every first load."""

    def __init__(self, source: str, document: bytes):
        code = rjsmin.jsmin(source) + "\nself.inkfilmOfflineData=" + document.decode("utf-8") + ";\n"
        self.body = code.encode("utf-8")
        self.version = hashlib.sha256(self.body).hexdigest()[:16]
        self.encoded = compressed_forms(self.body)


@cache
def offline_bundle() -> Bundle:
    return Bundle(OFFLINE_CALC_SOURCE.read_text(encoding="utf-8"), offline_document()[0])
