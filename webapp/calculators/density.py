"""Ink strength: the Tollenaar–Ernst curve fitted to the shop's density readings, and what it answers.

Three calculations (``calc.density``), each a calculator of the registry:

- ``density_fit``: readings in, D∞ and m with their uncertainty out;
- ``density_volume_for``: the film and anilox volume a target density needs at
  a transfer share (the **Ink strength** page);
- ``density_from``: the density an anilox volume (or a film) is expected to
  give, with a 95 % band.

The registry serves them at ``/api/v1/<kind>``; this module also serves them
under the names people read, ``/api/v1/density/fit``, ``/density/volume-for``
and ``/density/density-from`` (a child of ``api``, nested at import). The two
answers take either ``readings`` or a fit's parameters as ``density_fit``
gives them (``d_inf``, ``m`` and, for bands, ``d_inf_se``, ``m_se``,
``correlation``, ``count``).
"""

from __future__ import annotations

import math

from flask import Blueprint, jsonify, request

from calc import InputError
from calc.density import (
    CONFIDENCE,
    MAX_READINGS,
    Plain,
    curve_from_parameters,
    density_from_volume,
    fit_tollenaar_ernst,
    make_reading,
    volume_for_density,
)
from calc.display import format_number, format_percent, role_units, show, show_value
from calc.units import Q_
from webapp.calculators.spec import Answer, Calculator
from webapp.common.forms import choose, form_values, parse_number, parse_percent, quantity_text
from webapp.common.htmx import respond
from webapp.common.jsonapi import api, check_fields, quantity_json, request_body
from webapp.common.preference import current_system

# --- request fields (name → kind; "list" and "object" hold nested fields) ------------
READING_REQUIRED = {"density": "number"}
READING_OPTIONAL = {"film": "quantity", "anilox_volume": "quantity", "transfer": "share"}
FIT_REQUIRED = {"readings": "list"}  # of READING_* objects
PARAMETERS_REQUIRED = {"d_inf": "number", "m": "quantity"}
PARAMETERS_OPTIONAL = {
    "d_inf_se": "number",
    "m_se": "quantity",
    "correlation": "number",
    "count": "integer",
    "residual_sd": "number",
}
CURVE_OPTIONAL = {"readings": "list", **PARAMETERS_REQUIRED, **PARAMETERS_OPTIONAL}
VOLUME_FOR_REQUIRED = {"target_density": "number", "transfer": "share"}
VOLUME_FOR_OPTIONAL = CURVE_OPTIONAL
DENSITY_FROM_OPTIONAL = {"anilox_volume": "quantity", "transfer": "share", "film": "quantity", **CURVE_OPTIONAL}
SHARES = frozenset({"transfer", "confidence"})


def readings_of(items) -> list:
    if not isinstance(items, list) or not items:
        raise InputError("readings", f"must be a list of readings (3 to {MAX_READINGS})")
    if len(items) > MAX_READINGS:
        raise InputError("readings", f"at most {MAX_READINGS} readings, please (this has {len(items)})")
    readings = []
    for index, item in enumerate(items):
        where = f"readings[{index}]"
        item = check_fields(item, set(READING_REQUIRED), set(READING_OPTIONAL), prefix=where)
        readings.append(make_reading(field=where, **item))
    return readings


def curve_of(body: dict):
    """The curve a request gives: fitted to its ``readings``, or from a fit's parameters."""
    parameters = {
        name: body.pop(name) for name in list(body) if name in PARAMETERS_REQUIRED or name in PARAMETERS_OPTIONAL
    }
    if "readings" in body:
        if parameters:
            raise InputError(next(iter(parameters)), "give readings or a fit's parameters, not both")
        return fit_tollenaar_ernst(readings_of(body.pop("readings")))
    if not parameters:
        raise InputError("readings", "give the readings (or the d_inf and m of a fit)")
    for name in PARAMETERS_REQUIRED:
        if name not in parameters:
            raise InputError(name, "is required with a fit's parameters (or give the readings)")
    parameters.pop("residual_sd", None)  # a fit reports it; the answers do not need it
    for name in ("m", "m_se"):  # as a fit answers them, {"value", "unit"}, or as text
        value = parameters.get(name)
        if isinstance(value, dict) and set(value) == {"value", "unit"} and isinstance(value["unit"], str):
            if isinstance(value["value"], bool) or not isinstance(value["value"], int | float):
                raise InputError(name, "its value must be a number")
            parameters[name] = f"{float(value['value'])!r} {value['unit']}"
    return curve_from_parameters(**parameters)


def fit_json(curve) -> dict:
    answer = {"d_inf": curve.d_inf, "m": quantity_json(curve.m, "1/um")}
    if curve.has_band:
        answer.update(
            d_inf_se=curve.d_inf_se,
            m_se=quantity_json(curve.m_se, "1/um"),
            correlation=curve.correlation,
            count=curve.count,
        )
    if curve.residual_sd is not None:
        answer["residual_sd"] = curve.residual_sd
    return answer


def band_json(low, high, unit: str | None = None):
    if low is None:
        return None
    if unit is None:
        return {"low": low, "high": high}
    return {"low": quantity_json(low, unit), "high": quantity_json(high, unit)}


def compute_fit(body: dict) -> dict:
    body = check_fields(body, set(FIT_REQUIRED))
    curve = fit_tollenaar_ernst(readings_of(body["readings"]))
    points = []
    for reading in curve.readings:
        fitted = curve.density_at(reading.film).density
        points.append(
            {
                "film": quantity_json(reading.film, "um"),
                "density": reading.density,
                "fitted": fitted,
                "residual": reading.density - fitted,
            }
        )
    return {**fit_json(curve), "points": points}


def run_volume_for(body: dict):
    body = check_fields(body, set(VOLUME_FOR_REQUIRED), set(VOLUME_FOR_OPTIONAL))
    curve = curve_of(body)
    return volume_for_density(curve, body["target_density"], body["transfer"])


def compute_volume_for(body: dict) -> dict:
    answer = run_volume_for(body)
    return {
        **fit_json(answer.curve),
        "target_density": answer.needed.target,
        "film": quantity_json(answer.needed.film, "um"),
        "film_band": band_json(answer.needed.low, answer.needed.high, "um"),
        "transfer": answer.transfer,
        "anilox_volume": quantity_json(answer.anilox_volume, "cm3/m2"),
        "anilox_volume_band": band_json(answer.anilox_low, answer.anilox_high, "cm3/m2"),
        "beyond_readings": answer.beyond_readings,
        "confidence": CONFIDENCE,
    }


def compute_density_from(body: dict) -> dict:
    body = check_fields(body, set(), set(DENSITY_FROM_OPTIONAL))
    curve = curve_of(body)
    expected, _ = density_from_volume(curve, body.get("anilox_volume"), body.get("transfer"), body.get("film"))
    return {
        **fit_json(curve),
        "film": quantity_json(expected.film, "um"),
        "density": expected.density,
        "density_band": band_json(expected.low, expected.high),
        "confidence": CONFIDENCE,
    }


# The names people read: /api/v1/density/fit, /density/volume-for, /density/density-from.
named = Blueprint("density_api", __name__, url_prefix="/density")
ROUTES = {"fit": compute_fit, "volume-for": compute_volume_for, "density-from": compute_density_from}


for _name, _compute in ROUTES.items():
    named.add_url_rule(
        f"/{_name}",
        endpoint=_name,
        view_func=lambda compute=_compute: jsonify(compute(request_body())),
        methods=["POST"],
    )


api.register_blueprint(named)


# --- the page -------------------------------------------------------------------------

FILM_UNITS = ("um", "mil")
VOLUME_UNITS = ("BCM/in2", "cm3/m2")
MAX_ROWS = MAX_READINGS  # the page holds as many readings as the core fits (a saved snippet's every one)
TYPICAL_TRANSFER = "25"  # about half to the plate, half of that to the stock (common practice)
# Invented example readings (an example shop's cyan on white film): anilox volume in BCM/in², density.
EXAMPLE_ROWS = (("1.5", "0.64"), ("2.5", "0.89"), ("3.5", "1.10"), ("4.5", "1.22"), ("6", "1.37"), ("8", "1.45"))
DEFAULTS = {
    "basis": "volume",
    "film_unit": "um",
    "volume_unit": "BCM/in2",
    "target_density": "1.40",
    "transfer": TYPICAL_TRANSFER,
    "reading_count": str(len(EXAMPLE_ROWS)),
}
ROW_KEYS = ("value", "transfer", "density")


def row_defaults(index: int) -> dict:
    value, density = EXAMPLE_ROWS[index] if index < len(EXAMPLE_ROWS) else ("", "")
    return {"value": value, "transfer": TYPICAL_TRANSFER, "density": density}


def strength_form() -> dict:
    """The form as posted (or as its address gives it, or the example), its reading rows as a list of
    dicts (``readings[i].value``, ``.transfer``, ``.density``); adds or removes a row."""
    form = form_values(DEFAULTS)
    try:
        count = int(form["reading_count"])
    except ValueError:
        count = len(EXAMPLE_ROWS)
    posted = request.method == "POST"
    action = request.form.get("action", "") if posted else ""
    # An address may give the rows too (a saved snippet's "Open in the calculator"): then only its rows.
    linked = not posted and any(key.startswith("readings[") for key in request.args)
    rows = []
    for index in range(max(1, min(count, MAX_ROWS))):
        row = row_defaults(index)
        if posted:
            row.update({key: request.form.get(f"readings[{index}].{key}", "") for key in ROW_KEYS})
        elif linked:
            row = {"value": "", "transfer": TYPICAL_TRANSFER, "density": ""}
            for key in ROW_KEYS:
                if f"readings[{index}].{key}" in request.args:
                    row[key] = request.args[f"readings[{index}].{key}"][:100]
        rows.append(row)
    if action == "add" and len(rows) < MAX_ROWS:
        rows.append({"value": "", "transfer": rows[-1]["transfer"], "density": ""})
    elif action.startswith("remove-") and len(rows) > 1:
        try:
            del rows[int(action.removeprefix("remove-"))]
        except (ValueError, IndexError):
            pass
    form["readings"] = rows
    form["reading_count"] = str(len(rows))
    # The hint that the rows are invented, only while one of the example rows is still there.
    form["shows_example"] = any(
        (row["value"].strip(), row["density"].strip()) == example
        for row, example in zip(rows, EXAMPLE_ROWS, strict=False)
    )
    return form


def form_body(form: dict) -> dict:
    """The ``density_volume_for`` request body for the Ink strength form (empty rows are skipped)."""
    by_volume = form["basis"] != "film"
    unit_field = "volume_unit" if by_volume else "film_unit"
    unit = choose(form[unit_field], VOLUME_UNITS if by_volume else FILM_UNITS, unit_field)
    readings = []
    for index, row in enumerate(form["readings"]):
        where = f"readings[{index}]."
        if not row["value"].strip() and not row["density"].strip():
            continue
        value = parse_number(row["value"], where + "value")
        item: dict = {"density": parse_number(row["density"], where + "density")}
        if by_volume:
            item["anilox_volume"] = quantity_text(value, unit)
            item["transfer"] = parse_percent(row["transfer"], where + "transfer")
        else:
            item["film"] = quantity_text(value, unit)
        readings.append(item)
    return {
        "readings": readings,
        "target_density": parse_number(form["target_density"], "target_density"),
        "transfer": parse_percent(form["transfer"], "transfer"),
    }


# Request fields to the form fields that show their messages.
RENAMES = {"film": "value", "anilox_volume": "value"}


def form_field(field: str | None) -> str:
    """``readings[2].anilox_volume`` → ``readings[2].value``; ``readings`` and others as they are."""
    if field and field.startswith("readings[") and "." in field:
        head, _, name = field.partition(".")
        return f"{head}.{RENAMES.get(name, name)}"
    return field or "_form"


def _nice_step(span: float, ticks: int = 5) -> float:
    raw = span / ticks
    power = 10 ** math.floor(math.log10(raw))
    return next(step * power for step in (1, 2, 2.5, 5, 10) if step * power >= raw)


# The plot area inside the SVG's 340 × 230 user units.
LEFT, RIGHT, TOP, BOTTOM = 44.0, 330.0, 12.0, 190.0


def chart(answer, film_unit: str) -> dict:
    """Geometry of the chart: readings, fitted curve with its band, the target line and the film it needs."""
    curve = answer.curve
    per = Q_(1, film_unit).to("um").magnitude  # µm per chart unit
    films = [reading.film.to("um").magnitude for reading in curve.readings]
    needed = answer.needed.film.to("um").magnitude
    top_film = max(films) if films else needed
    x_max = min(max(top_film, needed) * 1.1, 3 * top_film) / per
    y_max = max([curve.d_inf, answer.needed.target] + [reading.density for reading in curve.readings]) * 1.1
    x_step, y_step = _nice_step(x_max), _nice_step(y_max, 4)
    x_max = math.ceil(x_max / x_step - 1e-9) * x_step
    y_max = math.ceil(y_max / y_step - 1e-9) * y_step

    def px(value: float) -> float:
        return round(LEFT + (RIGHT - LEFT) * value / x_max, 1)

    def py(value: float) -> float:
        return round(BOTTOM - (BOTTOM - TOP) * min(value, y_max) / y_max, 1)

    samples = [x_max * i / 60 for i in range(61)]
    expected = [curve.density_at(Q_(x * per, "um")) for x in samples]
    line = " ".join(f"{px(x)},{py(e.density)}" for x, e in zip(samples, expected, strict=True))
    band = None
    if curve.has_band:
        upper = [f"{px(x)},{py(e.high)}" for x, e in zip(samples, expected, strict=True)]
        lower = [f"{px(x)},{py(e.low)}" for x, e in reversed(list(zip(samples, expected, strict=True)))]
        band = " ".join(upper + lower)
    x_ticks = [(px(i * x_step), format_number(i * x_step)) for i in range(round(x_max / x_step) + 1)]
    y_ticks = [(py(i * y_step), format_number(i * y_step)) for i in range(round(y_max / y_step) + 1)]
    shown = needed / per <= x_max
    return {
        "line": line,
        "band": band,
        "points": [
            {"x": px(x / per), "y": py(r.density), "film": format_number(x / per), "density": format_number(r.density)}
            for x, r in zip(films, curve.readings, strict=True)
        ],
        "x_ticks": x_ticks,
        "y_ticks": y_ticks,
        "target_y": py(answer.needed.target),
        "needed_x": px(needed / per) if shown else None,
        "needed_shown": shown,
        "ceiling_y": py(curve.d_inf),
        "left": LEFT,
        "right": RIGHT,
        "top": TOP,
        "bottom": BOTTOM,
        "unit": show(Q_(1, film_unit), film_unit).unit,
    }


def working(step_list, system: str) -> list[dict]:
    """ "How this was worked out": densities as plain numbers, other values in the user's units."""

    def value(item) -> str:
        if isinstance(item, Plain):
            return format_number(float(item), 4)
        if hasattr(item, "units") and str(item.units) == "1 / micrometer":
            main = role_units("film", system)[0]
            return f"{format_number(float(item.to('1/' + main).magnitude))} /{show(Q_(1, main), main).unit}"
        return show_value(item, system)

    return [
        {
            "label": step.label,
            "formula": step.formula,
            "inputs": [(symbol, value(item)) for symbol, item in step.inputs],
            "result": f"{step.symbol} = {value(step.result)}",
        }
        for step in step_list
    ]


def present(answer, system: str) -> dict:
    curve = answer.curve
    film_unit = role_units("film", system)[0]
    volume_main, volume_also = role_units("anilox", system)
    per_film = f"1/{film_unit}"
    rate_unit = show(Q_(1, film_unit), film_unit).unit
    band = answer.anilox_low is not None
    return {
        "d_inf": format_number(curve.d_inf),
        "d_inf_se": format_number(curve.d_inf_se, 2),
        "m": format_number(curve.m.to(per_film).magnitude),
        "m_se": format_number(curve.m_se.to(per_film).magnitude, 2),
        "rate_unit": f"/{rate_unit}",
        "residual_sd": format_number(curve.residual_sd, 2),
        "count": curve.count,
        "target": format_number(answer.needed.target),
        "transfer": format_percent(answer.transfer),
        "film": show(answer.needed.film, film_unit),
        "film_band": (show(answer.needed.low, film_unit), show(answer.needed.high, film_unit)) if band else None,
        "volume": show(answer.anilox_volume, volume_main),
        "volume_also": show(answer.anilox_volume, volume_also),
        "volume_band": (show(answer.anilox_low, volume_main), show(answer.anilox_high, volume_main)) if band else None,
        "beyond": answer.beyond_readings,
        "readings": [
            {
                "film": show(reading.film, film_unit),
                "density": format_number(reading.density),
                "fitted": format_number(curve.density_at(reading.film).density),
            }
            for reading in curve.readings
        ],
        "chart": chart(answer, film_unit),
        "steps": working(answer.steps, system),
    }


def page():
    form = strength_form()
    context = {
        "form": form,
        "errors": {},
        "strength": None,
        "snippet_kind": "density_volume_for",
        "max_rows": MAX_ROWS,
        "film_units": FILM_UNITS,
        "volume_units": VOLUME_UNITS,
    }
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, strength=present(run_volume_for(dict(body)), current_system()))
    except InputError as exc:
        context["errors"] = {form_field(exc.field): exc.message}
    if request.headers.get("HX-Target") == "strength-area":
        return respond("calculators/density.html", "calculators/_density_area.html", oob=False, **context)
    return respond("calculators/density.html", "calculators/_density_result.html", **context)


FIT_PARAMETERS = {"d_inf": "number", "m": "quantity"}
FIT_EXTRAS = {"d_inf_se": "any", "m_se": "any", "correlation": "any", "count": "integer", "residual_sd": "any"}
READINGS = {"readings": (READING_REQUIRED, READING_OPTIONAL)}
DENSITY_FIT = Calculator(
    kind="density_fit",
    title="Ink strength fit",
    compute=compute_fit,
    shares=SHARES,
    required=FIT_REQUIRED,
    nested=READINGS,
    answer=Answer({**FIT_PARAMETERS, "points": ["any"]}, optional=FIT_EXTRAS),
    also_at="/density/fit",
)
DENSITY_VOLUME_FOR = Calculator(
    kind="density_volume_for",
    title="Ink strength",
    compute=compute_volume_for,
    path="/ink-strength",
    view=page,
    nav="Ink strength",
    shares=SHARES,
    main_input="target_density",
    required=VOLUME_FOR_REQUIRED,
    optional=VOLUME_FOR_OPTIONAL,
    nested=READINGS,
    answer=Answer(
        {**FIT_PARAMETERS, "film": "quantity", "anilox_volume": "quantity"},
        optional={
            **FIT_EXTRAS,
            "film_band": "any",
            "anilox_volume_band": "any",
            "beyond_readings": "boolean",
            "confidence": "number",
            "target_density": "number",
            "transfer": "number",
        },
    ),
    also_at="/density/volume-for",
)
DENSITY_FROM = Calculator(
    kind="density_from",
    title="Density from a volume",
    compute=compute_density_from,
    shares=SHARES,
    optional=DENSITY_FROM_OPTIONAL,
    nested=READINGS,
    answer=Answer(
        {**FIT_PARAMETERS, "film": "quantity", "density": "number"},
        optional={**FIT_EXTRAS, "density_band": "any", "confidence": "number"},
    ),
    also_at="/density/density-from",
)
# The registry's line: the page in nav order, the API-only ones after it.
SPECS = (DENSITY_VOLUME_FOR, DENSITY_FIT, DENSITY_FROM)
