"""An ink picked from the shop's list, as the values of a calculator form's ink fields.

The film chain (``/inks/pick``, without script) and each station of the Job ink estimate
("Fill from this ink") fill their fields from ``form_values(find(ident))``; the pick list's
options (``templates/inks/_pick.html``) carry the same values for ``static/js/ink-pick.js``.
A form takes the fields it has: the film chain density and solids, a station density and price.
"""

from __future__ import annotations

from webapp.common.db import get_db
from webapp.inks import store


def percent_text(share) -> str:
    """A stored share as a form's percentage (``0.27`` → ``'27'``; none → ``''``)."""
    return "" if share is None else f"{share * 100:.4g}"


def find(ident: str | None) -> dict | None:
    """The shop's ink whose id the pick sent (``"12"``), or ``None`` for anything else."""
    ident = (ident or "").strip()
    if not (ident.isdigit() and len(ident) <= 12):
        return None
    try:
        return store.get_ink(get_db(), int(ident))
    except store.NotFound:
        return None


def form_values(ink: dict) -> dict:
    """An ink's values as the calculator forms' fields hold them (still editable there).

    The price and what it is per only where the ink has a price.
    """
    values = {
        "ink": str(ink["id"]),
        "ink_density": f"{ink['density_g_cm3']:.6g}",
        "ink_density_unit": "g/cm3",
        "solids_by_volume": percent_text(ink["solids_by_volume"]),
        "solids_by_weight": percent_text(ink["solids_by_weight"]),
    }
    if ink["price"] is not None:
        values.update(price_per_kg=f"{ink['price']:.6g}", price_unit=ink["price_per"])
    return values
