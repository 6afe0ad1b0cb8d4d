"""Choosing an anilox roll: does this roll suit this plate and this kind of work,
and what would? With a drawing, to scale, of the roll's cells under the plate's
smallest dot."""

from __future__ import annotations

import math

from calc import InputError
from calc.display import format_number
from calc.fit import ADVISORY_CODES, fit_check
from calc.practice import TYPICAL_WALL, WORK_KINDS, WORK_NAMES
from webapp.calculators.anilox_display import pair, working
from webapp.calculators.spec import Answer, Calculator
from webapp.common.forms import choose, field_errors, form_values, parse_number, quantity_text
from webapp.common.htmx import respond
from webapp.common.jsonapi import check_fields, quantity_json
from webapp.common.preference import current_system

# The request's fields (see PHASE2 "request-field convention"). The plate screen
# is optional for work without halftones; process work without one is a 400.
REQUIRED = {"work": "text"}
OPTIONAL = {"plate_screen": "quantity", "anilox_screen": "quantity", "anilox_volume": "quantity"}
SHARES = frozenset()


def run(body: dict):
    body = check_fields(body, REQUIRED, OPTIONAL)
    return fit_check(**body)


def _range_json(low, high, unit: str) -> dict:
    return {
        "low": None if low is None else quantity_json(low, unit),
        "high": None if high is None else quantity_json(high, unit),
    }


def compute(body: dict) -> dict:
    check = run(body)
    answer = {
        "work": check.work,
        "screen_ratio_min": check.screen_ratio_min,
        "screen_range": _range_json(check.screen_range.low, check.screen_range.high, "lpi"),
        "volume_range": _range_json(check.volume_range.low, check.volume_range.high, "BCM/in2"),
    }
    if check.smallest_dot_diameter is not None:
        answer["smallest_dot_diameter"] = quantity_json(check.smallest_dot_diameter, "um")
    if check.fits is not None:
        answer["ratio"] = check.ratio
        answer["fits"] = check.fits
        answer["problems"] = [{"code": code, "message": message} for code, message in check.problems]
        answer["anilox_opening"] = quantity_json(check.anilox_opening, "um")
    return answer


# --- the page -------------------------------------------------------------------

# What the kinds of work are called in the form's menu.
WORK_CHOICES = {
    "process": "Process: halftones",
    "line": "Line work and type",
    "solid": "Spot colour solids",
    "white": "Opaque white",
    "coating": "Varnish, coating, adhesive",
}
assert tuple(WORK_CHOICES) == WORK_KINDS
SHORT_REASONS = {
    "screen_too_coarse": "screen too coarse",
    "volume_too_high": "volume too high",
    "volume_too_low": "volume too low",
}
SCREEN_UNITS = ("lpi", "lpcm")
VOLUME_UNITS = ("BCM/in2", "cm3/m2")
DEFAULTS = {
    "plate_screen": "150",
    "plate_screen_unit": "lpi",
    "work": "process",
    "anilox_screen": "",
    "anilox_screen_unit": "lpi",
    "anilox_volume": "",
    "anilox_volume_unit": "BCM/in2",
}
FORM_FIELDS = tuple(DEFAULTS)
# Symbols of the working that are plain numbers (ratios), not shares.
PLAIN = frozenset({"r", "r_min", "V × S"})


def form_body(form: dict) -> dict:
    """The ``/api/v1/fit`` request body for the form; blank optional fields are left out."""
    body: dict = {"work": form["work"]}
    for name in ("plate_screen", "anilox_screen", "anilox_volume"):
        allowed = VOLUME_UNITS if name == "anilox_volume" else SCREEN_UNITS
        unit = choose(form[f"{name}_unit"], allowed, f"{name}_unit")
        value = parse_number(form[name], name, required=False)
        if value is not None:
            body[name] = quantity_text(value, unit)
    return body


def _joined(words: list[str]) -> str:
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " and " + words[-1]


def verdict(check) -> dict:
    """The answer in one line: ``Fits``, ``Does not fit: screen too coarse``, or the advice without a roll."""
    if check.fits is None:
        return {"state": "none", "text": f"The roll to look for, for {WORK_NAMES[check.work]}"}
    if check.fits:
        return {"state": "fits", "text": "Fits"}
    reasons = [SHORT_REASONS[code] for code, _ in check.problems if code in SHORT_REASONS]
    return {"state": "unfit", "text": f"Does not fit: {_joined(reasons)}"}


def reasons(check, system: str) -> list[dict]:
    """Why: the core's messages for what is wrong, and plain words for what is right."""
    if check.fits is None:
        return []
    found = {code for code, _ in check.problems}
    items = []
    if check.ratio is not None and check.screen_ratio_min is not None and "screen_too_coarse" not in found:
        items.append(
            {
                "kind": "ok",
                "code": "screen_fine_enough",
                "message": f"The roll's screen ({pair(check.anilox_screen, 'screen', system)['main']}) is "
                f"{check.ratio:.1f} times the plate's; {WORK_NAMES[check.work]} wants at least "
                f"{check.screen_ratio_min:g} times, so its cells stay small against the smallest dots.",
            }
        )
    if not found & {"volume_too_high", "volume_too_low"}:
        low, high = (pair(value, "anilox", system)["main"] for value in check.volume_range)
        items.append(
            {
                "kind": "ok",
                "code": "volume_in_range",
                "message": f"{pair(check.anilox_volume, 'anilox', system)['main']} is within the "
                f"{low.number}–{high} usual for {WORK_NAMES[check.work]}.",
            }
        )
    for code, message in check.problems:
        items.append({"kind": "advice" if code in ADVISORY_CODES else "problem", "code": code, "message": message})
    order = {"problem": 0, "advice": 1, "ok": 2}
    return sorted(items, key=lambda item: order[item["kind"]])


def _hexagon(cx: float, cy: float, across_flats: float) -> str:
    """Points of a pointy-topped regular hexagon ``across_flats`` wide (left and right sides flat)."""
    radius = across_flats / math.sqrt(3.0)
    angles = [math.radians(degrees) for degrees in range(30, 390, 60)]
    return " ".join(f"{cx + radius * math.cos(a):.2f},{cy + radius * math.sin(a):.2f}" for a in angles)


def _scale_bar(width_um: float) -> float:
    """A round length for the scale bar, about a fifth of the patch."""
    target = width_um / 5.0
    for step in (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000):
        if step >= target:
            return float(step)
    return 1000.0


# The drawing's patch of roll surface, in SVG user units.
PATCH = {"x": 10.0, "y": 10.0, "width": 300.0, "height": 170.0}
MOST_CELLS_ACROSS = 16


def dot_drawing(dot_um: float, pitch_um: float, opening_um: float) -> dict:
    """The plate's smallest dot over the roll's cells, both to one scale.

    The patch is wide enough for the dot and a few cells (at most 16 cells
    across, so a dot far larger than the cells fills it). One cell sits in the
    middle, under the dot's centre: the worst case, where a dot smaller than
    the opening dips into the cell. Cells are the usual 60° hexagons.

    >>> drawing = dot_drawing(27.0, 42.33, 39.33)
    >>> drawing["dot_r"] == round(13.5 * drawing["scale"], 2), drawing["dips"]
    (True, True)
    """
    width_um = min(max(2.6 * dot_um, 3.5 * pitch_um), MOST_CELLS_ACROSS * pitch_um)
    scale = PATCH["width"] / width_um
    height_um = PATCH["height"] / scale
    cx, cy = width_um / 2.0, height_um / 2.0
    row_step = pitch_um * math.sqrt(3.0) / 2.0
    rows = math.ceil(cy / row_step) + 1
    cols = math.ceil(cx / pitch_um) + 1
    cells = []
    for row in range(-rows, rows + 1):
        offset = pitch_um / 2.0 if row % 2 else 0.0
        for col in range(-cols - 1, cols + 1):
            x = cx + col * pitch_um + offset
            y = cy + row * row_step
            cells.append(_hexagon(x * scale, y * scale, opening_um * scale))
    bar = _scale_bar(width_um)
    return {
        "patch": PATCH,
        "scale": scale,
        "cells": cells,
        "dot_cx": round(cx * scale, 2),
        "dot_cy": round(cy * scale, 2),
        "dot_r": round(dot_um / 2.0 * scale, 2),
        "bar_um": format_number(bar),
        "bar_px": round(bar * scale, 2),
        "dips": dot_um < opening_um,
        "cells_across_dot": dot_um / pitch_um,
    }


def present(check, system: str) -> dict:
    low = check.screen_range.low
    presented = {
        "work": check.work,
        "work_name": WORK_NAMES[check.work],
        "verdict": verdict(check),
        "reasons": reasons(check, system),
        "screen_low": None if low is None else pair(low, "screen", system),
        "screen_ratio_min": None if check.screen_ratio_min is None else format_number(check.screen_ratio_min),
        "volume_low": pair(check.volume_range.low, "anilox", system),
        "volume_high": pair(check.volume_range.high, "anilox", system),
        "dot_share": format_number(check.smallest_dot * 100.0),
        "plate": None if check.plate_screen is None else pair(check.plate_screen, "screen", system),
        "dot": None if check.smallest_dot_diameter is None else pair(check.smallest_dot_diameter, "film", system),
        "ratio": None if check.ratio is None else format_number(check.ratio),
        "roll": None,
        "drawing": None,
        "steps": working(check.steps, system, PLAIN),
    }
    if check.fits is not None:
        presented["roll"] = {
            "screen": pair(check.anilox_screen, "screen", system),
            "volume": pair(check.anilox_volume, "anilox", system),
            "opening": pair(check.anilox_opening, "film", system),
            "pitch": pair(check.anilox_pitch, "film", system),
            "wall": pair(check.anilox_wall, "film", system),
        }
        if check.smallest_dot_diameter is not None:
            presented["drawing"] = dot_drawing(
                check.smallest_dot_diameter.to("um").magnitude,
                check.anilox_pitch.to("um").magnitude,
                check.anilox_opening.to("um").magnitude,
            )
    return presented


def page():
    form = form_values(DEFAULTS)
    context = {
        "form": form,
        "errors": {},
        "check": None,
        "snippet_kind": "fit",
        "work_choices": WORK_CHOICES,
        "typical_wall": pair(TYPICAL_WALL, "film", current_system())["main"],
        "field_names": FORM_FIELDS,
    }
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, check=present(run(body), current_system()))
    except InputError as exc:
        context["errors"] = field_errors(exc)
    return respond("calculators/fit.html", "calculators/_fit_result.html", **context)


FIT = Calculator(
    kind="fit",
    title="Roll fit",
    compute=compute,
    path="/fit",
    view=page,
    nav="Roll fit",
    shares=SHARES,
    main_input="plate_screen",
    required=REQUIRED,
    optional=OPTIONAL,
    answer=Answer(
        {
            "work": "text",
            "screen_ratio_min": "number or null",
            "screen_range": Answer({"low": "quantity or null", "high": "quantity or null"}),
            "volume_range": Answer({"low": "quantity", "high": "quantity"}),
        },
        optional={
            "smallest_dot_diameter": "quantity",
            "ratio": "number or null",
            "fits": "boolean",
            "problems": [Answer({"code": "text", "message": "text"})],
            "anilox_opening": "quantity",
        },
    ),
)
