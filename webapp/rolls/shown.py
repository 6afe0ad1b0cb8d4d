"""Volumes on the register's pages in the user's units: cm³/m² when metric, BCM/in² when imperial.

The store, the wear model and the API keep BCM/in²; only what people read
follows the preference (``webapp.common.preference``). Rounding and labels are
``calc.display``'s.
"""

from __future__ import annotations

from urllib.parse import urlencode

from calc.display import format_number, in_order, role_units, unit_label
from calc.units import Q_
from webapp.common.preference import current_system

PER_BCM = {spelling: Q_(1.0, "BCM/in2").to(spelling).magnitude for spelling in ("BCM/in2", "cm3/m2")}


def volume_unit() -> str:
    """The API spelling of the preferred anilox unit: ``'cm3/m2'`` or ``'BCM/in2'``."""
    return role_units("anilox", current_system())[0]


def volume_label() -> str:
    return unit_label(volume_unit())


def volume_options() -> list[tuple[str, str]]:
    """The unit menu of a volume field, the preferred unit first."""
    return [(spelling, unit_label(spelling)) for spelling in in_order(PER_BCM, current_system())]


def volume_value(bcm: float) -> float:
    """A volume in BCM/in² as a number in the preferred unit."""
    return bcm * PER_BCM[volume_unit()]


def volume_number(bcm: float) -> str:
    return format_number(volume_value(bcm))


def volume(bcm: float) -> str:
    """``'2.79 cm³/m²'`` or ``'1.8 BCM/in²'``."""
    return f"{volume_number(bcm)} {volume_label()}"


def form_volume(bcm: float | None) -> str:
    """A stored volume as a form field shows it in the preferred unit (full enough to keep it)."""
    return "" if bcm is None else f"{volume_value(bcm):.6g}"


def _calculator_link(path: str, bcm: float) -> str:
    return f"{path}?" + urlencode({"anilox_volume": f"{volume_value(bcm):.4g}", "anilox_unit": volume_unit()})


def film_link(bcm: float) -> str:
    """The film chain with this volume filled in (the film page reads GET values)."""
    return _calculator_link("/film", bcm)


def estimate_link(bcm: float) -> str:
    """The job estimate with this volume as its first station's anilox (the estimate page reads GET values)."""
    return _calculator_link("/estimate", bcm)


def init_app(app) -> None:
    for helper in (
        volume_unit,
        volume_label,
        volume_options,
        volume_value,
        volume_number,
        volume,
        film_link,
        estimate_link,
    ):
        app.add_template_global(helper, helper.__name__)
