"""Anilox cell geometry: from screen, wall and depth to the volume (or from a
stated volume back to the depth), with one cell drawn to scale in section."""

from __future__ import annotations

from calc import InputError
from calc.cell import CELL_LAYOUTS, DEFAULT_ANGLE, DEFAULT_SHAPE, cell_geometry
from calc.display import format_number, format_percent
from webapp.calculators.anilox_display import pair, working
from webapp.calculators.spec import Answer, Calculator
from webapp.common.forms import choose, field_errors, form_values, parse_number, quantity_text
from webapp.common.htmx import respond
from webapp.common.jsonapi import check_fields, quantity_json
from webapp.common.preference import current_system

# The request's fields (see PHASE2 "request-field convention"); give ``depth`` or ``volume``.
REQUIRED = {"screen": "quantity", "wall": "quantity"}
OPTIONAL = {"angle": "number", "shape": "text", "depth": "quantity", "volume": "quantity"}
SHARES = frozenset({"open_area"})


def run(body: dict):
    body = check_fields(body, REQUIRED, OPTIONAL)
    return cell_geometry(**body)


def compute(body: dict) -> dict:
    cell = run(body)
    return {
        "pitch": quantity_json(cell.pitch, "um"),
        "opening": quantity_json(cell.opening, "um"),
        "open_area": cell.open_area,
        "volume": quantity_json(cell.volume, "cm3/m2"),
        "depth": quantity_json(cell.depth, "um"),
        "depth_to_opening": cell.depth_to_opening,
        "problems": [{"code": code, "message": message} for code, message in cell.problems],
    }


# --- the page -------------------------------------------------------------------

ANGLE_CHOICES = {
    "60": "60°, hexagonal (usual)",
    "45": "45°, square cells",
    "30": "30°, hexagonal turned",
}
SHAPE_CHOICES = {
    "bowl": "Bowl (usual laser cell)",
    "prism": "Flat-bottomed",
    "cone": "Cone or pyramid",
}
SHAPE_NAMES = {"bowl": "bowl", "prism": "flat-bottomed", "cone": "cone"}
assert {int(angle) for angle in ANGLE_CHOICES} == set(CELL_LAYOUTS)
SCREEN_UNITS = ("lpi", "lpcm")
LENGTH_UNITS = ("um", "mil")
VOLUME_UNITS = ("BCM/in2", "cm3/m2")
DEFAULTS = {
    "screen": "800",
    "screen_unit": "lpi",
    "wall": "3",
    "wall_unit": "um",
    "angle": str(DEFAULT_ANGLE),
    "shape": DEFAULT_SHAPE,
    "given": "depth",
    "depth": "12",
    "depth_unit": "um",
    "volume": "",
    "volume_unit": "BCM/in2",
}
FORM_FIELDS = tuple(DEFAULTS)
# Symbols of the working that are plain numbers, not shares.
PLAIN = frozenset({"k", "r"})


def form_body(form: dict) -> dict:
    """The ``/api/v1/cell`` request body for the form: the depth or the volume, as chosen."""
    body: dict = {}
    for name, allowed in (("screen", SCREEN_UNITS), ("wall", LENGTH_UNITS)):
        unit = choose(form[f"{name}_unit"], allowed, f"{name}_unit")
        body[name] = quantity_text(parse_number(form[name], name), unit)
    if form["angle"] not in ANGLE_CHOICES:
        raise InputError("angle", "choose one of the angles in the list")
    body["angle"] = int(form["angle"])
    if form["shape"] not in SHAPE_CHOICES:
        raise InputError("shape", "choose one of the shapes in the list")
    body["shape"] = form["shape"]
    if form["given"] not in ("depth", "volume"):
        raise InputError("given", "choose whether you know the depth or the volume")
    given = form["given"]
    allowed = LENGTH_UNITS if given == "depth" else VOLUME_UNITS
    unit = choose(form[f"{given}_unit"], allowed, f"{given}_unit")
    body[given] = quantity_text(parse_number(form[given], given), unit)
    return body


# The section drawing's frame, in SVG user units: the cell fits WIDTH × DEPTH.
LEFT, WIDTH, TOP, DEPTH, BASE = 16.0, 204.0, 42.0, 128.0, 186.0


def section(pitch_um: float, wall_um: float, depth_um: float, shape: str) -> dict:
    """One cell in section, to scale (one scale for both directions).

    The cell spans one pitch: half a wall, the opening, half a wall. A bowl
    is a paraboloid, whose section a quadratic Bézier curve draws exactly
    (control point at twice the depth); a cone is a V, a prism a box.

    >>> cut = section(31.75, 3.0, 12.0, "bowl")
    >>> cut["scale"] == WIDTH / 31.75, cut["bottom"] == round(TOP + 12.0 * cut["scale"], 2)
    (True, True)
    """
    scale = min(WIDTH / pitch_um, DEPTH / depth_um)
    x0 = LEFT + (WIDTH - pitch_um * scale) / 2.0
    x1 = x0 + pitch_um * scale
    a = x0 + wall_um / 2.0 * scale
    b = x1 - wall_um / 2.0 * scale
    mid = (a + b) / 2.0
    bottom = TOP + depth_um * scale
    if shape == "prism":
        profile = f"L {a:.2f} {bottom:.2f} L {b:.2f} {bottom:.2f} L {b:.2f} {TOP:.2f}"
    elif shape == "cone":
        profile = f"L {mid:.2f} {bottom:.2f} L {b:.2f} {TOP:.2f}"
    else:
        profile = f"Q {mid:.2f} {TOP + 2.0 * depth_um * scale:.2f} {b:.2f} {TOP:.2f}"
    base = max(BASE, bottom + 10.0)
    return {
        "scale": scale,
        "roll": f"M {x0:.2f} {TOP:.2f} L {a:.2f} {TOP:.2f} {profile} L {x1:.2f} {TOP:.2f} "
        f"L {x1:.2f} {base:.2f} L {x0:.2f} {base:.2f} Z",
        "ink": f"M {a:.2f} {TOP:.2f} {profile} Z",
        "x0": round(x0, 2),
        "x1": round(x1, 2),
        "a": round(a, 2),
        "b": round(b, 2),
        "mid": round(mid, 2),
        "top": TOP,
        "bottom": round(bottom, 2),
        "base": round(base, 2),
    }


def present(cell, system: str, given: str) -> dict:
    low, high = cell.depth_to_opening_usual
    ratio = cell.depth_to_opening
    band = "deeper than usual" if ratio > high else "shallower than usual" if ratio < low else "within the usual band"
    answer = "depth" if given == "volume" else "volume"
    return {
        "answer": answer,
        "headline": pair(cell.volume, "anilox", system) if answer == "volume" else pair(cell.depth, "film", system),
        "volume": pair(cell.volume, "anilox", system),
        "depth": pair(cell.depth, "film", system),
        "opening": pair(cell.opening, "film", system),
        "pitch": pair(cell.pitch, "film", system),
        "wall": pair(cell.wall, "film", system),
        "screen": pair(cell.screen, "screen", system),
        "open_area": format_percent(cell.open_area),
        "ratio": format_number(ratio),
        "ratio_percent": format_number(ratio * 100.0, 2),
        "band_low": format_number(low),
        "band_high": format_number(high),
        "band": band,
        "in_band": low <= ratio <= high,
        "layout": cell.layout,
        "angle": cell.angle,
        "shape": SHAPE_NAMES[cell.shape],
        "problems": [{"code": code, "message": message} for code, message in cell.problems],
        "section": section(
            cell.pitch.to("um").magnitude, cell.wall.to("um").magnitude, cell.depth.to("um").magnitude, cell.shape
        ),
        "steps": working(cell.steps, system, PLAIN),
    }


def page():
    form = form_values(DEFAULTS)
    context = {
        "form": form,
        "errors": {},
        "cell": None,
        "snippet_kind": "cell",
        "angle_choices": ANGLE_CHOICES,
        "shape_choices": SHAPE_CHOICES,
        "field_names": FORM_FIELDS,
    }
    try:
        body = form_body(form)
        context.update(snippet_inputs=body, cell=present(run(body), current_system(), form["given"]))
    except InputError as exc:
        context["errors"] = field_errors(exc)
    return respond("calculators/cell.html", "calculators/_cell_result.html", **context)


CELL = Calculator(
    kind="cell",
    title="Cell geometry",
    compute=compute,
    path="/cell",
    view=page,
    nav="Cell",
    shares=SHARES,
    main_input="screen",
    required=REQUIRED,
    optional=OPTIONAL,
    answer=Answer(
        {
            "pitch": "quantity",
            "opening": "quantity",
            "open_area": "number",
            "volume": "quantity",
            "depth": "quantity",
            "depth_to_opening": "number",
            "problems": [Answer({"code": "text", "message": "text"})],
        }
    ),
)
