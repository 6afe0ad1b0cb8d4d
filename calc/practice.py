"""The pressroom's common-practice settings, all in one place.

None of these values is a published oracle: each is the trade's rule of thumb
as written down in REFERENCES.md and DOMAIN.md (or, where marked, from
memory). They are defaults a shop may change, and the calculators that use
them (``calc.fit``, ``calc.cell``) take overrides for each. Tests read them
from here rather than repeating them.

>>> WORK_PRACTICE["process"].screen_ratio_min
5.0
>>> WORK_PRACTICE["line"].volume
Range(low=<Quantity(3.0, 'BCM / inch ** 2')>, high=<Quantity(4.0, 'BCM / inch ** 2')>)
"""

from __future__ import annotations

from typing import NamedTuple

from calc.units import Q_


class Range(NamedTuple):
    """A low and a high value; ``high`` (or ``low``) may be None for "no limit"."""

    low: object
    high: object


class WorkPractice(NamedTuple):
    """What one kind of work usually asks of an anilox roll.

    ``screen_ratio_min`` is the least anilox screen over plate screen (None
    where the work has no halftone dots for the cells to support);
    ``volume`` the usual range of cell volume [BCM/in²].
    """

    screen_ratio_min: float | None
    volume: Range


def _bcm(low: float, high: float) -> Range:
    return Range(Q_(low, "BCM/in2"), Q_(high, "BCM/in2"))


# The kinds of work, in the order they are offered, with plain names.
WORK_KINDS = ("process", "line", "solid", "white", "coating")
WORK_NAMES = {
    "process": "process (halftone) work",
    "line": "line work and type",
    "solid": "spot solids",
    "white": "opaque white",
    "coating": "varnish, coating or adhesive",
}

WORK_PRACTICE = {
    # Common practice (REFERENCES.md "Anilox rolls", DOMAIN.md "Choosing a
    # roll"): the anilox screen at least about 4 times the plate screen,
    # commonly 5–6 times or more for fine halftones. 5 is the low end of the
    # common band, so a bare 4:1 roll is flagged for halftone work: at 5:1 a
    # 2 % dot (0.16 plate pitches across) still spans 0.8 anilox pitches.
    # Volume: process work ≈ 1–1.2 BCM/in², up to ≈ 2.5 in wide-web solvent
    # work (REFERENCES.md), "about 1–2.5" (DOMAIN.md).
    "process": WorkPractice(5.0, _bcm(1.0, 2.5)),
    # Common practice: line and type ≈ 3–4 BCM/in² (REFERENCES.md, DOMAIN.md).
    # Line work has no highlight dots; where its plate also carries a screen,
    # the bare "at least about 4:1" of the same sources applies.
    "line": WorkPractice(4.0, _bcm(3.0, 4.0)),
    # Common practice: solids take "more again" than line work (DOMAIN.md);
    # heavy solids ≈ 8–10 (REFERENCES.md). 4–8 spans the usual spot solid;
    # the 8 upper edge is from memory, heavy solids need an override.
    # No dots, so no screen ratio.
    "solid": WorkPractice(None, _bcm(4.0, 8.0)),
    # Common practice: opaque whites the most, "up to 8–10 and beyond"
    # (DOMAIN.md), higher than heavy solids (REFERENCES.md). The 6 low edge
    # is from memory (thinner whites lose opacity).
    "white": WorkPractice(None, _bcm(6.0, 12.0)),
    # Common practice: coatings ≈ 8–10 and some higher (REFERENCES.md);
    # coating and adhesive rolls reach 30–60 (calc/film.py, from memory).
    # 8–30 covers varnish-to-coating rolls; adhesives need an override.
    "coating": WorkPractice(None, _bcm(8.0, 30.0)),
}

# Common practice (REFERENCES.md "Anilox rolls"): volume [BCM/in²] × line
# screen [lpi] ≈ 1 500–2 000 for usual cell shapes. A roll outside the band
# only by a little is normal variation between engravers, so only a product
# beyond this factor outside either edge (below 1 000 or above 3 000) is
# called far off. The factor is inkfilm's choice, not a published value: it
# is wider than the ±10 % a certificate allows plus the spread of usual cell
# depths (a 23–33 % depth-to-opening ratio is already a factor 1.4).
VOLUME_SCREEN_BAND = Range(1500.0, 2000.0)
VOLUME_SCREEN_FAR = 1.5

# The smallest dot a flexo plate is expected to hold, as a share of the
# halftone cell: 2 % (common practice, from memory; plates hold 1–3 %).
SMALLEST_DOT = 0.02

# Wall width between laser-engraved cells at the usual screens: ≈ 3 µm
# (common practice, from memory); used only to sketch a cell opening where
# the roll's own wall width is not known.
TYPICAL_WALL = Q_(3.0, "um")

# Common practice (REFERENCES.md "Anilox rolls"): cell depth ≈ 23–33 % of the
# cell opening; deeper cells release ink badly and plug.
DEPTH_TO_OPENING = Range(0.23, 0.33)

# --- Anilox wear (calc.wear) ---------------------------------------------------
# Common practice (REFERENCES.md "Anilox rolls", DOMAIN.md "The anilox roll's
# numbers"): a roll reading about 10 % low is cleaned and measured again; a
# permanent loss of about 10–15 % is a common replacement point. The shop may
# change each of these.

# A roll is due for replacement when its wear line (or its latest reading
# after cleaning) is at or below this share of its nominal volume.
WEAR_REPLACE_AT = 0.85
# Clean when the latest as-found reading lies this share or more below the
# wear line on its date (plugging) ...
WEAR_CLEAN_PLUGGING = 0.10
# ... or below this share of the nominal volume.
WEAR_CLEAN_BELOW = 0.90
# Measure when the latest measurement is older than this many days: a
# quarterly volume audit (DOMAIN.md "Who does what"; the 90 days from memory).
WEAR_AUDIT_DAYS = 90
# A new roll whose first measurement lies outside this share either side of its
# certificate volume (else its nominal) is off spec: new rolls are commonly
# within about ±10 % (REFERENCES.md).
WEAR_OFF_SPEC = 0.10

# --- Job ink estimates (calc.estimate and the Job ink page) -------------------------
# Rough coverages by kind of artwork, for the page to offer as a starting point
# (common practice, from memory; not a measurement: measure the artwork, or give
# the inked area per label, where it matters). The order is the order offered.
TYPICAL_COVERAGES = {
    "light text": 0.10,
    "medium": 0.30,
    "heavy": 0.60,
    "solid": 1.00,
}

# Press-ready ink densities (common practice, from memory; the ink's data sheet
# gives its own): most water and solvent inks about 0.9–1.1 g/cm³; opaque whites,
# heavy with titanium dioxide, about 1.3–1.5 g/cm³.
INK_DENSITY_TYPICAL = Range(Q_(0.9, "g/cm3"), Q_(1.1, "g/cm3"))
WHITE_DENSITY_TYPICAL = Range(Q_(1.3, "g/cm3"), Q_(1.5, "g/cm3"))
