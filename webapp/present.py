"""Results of the core made ready for the page templates: rounded, labelled and
in the user's preferred units. No arithmetic here: unit conversion and
rounding are ``calc.display``'s."""

from __future__ import annotations

from calc import InputError
from calc.display import film_layers, format_money, in_order, role_units, show, show_value


def errors(exc: InputError, renames: dict | None = None) -> dict:
    """``{form field: message}`` for an InputError; a field-less error goes under ``"_form"``."""
    field = exc.field or "_form"
    return {(renames or {}).get(field, field): exc.message}


def steps(step_list, system: str) -> list[dict]:
    return [
        {
            "label": step.label,
            "formula": step.formula,
            "inputs": [(symbol, show_value(value, system)) for symbol, value in step.inputs],
            "result": f"{step.symbol} = {show_value(step.result, system)}",
        }
        for step in step_list
    ]


def equivalents(result, system: str) -> dict:
    groups = []
    for group in result.groups:
        by_unit = dict(zip(group.units, group.values, strict=True))
        shown = [show(by_unit[unit], unit) for unit in in_order(group.units, system)]
        groups.append({"key": group.key, "title": group.title, "note": group.note, "values": shown})
    return {"kind": result.kind, "groups": groups, "steps": steps(result.steps, system)}


def both(quantity, role: str, system: str) -> tuple:
    """The quantity in the preferred unit for its role, and in the other system's."""
    main, also = role_units(role, system)
    return show(quantity, main), show(quantity, also)


FILM_ROWS = (
    ("theoretical_wet", "Anilox volume as a film", "film", "um"),
    ("plate_wet", "Wet film on the plate", "film", "um"),
    ("substrate_wet", "Wet film on the substrate", "film", "um"),
    ("dry", "Dry film", "film", "um"),
    ("wet_coat_weight", "Wet coat weight", "coat_weight", "g/m2"),
    ("dry_coat_weight", "Dry coat weight", "coat_weight", "g/m2"),
)
FILM_LAYERS = (
    ("theoretical_wet", "Anilox"),
    ("plate_wet", "Plate"),
    ("substrate_wet", "Wet print"),
    ("dry", "Dry"),
)


def film(chain, system: str) -> dict:
    rows = []
    for key, label, role, api_unit in FILM_ROWS:
        quantity = getattr(chain, key)
        if quantity is None:
            continue
        main, also = both(quantity, role, system)
        rows.append({"key": key, "label": label, "main": main, "also": also, "api": show(quantity, api_unit)})
    films = [(key, label, getattr(chain, key)) for key, label in FILM_LAYERS if getattr(chain, key) is not None]
    return {
        "anilox": both(chain.anilox_volume, "anilox", system),
        "rows": rows,
        "headline": next(row for row in rows if row["key"] == "substrate_wet"),
        "layers": film_layers(films, role_units("film", system)[0]),
        "steps": steps(chain.steps, system),
    }


def estimate(job, system: str) -> dict:
    stations = []
    for station in job.stations:
        stations.append(
            {
                "name": station.name,
                "film": both(station.substrate_wet, "film", system),
                "mass": both(station.ink_mass, "mass", system),
                "volume": both(station.ink_volume, "volume", system),
                "cost": None if station.cost is None else format_money(station.cost),
                "steps": steps(station.steps, system),
            }
        )
    return {
        "area": both(job.printed_area, "area", system),
        "run_length": both(job.run_length, "length", system),
        "waste": show_value(job.waste, system),
        "stations": stations,
        "total_mass": both(job.total_ink_mass, "mass", system),
        "total_volume": both(job.total_ink_volume, "volume", system),
        "total_cost": None if job.total_cost is None else format_money(job.total_cost),
        "priced": any(station.cost is not None for station in job.stations),
        "steps": steps(job.steps, system),
    }
