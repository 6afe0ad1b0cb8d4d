"""Fit check: does this anilox roll suit this plate and this kind of work?

Two rules of the trade decide it (both common practice, kept in
``calc.practice``): the anilox screen must be fine enough against the plate's
screen ruling that its cells stay small next to the smallest halftone dot, and
the cell volume must suit the kind of work. A third, the usual product of
volume and screen, is advice only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from calc.cell import Problem, open_area, parse_anilox_screen, parse_line_screen, pitch_um
from calc.errors import InputError
from calc.film import parse_anilox_volume
from calc.practice import (
    SMALLEST_DOT,
    TYPICAL_WALL,
    VOLUME_SCREEN_BAND,
    VOLUME_SCREEN_FAR,
    WORK_KINDS,
    WORK_NAMES,
    WORK_PRACTICE,
    Range,
)
from calc.steps import Step, Working
from calc.units import LENGTH, Q_, check_fraction, check_number, check_range, parse_quantity, require_dimension

# Halftone rulings on flexo plates run from about 65 to 200 lpi (common
# practice); 20–300 lpi bounds them and catches unit slips.
PLATE_SCREEN_LOW = Q_(20.0, "lpi")
PLATE_SCREEN_HIGH = Q_(300.0, "lpi")
SCREEN_RATIO_HIGH = 20.0

# A value within this share of a range's edge counts as on the edge, so a
# value rounded in the other unit (1.55 cm³/m² for 1 BCM/in², 295 lpcm for
# 750 lpi) is not flagged for a difference nobody could measure.
EDGE_TOLERANCE = 0.005

# Codes of problems that make a roll unfit; the volume-screen advice never does.
UNFIT_CODES = frozenset({"screen_too_coarse", "volume_too_high", "volume_too_low"})
ADVISORY_CODES = frozenset({"volume_screen_mismatch"})

_KIND_HINTS = {
    "process": "halftones",
    "line": "line work and type",
    "solid": "spot solids",
    "white": "opaque white",
    "coating": "varnish, coating, adhesive",
}

# What too much and too little ink do, in the words of each kind of work.
_TOO_MUCH = {
    "process": "dot gain, filling in and slow drying",
    "line": "thickened type and lines (dot gain), filling in and slow drying",
    "solid": "squeeze-out at the edges, filling in of fine detail and slow drying",
    "white": "squeeze-out at the edges, filling in of fine detail, slow drying and blocking",
    "coating": "slow drying or curing, blocking and wasted coating",
}
_TOO_LITTLE = {
    "process": "weak colour, pinholes and mottle",
    "line": "weak colour, pinholes and mottle",
    "solid": "weak colour, pinholes and mottle",
    "white": "weak opacity, pinholes and mottle",
    "coating": "a thin, patchy coat with pinholes and mottle",
}


@dataclass(frozen=True)
class FitCheck:
    """The answer of a fit check.

    Settings: ``screen_ratio_min`` (None where no ratio applies),
    ``screen_range`` [lpi] (``high`` is None: there is no upper limit from the
    plate), ``volume_range`` [BCM/in²]. With a roll: ``ratio`` (None without a
    plate screen), ``volume_screen`` (BCM/in² × lpi), ``fits`` and ``problems``
    as ``(code, message)`` pairs; without a roll these are None and ``()``.
    Geometry for a drawing: ``smallest_dot_diameter`` [µm] of a
    ``smallest_dot`` share at the plate ruling, and the roll's ``anilox_pitch``
    and ``anilox_opening`` [µm] with the ``anilox_wall`` assumed.
    """

    work: str
    plate_screen: object
    screen_ratio_min: float | None
    screen_range: Range
    volume_range: Range
    volume_screen_band: Range
    anilox_screen: object = None
    anilox_volume: object = None
    ratio: float | None = None
    volume_screen: float | None = None
    fits: bool | None = None
    problems: tuple[Problem, ...] = ()
    smallest_dot: float = SMALLEST_DOT
    smallest_dot_diameter: object = None
    anilox_wall: object = None
    anilox_pitch: object = None
    anilox_opening: object = None
    anilox_open_area: float | None = None
    steps: tuple[Step, ...] = field(default=(), repr=False)


def parse_work(work, field: str | None = "work") -> str:
    """Read the kind of work: process, line, solid, white or coating."""
    name = work.strip().lower() if isinstance(work, str) else None
    if name not in WORK_KINDS:
        kinds = ", ".join(f"{kind} ({_KIND_HINTS[kind]})" for kind in WORK_KINDS)
        raise InputError(field, f"must be one of: {kinds}")
    return name


def parse_plate_screen(text, field: str | None = "plate_screen"):
    """Read and check a plate's halftone screen ruling (20–300 lpi)."""
    return parse_line_screen(text, field, PLATE_SCREEN_LOW, PLATE_SCREEN_HIGH, "a plate screen ruling")


def smallest_dot_diameter(plate_screen, share: float = SMALLEST_DOT):
    """Diameter of a round halftone dot covering ``share`` of its halftone cell.

    d = (2 / L) · √(a / π)

    The halftone cell at ruling L is a square of side 1/L; a round dot of
    diameter d covers π d²/4 of it, which is a/L² for a share a.

    Parameters
    ----------
    plate_screen : Quantity or str
        The plate's screen ruling L [lpi, lpcm].
    share : float
        The dot's share of its halftone cell, a [0..1]; default 2 %.

    Returns
    -------
    Quantity [µm]

    References
    ----------
    Derivation in REFERENCES.md ("Geometry used by the fit check"), which gives
    ≈ 27 µm for a 2 % dot at 150 lpi.

    >>> smallest_dot_diameter("150 lpi")  # doctest: +NUMBER
    <Quantity(27.0, 'micrometer')>
    """
    screen = parse_plate_screen(plate_screen)
    a = check_fraction(share, "smallest_dot")
    return Q_(_dot_um(screen.to("lpi").magnitude, a), "um")


def _dot_um(plate_lpi: float, share: float) -> float:
    return (2.0 * 25_400.0 / plate_lpi) * math.sqrt(share / math.pi)


def _volume_range(override):
    if override is None:
        return None
    if not isinstance(override, tuple | list) or len(override) != 2:
        raise InputError("volume_range", "must be a low and a high volume, e.g. ('1 BCM/in2', '2.5 BCM/in2')")
    low = parse_anilox_volume(override[0], "volume_range.low")
    high = parse_anilox_volume(override[1], "volume_range.high")
    if low.to("BCM/in2").magnitude > high.to("BCM/in2").magnitude:
        raise InputError("volume_range.high", "must not be less than the low volume")
    return Range(low.to("BCM/in2"), high.to("BCM/in2"))


def _band(override):
    if override is None:
        return VOLUME_SCREEN_BAND
    if not isinstance(override, tuple | list) or len(override) != 2:
        raise InputError("volume_screen_band", "must be a low and a high number, e.g. (1500, 2000)")
    low = check_number(override[0], "volume_screen_band.low")
    high = check_number(override[1], "volume_screen_band.high")
    if not 0 < low <= high:
        raise InputError("volume_screen_band.high", "must be more than 0 and not less than the low number")
    return Range(low, high)


# Messages answer in the units the user typed: cm³/m² per BCM/in².
_CM3M2_PER_BCM = Q_(1.0, "BCM/in2").to("cm3/m2").magnitude


def _volume_text(bcm: float, metric: bool) -> str:
    if metric:
        return f"{bcm * _CM3M2_PER_BCM:.3g} cm³/m²"
    return f"{bcm:.3g} BCM/in²"


def _range_text(low: float, high: float, metric: bool) -> str:
    if metric:
        return f"{low * _CM3M2_PER_BCM:.3g}–{high * _CM3M2_PER_BCM:.3g} cm³/m²"
    return f"{low:.3g}–{high:.3g} BCM/in²"


def _screen_text(lpi: float, metric: bool) -> str:
    return f"{lpi / 2.54:.0f} l/cm" if metric else f"{lpi:.0f} lpi"


def _is_metric(quantity) -> bool:
    """Whether the user typed this in metric units, so messages answer in kind."""
    units = str(quantity.units)
    return any(word in units for word in ("meter", "lpcm", "liter"))


def fit_check(
    work,
    plate_screen=None,
    anilox_screen=None,
    anilox_volume=None,
    *,
    screen_ratio_min: float | None = None,
    volume_range=None,
    volume_screen_band=None,
    volume_screen_far: float = VOLUME_SCREEN_FAR,
    smallest_dot: float = SMALLEST_DOT,
    anilox_wall=None,
) -> FitCheck:
    """Whether an anilox roll suits a plate and a kind of work, and what would.

    r = S / L                      screen ratio, anilox screen S over plate screen L
    S_min = L × r_min              the coarsest anilox screen that still fits
    V_low ≤ V ≤ V_high             the usual volume for the kind of work
    V × S                          [BCM/in² × lpi], usually 1 500–2 000 (advice only)
    d = (2 / L) · √(a / π)         diameter of the smallest dot (share a)
    p = 1 / S,  o = p − w          anilox cell pitch and opening, for comparison

    Parameters
    ----------
    work : str
        ``process`` (halftones), ``line`` (line work and type), ``solid``
        (spot solids), ``white`` (opaque white) or ``coating`` (varnish,
        coating, adhesive).
    plate_screen : Quantity or str, optional
        The plate's halftone screen ruling [lpi, lpcm], 20–300 lpi; needed for
        process work.
    anilox_screen : Quantity or str, optional
        The roll's line screen [lpi, lpcm]; give it with ``anilox_volume``.
    anilox_volume : Quantity or str, optional
        The roll's cell volume [BCM/in², cm³/m²], preferably as measured.
    screen_ratio_min : float, optional
        Override of the least screen ratio (common practice: 5 for process, 4
        for line; none for solids, white and coatings).
    volume_range : (low, high), optional
        Override of the usual volume range [BCM/in², cm³/m²].
    volume_screen_band : (low, high), optional
        Override of the usual V × S band (common practice 1 500–2 000).
    volume_screen_far : float
        How many times outside the band V × S must be to be called far off (1.5).
    smallest_dot : float
        Share of the smallest halftone dot [0..1] (2 %).
    anilox_wall : Quantity or str, optional
        The roll's wall width [µm] for the cell opening; common practice ≈ 3 µm.

    Returns
    -------
    FitCheck with screens in lpi, volumes in BCM/in², lengths in µm.

    Notes
    -----
    ``fits`` is False when the screen is too coarse or the volume outside the
    range for the work; the volume-screen advice (``volume_screen_mismatch``)
    never decides it. Values within 0.5 % of a range's edge count as on it.
    Every setting is common practice, not a published limit: the shop's own
    trials beat them.

    References
    ----------
    Screen ratio "at least about 4:1, commonly 5–6:1" and volumes per kind of
    work: common practice as recorded in REFERENCES.md ("Anilox rolls"), the
    Flexographic Technical Association's FIRST publishes similar guidance.
    Smallest-dot geometry: derivation in REFERENCES.md.

    >>> check = fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2")
    >>> check.fits, check.ratio  # doctest: +NUMBER
    (True, 6.67)
    >>> check.screen_range.low  # doctest: +NUMBER
    <Quantity(750.0, 'lpi')>
    >>> [code for code, _ in fit_check("process", "150 lpi", "600 lpi", "4 BCM/in2").problems]
    ['screen_too_coarse', 'volume_too_high']
    """
    kind = parse_work(work)
    practice = WORK_PRACTICE[kind]
    plate = None if plate_screen is None else parse_plate_screen(plate_screen)
    if plate is None and kind == "process":
        raise InputError("plate_screen", "process (halftone) work needs the plate's screen ruling, e.g. '150 lpi'")
    if (anilox_screen is None) != (anilox_volume is None):
        missing = "anilox_volume" if anilox_volume is None else "anilox_screen"
        raise InputError(missing, "give both the roll's line screen and its volume to check the roll")
    screen = None if anilox_screen is None else parse_anilox_screen(anilox_screen)
    volume = None if anilox_volume is None else parse_anilox_volume(anilox_volume)
    if screen_ratio_min is not None:
        ratio_min = check_number(screen_ratio_min, "screen_ratio_min")
        if not 1.0 <= ratio_min <= SCREEN_RATIO_HIGH:
            raise InputError("screen_ratio_min", f"must be from 1 to {SCREEN_RATIO_HIGH:g}")
    else:
        ratio_min = practice.screen_ratio_min
    vol_range = _volume_range(volume_range) or practice.volume
    band = _band(volume_screen_band)
    far = check_number(volume_screen_far, "volume_screen_far")
    if far < 1.0 or far > 10.0:
        raise InputError("volume_screen_far", "must be from 1 to 10")
    dot_share = check_fraction(smallest_dot, "smallest_dot")
    wall = TYPICAL_WALL if anilox_wall is None else parse_quantity(anilox_wall, "anilox_wall")
    require_dimension(wall, LENGTH, "anilox_wall", "a length", "3 um")
    check_range(wall, Q_(0.0, "um"), Q_(1000.0, "um"), "anilox_wall", "the wall width")

    work_name = WORK_NAMES[kind]
    metric_volume = volume is not None and _is_metric(volume)
    metric_screen = (screen is not None and _is_metric(screen)) or (
        screen is None and plate is not None and _is_metric(plate)
    )
    v_low = vol_range.low.to("BCM/in2").magnitude
    v_high = vol_range.high.to("BCM/in2").magnitude

    work_steps = Working()
    plate_lpi = None if plate is None else plate.to("lpi").magnitude
    dot = None
    low_q = None
    if plate is not None:
        plate_q = Q_(plate_lpi, "lpi")
        dot = work_steps.add(
            f"Diameter of the smallest ({dot_share:.0%}) dot",
            "d",
            "d = (2 / L) × √(a / π)",
            {"L": plate_q, "a": dot_share},
            Q_(_dot_um(plate_lpi, dot_share), "um"),
        )
        if ratio_min is not None:
            low_q = work_steps.add(
                "Coarsest anilox screen that fits",
                "S_min",
                "S_min = L × r_min",
                {"L": plate_q, "r_min": ratio_min},
                Q_(plate_lpi * ratio_min, "lpi"),
            )

    result = {
        "work": kind,
        "plate_screen": None if plate is None else Q_(plate_lpi, "lpi"),
        "screen_ratio_min": ratio_min,
        "screen_range": Range(low_q, None),
        "volume_range": Range(Q_(v_low, "BCM/in2"), Q_(v_high, "BCM/in2")),
        "volume_screen_band": band,
        "smallest_dot": dot_share,
        "smallest_dot_diameter": dot,
    }
    if screen is None:
        return FitCheck(**result, steps=tuple(work_steps.steps))

    s_lpi = screen.to("lpi").magnitude
    v_bcm = volume.to("BCM/in2").magnitude
    w_um = wall.to("um").magnitude
    p_um = pitch_um(s_lpi)
    if w_um >= p_um:
        raise InputError("anilox_wall", f"is as wide as the cell pitch ({p_um:.3g} µm) or wider")
    s_q = Q_(s_lpi, "lpi")
    v_q = Q_(v_bcm, "BCM/in2")
    pitch = work_steps.add("Anilox cell pitch", "p", "p = 1 / S", {"S": s_q}, Q_(p_um, "um"))
    opening = work_steps.add(
        "Anilox cell opening (wall assumed)", "o", "o = p − w", {"p": pitch, "w": Q_(w_um, "um")}, Q_(p_um - w_um, "um")
    )

    problems = []
    ratio = None
    if plate is not None:
        ratio = work_steps.add(
            "Screen ratio", "r", "r = S / L", {"S": s_q, "L": Q_(plate_lpi, "lpi")}, s_lpi / plate_lpi
        )
        if ratio_min is not None and ratio < ratio_min * (1 - EDGE_TOLERANCE):
            problems.append(
                Problem(
                    "screen_too_coarse",
                    f"The roll's screen ({_screen_text(s_lpi, metric_screen)}) is only {ratio:.1f} times the "
                    f"plate's ({_screen_text(plate_lpi, metric_screen)}); {work_name} wants at least "
                    f"{ratio_min:g} times, {_screen_text(plate_lpi * ratio_min, metric_screen)} or finer. "
                    "Its cells are large against the smallest dots, so dots dip into the cells: "
                    "dirty print and dot gain.",
                )
            )
    if v_bcm > v_high * (1 + EDGE_TOLERANCE):
        problems.append(
            Problem(
                "volume_too_high",
                f"{_volume_text(v_bcm, metric_volume)} is more than the "
                f"{_range_text(v_low, v_high, metric_volume)} usual for {work_name}: too much ink gives "
                f"{_TOO_MUCH[kind]}.",
            )
        )
    elif v_bcm < v_low * (1 - EDGE_TOLERANCE):
        problems.append(
            Problem(
                "volume_too_low",
                f"{_volume_text(v_bcm, metric_volume)} is less than the "
                f"{_range_text(v_low, v_high, metric_volume)} usual for {work_name}: too little ink gives "
                f"{_TOO_LITTLE[kind]}.",
            )
        )
    product = work_steps.add("Volume × screen", "V × S", "V × S", {"V": v_q, "S": s_q}, v_bcm * s_lpi)
    if product < band.low / far * (1 - EDGE_TOLERANCE) or product > band.high * far * (1 + EDGE_TOLERANCE):
        problems.append(
            Problem(
                "volume_screen_mismatch",
                f"{_volume_text(v_bcm, metric_volume)} at {_screen_text(s_lpi, metric_screen)} is unusual: "
                f"volume × screen is {product:,.0f} (BCM/in² × lpi), where usual cells give about "
                f"{band.low:,.0f}–{band.high:,.0f}. Check the roll's certificate or measure it; it may be a "
                "special engraving. This alone does not rule the roll out.",
            )
        )
    fits = not any(problem.code in UNFIT_CODES for problem in problems)
    return FitCheck(
        **result,
        anilox_screen=s_q,
        anilox_volume=v_q,
        ratio=ratio,
        volume_screen=product,
        fits=fits,
        problems=tuple(problems),
        anilox_wall=Q_(w_um, "um"),
        anilox_pitch=pitch,
        anilox_opening=opening,
        anilox_open_area=open_area(p_um - w_um, p_um),
        steps=tuple(work_steps.steps),
    )
