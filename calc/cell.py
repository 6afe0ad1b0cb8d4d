"""Anilox cell geometry: from the engraving to the volume per area, and back.

A model, not a measurement: it turns line screen, wall width and depth into
an estimate of the volume per area (or the depth a stated volume implies).
A measured volume (liquid spread or optical) always beats this estimate.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import NamedTuple

import pint

from calc.errors import InputError
from calc.film import parse_anilox_volume
from calc.practice import DEPTH_TO_OPENING, Range
from calc.steps import Step, Working
from calc.units import (
    LENGTH,
    LINE_SCREEN,
    Q_,
    check_number,
    check_range,
    parse_quantity,
    require_dimension,
)

# Line screens of anilox rolls run from about 150 to 1 500 lpi, coarse coating
# and channel engravings lower (common practice); 10–2 500 lpi bounds every
# real roll and catches unit slips.
ANILOX_SCREEN_LOW = Q_(10.0, "lpi")
ANILOX_SCREEN_HIGH = Q_(2500.0, "lpi")
# Cell walls are a few µm, cells tens to a few hundred µm deep; 1 mm bounds both.
WALL_HIGH = Q_(1000.0, "um")
DEPTH_HIGH = Q_(1000.0, "um")

# The cell layouts by engraving angle. 60° and 30° are the same hexagonal
# lattice of hexagonal cells, turned by 30° against the roll's axis; 45° is a
# square lattice of square (diamond) cells.
CELL_LAYOUTS = {60: "hexagonal", 45: "square", 30: "hexagonal"}

# Cell volume over (opening area × depth), exact for each solid: a prism
# (flat bottom) fills it, a paraboloid bowl fills half (Archimedes), a cone
# or pyramid a third.
SHAPE_FACTORS = {"prism": 1.0, "bowl": 0.5, "cone": 1.0 / 3.0}

# The usual laser-engraved cell is bowl-shaped (common practice).
DEFAULT_SHAPE = "bowl"
DEFAULT_ANGLE = 60

# In a line-screen field "l/cm" can only mean lines per centimetre, never
# litres per centimetre, so it is read as such here (and "l/in" likewise).
_LINE_SPELLINGS = [
    (re.compile(r"\bl\s*/\s*cm\b"), "lpcm"),
    (re.compile(r"\bl\s*/\s*(?:in|inch)\b"), "lpi"),
]


class Problem(NamedTuple):
    """Something an operator should know, as a stable ``code`` and a plain-words ``message``."""

    code: str
    message: str


def parse_line_screen(text, field: str | None, low, high, what: str):
    """Read a line screen (lines per length: lpi, lpcm, l/cm) and check ``low <= screen <= high``."""
    if isinstance(text, str):
        for pattern, replacement in _LINE_SPELLINGS:
            text = pattern.sub(replacement, text)
    screen = parse_quantity(text, field)
    require_dimension(screen, LINE_SCREEN, field, "a line screen", "800 lpi or 315 lpcm")
    check_range(screen, low, high, field, what, low_inclusive=True)
    return screen


def parse_anilox_screen(text, field: str | None = "anilox_screen"):
    """Read and check an anilox line screen (10–2 500 lpi)."""
    return parse_line_screen(text, field, ANILOX_SCREEN_LOW, ANILOX_SCREEN_HIGH, "an anilox line screen")


def parse_cell_angle(angle, field: str | None = "angle") -> int:
    """Read an engraving angle: 60, 45 or 30 degrees (a number, a text such as ``"60°"``, or a pint angle)."""
    message = "must be 60 (hexagonal, the usual laser engraving), 45 or 30 degrees"
    if isinstance(angle, pint.Quantity):
        try:
            angle = angle.to("degree").magnitude
        except pint.DimensionalityError:
            raise InputError(field, message) from None
    elif isinstance(angle, str):
        match = re.fullmatch(r"\s*(\d+(?:\.\d*)?)\s*(?:°|deg|degrees?)?\s*", angle)
        if not match:
            raise InputError(field, message)
        angle = float(match.group(1))
    value = check_number(angle, field, allow_negative=True)
    for known in CELL_LAYOUTS:
        if abs(value - known) < 1e-9:
            return known
    raise InputError(field, message)


def parse_cell_shape(shape, field: str | None = "shape") -> str:
    """Read a cell shape: ``prism``, ``bowl`` or ``cone``."""
    name = shape.strip().lower() if isinstance(shape, str) else None
    if name not in SHAPE_FACTORS:
        raise InputError(field, "must be prism (flat-bottomed), bowl (the usual laser cell) or cone")
    return name


def _length(text, field, high, what, examples):
    value = parse_quantity(text, field)
    require_dimension(value, LENGTH, field, "a length", examples)
    check_range(value, Q_(0.0, high.units), high, field, what)
    return value


def pitch_um(screen_lpi: float) -> float:
    """Cell pitch [µm] at a line screen [lpi]: p = 25 400 µm / S."""
    return 25_400.0 / screen_lpi


def open_area(opening_um: float, pitch_um_: float) -> float:
    """Share of the roll surface that is cell opening: (o/p)²."""
    return (opening_um / pitch_um_) ** 2


@dataclass(frozen=True)
class CellGeometry:
    """An anilox cell lattice, worked out from its engraving.

    ``screen`` [lpi], ``wall``, ``pitch``, ``opening`` and ``depth`` [µm],
    ``volume`` [cm³/m²], ``open_area`` and ``depth_to_opening`` plain shares;
    ``problems`` says when the depth is outside the usual band for its opening.
    """

    screen: object
    wall: object
    angle: int
    layout: str
    shape: str
    shape_factor: float
    pitch: object
    opening: object
    open_area: float
    depth: object
    volume: object
    depth_to_opening: float
    depth_to_opening_usual: Range
    problems: tuple[Problem, ...] = ()
    steps: tuple[Step, ...] = field(default=(), repr=False)


def cell_geometry(
    screen,
    wall,
    angle=DEFAULT_ANGLE,
    shape: str = DEFAULT_SHAPE,
    depth=None,
    volume=None,
    depth_to_opening_usual: Range = DEPTH_TO_OPENING,
) -> CellGeometry:
    """Pitch, opening, open area, volume and depth of an anilox cell lattice.

    p = 1 / S                          cell pitch (centre to centre along the screen angle)
    o = p − w                          cell opening (across the flats of a hexagon, or a square's side)
    A_o = (o / p)²                     open area, the share of the surface that is cell opening
    V = A_o × h × k                    volume per area, for cell depth h and shape factor k
    h = V / (A_o × k)                  the reverse: the depth a stated volume implies
    r = h / o                          depth-to-opening ratio

    Give exactly one of ``depth`` and ``volume``; the other is worked out.

    Parameters
    ----------
    screen : Quantity or str
        Anilox line screen [lpi, lpcm], 10–2 500 lpi.
    wall : Quantity or str
        Width of the wall between neighbouring cells [µm], less than the pitch.
    angle : int or str
        Engraving angle [degree]: 60 (hexagonal cells, the usual laser engraving),
        30 (hexagonal, turned by 30°) or 45 (square cells). Default 60.
    shape : str
        Cell profile: ``prism`` (flat bottom, k = 1), ``bowl`` (paraboloid,
        k = ½, the usual laser cell, default) or ``cone`` (cone or pyramid, k = ⅓).
    depth : Quantity or str, optional
        Cell depth [µm].
    volume : Quantity or str, optional
        Stated cell volume per area [BCM/in², cm³/m²].
    depth_to_opening_usual : Range
        The usual band of h/o (common practice 0.23–0.33, ``calc.practice``).

    Returns
    -------
    CellGeometry: pitch, opening and depth [µm], volume [cm³/m²], open area and
    depth-to-opening as plain shares, and the steps of the working.

    Notes
    -----
    Each cell owns the region of the surface nearer its centre than any other:
    on the hexagonal lattice (60°, 30°) a regular hexagon p across the flats,
    on the square lattice (45°) a square of side p. The opening is the same
    shape, concentric and scaled by o/p, because the wall of width w lies
    half on each side of the boundary between two cells. Areas of similar
    figures go as the square of their size, so the open area is (o/p)² for
    either layout: the layout's own constant (√3/2 for the hexagon, 1 for the
    square) appears in both the opening and the region and cancels.

    This is an estimate. Real cells have rounded walls, sloping sides and
    profiles between the ideal shapes, so a volume measured on the roll
    beats this geometry every time; the engraver's certificate and the
    shop's own measurements are the numbers to run by.

    References
    ----------
    Geometry model as described in REFERENCES.md ("Anilox rolls": p = 25 400 µm
    / lpi, volume ≈ (opening/pitch)² × depth × shape factor; a derivation, not a
    published oracle). Paraboloid = ½ of its cylinder: Archimedes, *On Conoids
    and Spheroids*. Depth-to-opening band: common practice (``calc.practice``).

    >>> cell = cell_geometry("800 lpi", "3 um", depth="12 um")
    >>> cell.pitch, cell.opening  # doctest: +NUMBER
    (<Quantity(31.75, 'micrometer')>, <Quantity(28.75, 'micrometer')>)
    >>> round(cell.open_area, 4)
    0.82
    >>> cell.volume  # doctest: +NUMBER
    <Quantity(4.919, 'centimeter ** 3 / meter ** 2')>
    >>> cell_geometry("800 lpi", "3 um", volume="3.174 BCM/in2").depth  # doctest: +NUMBER
    <Quantity(12.00, 'micrometer')>
    """
    s = parse_anilox_screen(screen, "screen")
    w = _length(wall, "wall", WALL_HIGH, "the wall width", "3 um or 0.12 mil")
    angle_deg = parse_cell_angle(angle, "angle")
    shape_name = parse_cell_shape(shape, "shape")
    if depth is None and volume is None:
        raise InputError("depth", "give the cell depth, or the volume instead, to work out the other")
    if depth is not None and volume is not None:
        raise InputError("volume", "give either the depth or the volume, not both: one follows from the other")
    h_q = None if depth is None else _length(depth, "depth", DEPTH_HIGH, "the cell depth", "10 um or 0.4 mil")
    v_q = None if volume is None else parse_anilox_volume(volume, "volume")

    s_lpi = s.to("lpi").magnitude
    w_um = w.to("um").magnitude
    p_um = pitch_um(s_lpi)
    if w_um >= p_um:
        raise InputError(
            "wall",
            f"is as wide as the cell pitch ({p_um:.4g} µm at {s_lpi:.4g} lpi) or wider, which leaves no "
            "opening; walls are a few µm",
        )
    o_um = p_um - w_um
    a_o = open_area(o_um, p_um)
    k = SHAPE_FACTORS[shape_name]

    work = Working()
    pitch = work.add("Cell pitch", "p", "p = 1 / S", {"S": s}, Q_(p_um, "um"))
    opening = work.add("Cell opening", "o", "o = p − w", {"p": pitch, "w": w}, Q_(o_um, "um"))
    work.add("Open area (share of the surface)", "A_o", "A_o = (o / p)²", {"o": opening, "p": pitch}, a_o)
    if h_q is not None:
        h_um = h_q.to("um").magnitude
        v_um = a_o * h_um * k
        depth_q = Q_(h_um, "um")
        volume_q = work.add(
            "Volume per area (an estimate)",
            "V",
            "V = A_o × h × k",
            {"A_o": a_o, "h": depth_q, "k": k},
            Q_(v_um, "cm3/m2"),  # µm of film over the surface is cm³/m², exactly
        )
    else:
        v_um = v_q.to("cm3/m2").magnitude
        h_um = v_um / (a_o * k)
        volume_q = Q_(v_um, "cm3/m2")
        depth_q = work.add(
            "Depth implied by the volume (an estimate)",
            "h",
            "h = V / (A_o × k)",
            {"V": v_q, "A_o": a_o, "k": k},
            Q_(h_um, "um"),
        )
    ratio = work.add("Depth to opening", "r", "r = h / o", {"h": depth_q, "o": opening}, h_um / o_um)

    problems = []
    low, high = depth_to_opening_usual
    if ratio > high:
        problems.append(
            Problem(
                "cell_too_deep",
                f"The cell is {ratio:.0%} as deep as it is wide, more than the usual {high:.0%}: "
                "deep, narrow cells release ink poorly and plug with dried ink.",
            )
        )
    elif ratio < low:
        problems.append(
            Problem(
                "cell_too_shallow",
                f"The cell is only {ratio:.0%} as deep as it is wide, less than the usual {low:.0%}: "
                "check the depth or volume; such shallow cells are unusual for this screen.",
            )
        )

    return CellGeometry(
        screen=Q_(s_lpi, "lpi"),
        wall=Q_(w_um, "um"),
        angle=angle_deg,
        layout=CELL_LAYOUTS[angle_deg],
        shape=shape_name,
        shape_factor=k,
        pitch=pitch,
        opening=opening,
        open_area=a_o,
        depth=depth_q,
        volume=volume_q,
        depth_to_opening=ratio,
        depth_to_opening_usual=Range(low, high),
        problems=tuple(problems),
        steps=tuple(work.steps),
    )
