"""The film chain: from the anilox cells to the dry film, with a drawing to scale."""

from __future__ import annotations

from dataclasses import dataclass

from flask import request

from calc import InputError
from calc.display import Shown, format_percent, role_units, show
from calc.film import ANILOX_VOLUME_HIGH, TYPICAL_ANILOX_TO_PLATE, TYPICAL_PLATE_TO_SUBSTRATE, film_chain
from calc.units import DENSITY_HIGH, DENSITY_LOW, Q_  # noqa: F401 (Q_ for the doctests)
from webapp.calculators.spec import Answer, Calculator
from webapp.common.formatting import both, steps
from webapp.common.forms import field_errors, form_values, parse_amount, parse_percent, quantity_text
from webapp.common.htmx import respond
from webapp.common.jsonapi import check_fields, quantity_json
from webapp.common.preference import current_system

SHARES = frozenset({"anilox_to_plate", "plate_to_substrate", "solids_by_volume", "solids_by_weight"})


REQUIRED = {"anilox_volume": "quantity", "anilox_to_plate": "share", "plate_to_substrate": "share"}
OPTIONAL = {"solids_by_volume": "share", "solids_by_weight": "share", "ink_density": "quantity"}
LIMITS = {
    "anilox_volume": {"description": f"cell volume per area, more than 0 and at most {ANILOX_VOLUME_HIGH:~P}"},
    "anilox_to_plate": {"description": "share of the cell volume the plate picks up (about 0.5)"},
    "plate_to_substrate": {"description": "share of the plate's ink given to the substrate (about 0.5)"},
    "solids_by_volume": {"description": "share of the ink's volume left after drying: adds the dry film"},
    "solids_by_weight": {"description": "share of the ink's mass left after drying: needs ink_density"},
    "ink_density": {"description": f"press-ready ink density, {DENSITY_LOW:~P} to {DENSITY_HIGH:~P}"},
}


def run(body: dict):
    body = check_fields(body, REQUIRED, OPTIONAL)
    return film_chain(**body)


def compute(body: dict) -> dict:
    chain = run(body)
    answer = {
        "theoretical_wet": quantity_json(chain.theoretical_wet, "um"),
        "plate_wet": quantity_json(chain.plate_wet, "um"),
        "substrate_wet": quantity_json(chain.substrate_wet, "um"),
    }
    if chain.dry is not None:
        answer["dry"] = quantity_json(chain.dry, "um")
    if chain.wet_coat_weight is not None:
        answer["wet_coat_weight"] = quantity_json(chain.wet_coat_weight, "g/m2")
    if chain.dry_coat_weight is not None:
        answer["dry_coat_weight"] = quantity_json(chain.dry_coat_weight, "g/m2")
    return answer


# --- the page -------------------------------------------------------------------


@dataclass(frozen=True)
class Layer:
    """One bar of the film chain drawing, in drawing units (the SVG's user units)."""

    key: str
    label: str
    shown: Shown
    height: float
    y: float


def film_layers(films, spelling: str, *, tallest: float = 140.0, baseline: float = 170.0, least: float = 1.0):
    """Bars for the film chain drawing, drawn to scale against each other.

    ``films`` is a list of ``(key, label, quantity)`` (the anilox volume read
    as a film first, then plate, substrate, dry); the largest is ``tallest``
    units high, the others in proportion, none less than ``least`` so that a
    very thin film stays visible. Bars stand on ``baseline`` (SVG y grows down).

    >>> [round(layer.height) for layer in film_layers(
    ...     [("a", "A", Q_(8, "um")), ("b", "B", Q_(4, "um")), ("c", "C", Q_(2, "um"))], "um")]
    [140, 70, 35]
    """
    values = [float(quantity.to("um").magnitude) for _, _, quantity in films]
    top = max(values) if values else 0.0
    layers = []
    for (key, label, quantity), value in zip(films, values, strict=True):
        height = tallest * value / top if top > 0 else 0.0
        height = max(height, least)
        layers.append(Layer(key, label, show(quantity, spelling), round(height, 2), round(baseline - height, 2)))
    return layers


ROWS = (
    ("theoretical_wet", "Anilox volume as a film", "film", "um"),
    ("plate_wet", "Wet film on the plate", "film", "um"),
    ("substrate_wet", "Wet film on the substrate", "film", "um"),
    ("dry", "Dry film", "film", "um"),
    ("wet_coat_weight", "Wet coat weight", "coat_weight", "g/m2"),
    ("dry_coat_weight", "Dry coat weight", "coat_weight", "g/m2"),
)
LAYERS = (
    ("theoretical_wet", "Anilox"),
    ("plate_wet", "Plate"),
    ("substrate_wet", "Wet print"),
    ("dry", "Dry"),
)


def present(chain, system: str) -> dict:
    rows = []
    for key, label, role, api_unit in ROWS:
        quantity = getattr(chain, key)
        if quantity is None:
            continue
        main, also = both(quantity, role, system)
        rows.append({"key": key, "label": label, "main": main, "also": also, "api": show(quantity, api_unit)})
    films = [(key, label, getattr(chain, key)) for key, label in LAYERS if getattr(chain, key) is not None]
    return {
        "anilox": both(chain.anilox_volume, "anilox", system),
        "rows": rows,
        "headline": next(row for row in rows if row["key"] == "substrate_wet"),
        "layers": film_layers(films, role_units("film", system)[0]),
        "steps": steps(chain.steps, system),
    }


ANILOX_UNITS = ("BCM/in2", "cm3/m2")
DENSITY_UNITS = ("g/cm3", "lb/gal")
DEFAULTS = {
    "anilox_volume": "4.5",
    "anilox_unit": "BCM/in2",
    "anilox_to_plate": format_percent(TYPICAL_ANILOX_TO_PLATE),
    "plate_to_substrate": format_percent(TYPICAL_PLATE_TO_SUBSTRATE),
    "ink_density": "",
    "ink_density_unit": "g/cm3",
    "solids_by_volume": "",
    "solids_by_weight": "",
}


def form_body(form: dict) -> dict:
    """The ``/api/v1/film`` request body for the film chain form.

    A quantity field may carry its unit (``4.5 bcm``, ``7 cm3/m2``): the unit menu is then set from it.
    """
    body: dict = {
        "anilox_volume": quantity_text(*parse_amount(form, "anilox_volume", "anilox_unit", ANILOX_UNITS)),
        "anilox_to_plate": parse_percent(form["anilox_to_plate"], "anilox_to_plate"),
        "plate_to_substrate": parse_percent(form["plate_to_substrate"], "plate_to_substrate"),
    }
    density = parse_amount(form, "ink_density", "ink_density_unit", DENSITY_UNITS, required=False)
    if density is not None:
        body["ink_density"] = quantity_text(*density)
    for share in ("solids_by_volume", "solids_by_weight"):
        value = parse_percent(form[share], share, required=False)
        if value is not None:
            body[share] = value
    return body


def page():
    form = form_values(DEFAULTS)
    if request.method == "GET":
        # A link may fill the form (the converter's "Work it out on Film chain", the roll register's
        # "film chain with this roll"); the values are
        # checked like typed ones.
        form.update({key: value[:40] for key, value in request.args.items() if key in DEFAULTS})
    context = {
        "form": form,
        "errors": {},
        "chain": None,
        "snippet_kind": "film",
        "typical_to_plate": DEFAULTS["anilox_to_plate"],
        "typical_to_substrate": DEFAULTS["plate_to_substrate"],
        "anilox_units": ANILOX_UNITS,
        "density_units": DENSITY_UNITS,
    }
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, chain=present(run(body), current_system()))
    except InputError as exc:
        context["errors"] = field_errors(exc)
    return respond("calculators/film.html", "calculators/_film_result.html", **context)


FILM = Calculator(
    kind="film",
    title="Film chain",
    compute=compute,
    path="/film",
    view=page,
    nav="Film chain",
    shares=SHARES,
    main_input="anilox_volume",
    required=REQUIRED,
    optional=OPTIONAL,
    limits=LIMITS,
    answer=Answer(
        dict.fromkeys(("theoretical_wet", "plate_wet", "substrate_wet"), "quantity"),
        optional=dict.fromkeys(("dry", "wet_coat_weight", "dry_coat_weight"), "quantity"),
    ),
    precache=True,
)
