"""Each ink set's curve and what it answers, as the API and the pages see them.

``calc.density`` fits the Tollenaar–Ernst curve to a set's readings and
answers "what volume for this density" and "what density from this volume";
this module feeds it the stored readings, turns a stored ink, set or reading
into the API's JSON, and reads the anilox roll register (read only) for
"what does each of our rolls give with this ink".
"""

from __future__ import annotations

from calc import InputError
from calc.density import density_from_volume, fit_tollenaar_ernst, make_reading, volume_for_density
from calc.units import Q_
from webapp.inks import rules


def caution(ink_type: str) -> str | None:
    return rules.CAUTIONS.get(ink_type)


def fit_readings(rows: list[dict]) -> list[dict]:
    """Stored readings as the density API's reading objects (the film each was printed with)."""
    return [{"density": row["density"], "film": f"{row['film_um']!r} um"} for row in rows]


def fit_of(rows: list[dict]):
    """``(curve, None)``, or ``(None, reason)`` in plain words when the readings give no curve."""
    try:
        readings = [make_reading(row["density"], film=Q_(row["film_um"], "um")) for row in rows]
        return fit_tollenaar_ernst(readings), None
    except InputError as exc:
        return None, exc.message


def ink_json(ink: dict) -> dict:
    return {
        "id": ink["id"],
        "name": ink["name"],
        "type": ink["ink_type"],
        "type_name": rules.TYPE_NAMES[ink["ink_type"]],
        "caution": caution(ink["ink_type"]),
        "density": {"value": ink["density_g_cm3"], "unit": "g/cm3"},
        "solids_by_volume": ink["solids_by_volume"],
        "solids_by_weight": ink["solids_by_weight"],
        "price": ink["price"],
        "price_per": ink["price_per"],
        "notes": ink["notes"],
        "version": ink["version"],
        "updated_at": ink["updated_at"],
    }


def reading_json(row: dict) -> dict:
    return {
        "id": row["id"],
        "ink_set": row["ink_set"],
        "read_on": row["read_on"],
        "density": row["density"],
        "film": {"value": row["film_um"], "unit": "um"},
        "anilox_volume": None if row["anilox_cm3_m2"] is None else {"value": row["anilox_cm3_m2"], "unit": "cm3/m2"},
        "transfer": row["transfer"],
        "notes": row["notes"],
        "version": row["version"],
    }


def curve_json(curve, reason: str | None) -> dict:
    if curve is None:
        return {"fitted": False, "reason": reason}
    return {
        "fitted": True,
        "d_inf": curve.d_inf,
        "d_inf_se": curve.d_inf_se,
        "m": {"value": curve.m.to("1/um").magnitude, "unit": "1/um"},
        "m_se": {"value": curve.m_se.to("1/um").magnitude, "unit": "1/um"},
        "correlation": curve.correlation,
        "residual_sd": curve.residual_sd,
        "count": curve.count,
    }


def set_json(ink_set: dict, ink: dict, rows: list[dict], *, with_readings: bool = True) -> dict:
    curve, reason = fit_of(rows)
    answer = {
        "id": ink_set["id"],
        "name": ink_set["name"],
        "ink": {
            "id": ink["id"],
            "name": ink["name"],
            "type": ink["ink_type"],
            "caution": caution(ink["ink_type"]),
        },
        "substrate": ink_set["substrate"],
        "notes": ink_set["notes"],
        "version": ink_set["version"],
        "updated_at": ink_set["updated_at"],
        "reading_count": len(rows),
        "fit": curve_json(curve, reason),
    }
    if with_readings:
        answer["readings"] = [reading_json(row) for row in rows]
    return answer


def on_rolls(curve, target, transfer, rolls: list[dict], logs: dict) -> dict:
    """What each roll in use or spare gives with this set's curve, on its latest measured volume.

    ``{"needed": VolumeFor or None, "needed_error": text, "rolls": [...]}``: each roll with its
    volume (latest measured, else certificate, else nominal, and which), its share of nominal,
    the density expected (with its 95 % band) and whether it reaches ``target``.
    """
    from webapp.rolls import register  # read only: the register's wear picture of each roll
    from webapp.rolls.rules import AVAILABLE

    needed, needed_error = None, None
    try:
        needed = volume_for_density(curve, target, transfer)
    except InputError as exc:
        needed_error = exc.message
    answers = []
    for roll in rolls:
        if roll["status"] not in AVAILABLE:
            continue
        wear = register.picture(roll, logs[roll["id"]])
        if wear.latest is not None:
            volume, judged_on = wear.latest.volume.to("BCM/in2").magnitude, "measured"
        elif roll["certificate_bcm"] is not None:
            volume, judged_on = roll["certificate_bcm"], "certificate"
        else:
            volume, judged_on = roll["nominal_bcm"], "nominal"
        expected, _ = density_from_volume(curve, Q_(volume, "BCM/in2"), transfer)
        answers.append(
            {
                "roll": roll,
                "volume_bcm": volume,
                "judged_on": judged_on,
                "percent_of_nominal": 100.0 * volume / roll["nominal_bcm"],
                "expected": expected,
                "reaches": None if needed is None else volume >= needed.anilox_volume.to("BCM/in2").magnitude,
            }
        )
    answers.sort(key=lambda item: (-item["expected"].density, item["roll"]["roll_id"].upper()))
    return {"needed": needed, "needed_error": needed_error, "rolls": answers}


def on_rolls_json(answer: dict) -> dict:
    needed = answer["needed"]
    return {
        "needed_volume": None
        if needed is None
        else {"value": needed.anilox_volume.to("BCM/in2").magnitude, "unit": "BCM/in2"},
        "needed_error": answer["needed_error"],
        "rolls": [
            {
                "id": item["roll"]["id"],
                "roll_id": item["roll"]["roll_id"],
                "volume": {"value": item["volume_bcm"], "unit": "BCM/in2"},
                "judged_on": item["judged_on"],
                "percent_of_nominal": item["percent_of_nominal"],
                "density": item["expected"].density,
                "density_band": None
                if item["expected"].low is None
                else {"low": item["expected"].low, "high": item["expected"].high},
                "reaches_target": item["reaches"],
            }
            for item in answer["rolls"]
        ],
    }
