"""Every useful equivalent of one quantity, grouped by what it means.

An operator types one value (``4.5 BCM/in2``, ``0.6 mil``, ``800 lpi``) and
wants every way the pressroom states it at once: a volume per area is also a
film thickness; with the ink's density a film is also a coat weight and an ink
mileage; a printed area at a coverage is an inked area.

>>> [g.key for g in equivalents("4.5 BCM/in2").groups]
['volume_per_area', 'film_thickness']
>>> equivalents("0.6 mil").group("film_thickness").values[0]  # doctest: +NUMBER
<Quantity(15.24, 'micrometer')>
"""

from __future__ import annotations

from dataclasses import dataclass, field

from calc.display import show, unit_label
from calc.errors import InputError
from calc.steps import Step, Working
from calc.units import (
    AREA,
    COAT_WEIGHT,
    DENSITY,
    LENGTH,
    LINE_SCREEN,
    MASS,
    MILEAGE,
    Q_,
    VOLUME,
    check_fraction,
    dimension_name,
    parse_density,
    parse_quantity,
)

# Unit spellings per group, in the order they are listed. Spellings are those
# the API answers with (``mil`` is the trade's thousandth of an inch).
VOLUME_PER_AREA_UNITS = ("BCM/in2", "cm3/m2")
FILM_UNITS = ("um", "mil")
THICKNESS_OTHER_UNITS = ("mm", "in")
COAT_WEIGHT_UNITS = ("g/m2", "lb/ream")
MILEAGE_UNITS = ("m2/kg", "ft2/lb", "MSI/lb")
LINE_SCREEN_UNITS = ("lpi", "lpcm")
CELL_PITCH_UNITS = ("um",)
AREA_UNITS = ("m2", "ft2", "MSI", "in2")
VOLUME_UNITS = ("l", "ml", "gal", "in3")
MASS_UNITS = ("kg", "g", "lb", "oz")
DENSITY_UNITS = ("g/cm3", "kg/l", "lb/gal")

# The other system's unit for each unit an operator types: what the quick
# converters lead with (cm³/m² typed asks for BCM/in², mil for µm, lpi for lines/cm).
COUNTERPARTS = {
    "BCM/in2": "cm3/m2",
    "cm3/m2": "BCM/in2",
    "um": "mil",
    "mil": "um",
    "mm": "in",
    "in": "mm",
    "lpi": "lpcm",
    "lpcm": "lpi",
    "g/m2": "lb/ream",
    "lb/ream": "g/m2",
    "m2/kg": "ft2/lb",
    "ft2/lb": "m2/kg",
    "MSI/lb": "m2/kg",
    "m2": "ft2",
    "ft2": "m2",
    "MSI": "m2",
    "in2": "m2",
    "l": "gal",
    "ml": "gal",
    "gal": "l",
    "in3": "ml",
    "kg": "lb",
    "g": "oz",
    "lb": "kg",
    "oz": "g",
    "g/cm3": "lb/gal",
    "kg/l": "lb/gal",
    "lb/gal": "g/cm3",
}

# What the film of a volume per area is: the cells' whole content spread flat.
EMPTIED_NOTE = "if the cells emptied completely"

# Symbols for the working, by kind of value (a volume per area is ``V`` like a volume).
SYMBOLS = {
    "volume_per_area": "V",
    "film": "t",
    "line_screen": "S",
    "coat_weight": "w",
    "mileage": "M",
    "area": "A",
    "volume": "V",
    "mass": "m",
    "density": "ρ",
}

TITLES = {
    "volume_per_area": "Volume per area",
    "film_thickness": "Film thickness",
    "thickness_other": "Thickness in mm and inches",
    "coat_weight": "Coat weight",
    "mileage": "Ink mileage",
    "line_screen": "Line screen",
    "cell_pitch": "Cell pitch (centre to centre)",
    "area": "Area",
    "inked_area": "Inked area",
    "volume": "Volume",
    "mass": "Mass",
    "density": "Density",
}

# What kind of value an input is, by its dimension, in plain words.
KINDS = {
    "film": "a volume per area or a film thickness",
    "line_screen": "a line screen",
    "coat_weight": "a coat weight",
    "mileage": "an ink mileage",
    "area": "an area",
    "volume": "a volume",
    "mass": "a mass",
    "density": "a density",
}


@dataclass(frozen=True)
class Group:
    """One meaning of the value (``key``), stated in several units."""

    key: str
    title: str
    values: tuple  # Quantities, one per unit in ``units``
    units: tuple  # the unit spellings, as the API spells them
    note: str | None = None


@dataclass
class Equivalents:
    """The value as typed, what kind it is, and its equivalents by group."""

    quantity: object
    kind: str
    groups: list[Group]
    steps: list[Step] = field(default_factory=list)

    def group(self, key: str) -> Group:
        for group in self.groups:
            if group.key == key:
                return group
        raise KeyError(key)


def _group(key: str, quantity, units, note: str | None = None) -> Group:
    return Group(key, TITLES[key], tuple(quantity.to(unit) for unit in units), tuple(units), note)


def _kind(quantity) -> str:
    kinds = {
        LENGTH: "film",
        LINE_SCREEN: "line_screen",
        COAT_WEIGHT: "coat_weight",
        MILEAGE: "mileage",
        AREA: "area",
        VOLUME: "volume",
        MASS: "mass",
        DENSITY: "density",
    }
    try:
        return kinds[quantity.dimensionality]
    except KeyError:
        raise InputError(
            "quantity",
            f"inkfilm has no equivalents for {dimension_name(quantity.dimensionality)}; try a value in "
            "BCM/in2, um, mil, lpi, g/m2, m2/kg, m2, l, kg or g/cm3",
        ) from None


def _is_volume_per_area(quantity) -> bool:
    return any(quantity.units == Q_(1.0, unit).units for unit in VOLUME_PER_AREA_UNITS)


def typed_spelling(quantity) -> str | None:
    """The API spelling of the unit ``quantity`` was typed in, if it is one the converters list.

    >>> typed_spelling(Q_(0.6, "mil")), typed_spelling(Q_(7, "cm³/m²")), typed_spelling(Q_(1, "furlong"))
    ('mil', 'cm3/m2', None)
    """
    for spelling in COUNTERPARTS:
        if quantity.units == Q_(1.0, spelling).units:
            return spelling
    return None


def factor_text(factor: float, significant: int = 8) -> str:
    """A conversion factor to ``significant`` figures, its decimals in groups of three.

    The groups are parted by a narrow no-break space (as the SI Brochure
    parts digits), so that the factor never breaks across lines.

    >>> factor_text(1 / 0.64516).replace("\u202f", " ")
    '1.550 003 1'
    >>> factor_text(25.4), factor_text(1000.0)
    ('25.4', '1,000')
    """
    text = f"{factor:.{significant}g}"
    if "e" in text:
        return text
    whole, _, fraction = text.partition(".")
    fraction = fraction.rstrip("0")
    grouped = "\u202f".join(fraction[index : index + 3] for index in range(0, len(fraction), 3))
    return f"{int(whole):,}" + (f".{grouped}" if grouped else "")


def conversion_step(quantity, from_spelling: str, to_spelling: str, symbol: str = "x") -> Step:
    """The working for stating ``quantity`` (typed in ``from_spelling``) in ``to_spelling``.

    The factor is written to eight significant figures, multiplied when it is
    one or more and divided by its reciprocal otherwise (``÷ 1.550 003 1``
    rather than ``× 0.645 16``, so that the step reads as the other side of
    the same statement); the result itself is worked out exactly by pint.

    >>> step = conversion_step(Q_(7, "cm3/m2"), "cm3/m2", "BCM/in2", "V")
    >>> step.formula.replace("\u202f", " ")
    'V in BCM/in² = V in cm³/m² ÷ 1.550 003 1  (1 BCM/in² = 1.550 003 1 cm³/m², as 1 in = 25.4 mm exactly)'
    >>> str(step.result)
    '4.52 BCM/in²'

    References
    ----------
    NIST Special Publication 811 (2008), Appendix B: 1 in = 25.4 mm exactly,
    1 lb = 0.453 592 37 kg exactly; NIST Handbook 44, Appendix C: 1 US gal = 231 in³.
    """
    factor = float(Q_(1.0, from_spelling).to(to_spelling).magnitude)
    source, target = unit_label(from_spelling), unit_label(to_spelling)
    if factor >= 1.0:
        operation, shown = "×", factor_text(factor)
        because = f"1 {source} = {shown} {target}"
    else:
        operation, shown = "÷", factor_text(1.0 / factor)
        because = f"1 {target} = {shown} {source}"
    inch = {"BCM/in2", "mil", "in", "lpi", "in2", "in3", "MSI", "MSI/lb", "ft2", "ft2/lb", "lb/ream", "gal"}
    if {from_spelling, to_spelling} & inch and not {from_spelling, to_spelling} <= inch:
        because += ", as 1 in = 25.4 mm exactly"
    return Step(
        f"In {target}",
        symbol,
        f"{symbol} in {target} = {symbol} in {source} {operation} {shown}  ({because})",
        ((symbol, show(quantity, from_spelling)),),
        show(quantity, to_spelling),
    )


def equivalents(quantity, density=None, coverage: float | None = None) -> Equivalents:
    """Every useful equivalent of ``quantity``, grouped by what it means.

    Relations used (each exact, given the inputs):

    t = V                  a volume per area is a film thickness (1 cm³/m² = 1 µm)
    w = t × ρ              coat weight of a film of thickness t and density ρ
    M = 1 / w              ink mileage: area covered per mass of ink
    p = 1 / S              cell pitch from the line screen S
    A_ink = A × c          inked area at coverage c
    m = V × ρ              mass of a volume of ink

    Parameters
    ----------
    quantity : Quantity or str
        The value, e.g. ``"4.5 BCM/in2"`` [any unit of a kind listed in ``KINDS``].
    density : Quantity or str, optional
        The ink's density [g/cm³]; adds coat weight and mileage to a film,
        film to a coat weight or mileage, and mass to a volume (or back).
    coverage : float, optional
        Share of a printed area that is inked [0..1]; adds the inked area to an area.

    Returns
    -------
    Equivalents, each group's values in the units listed for it. Inputs that
    do not apply to the kind of value (a density with a line screen) are ignored.

    Notes
    -----
    Unit definitions are exact (NIST SP 811: inch = 25.4 mm, pound =
    0.453 592 37 kg); the ream is 3000 ft², the converting trade's coat-weight
    ream. A film's mileage assumes the film covers the whole area (100 %
    coverage).

    References
    ----------
    NIST Special Publication 811 (2008), Appendix B; see docs/references.md.
    NIST Handbook 44, Appendix C: US gallon = 231 in³ exactly.
    Basis-weight ream of the paper and converting trade: 3000 ft².
    """
    quantity = parse_quantity(quantity, "quantity")
    kind = _kind(quantity)
    if quantity.magnitude <= 0:
        raise InputError("quantity", "must be more than 0")
    rho = None if density is None else parse_density(density, "density")
    share = None if coverage is None else check_fraction(coverage, "coverage")

    work = Working()
    groups: list[Group] = []
    spelling = typed_spelling(quantity)
    if spelling is not None:  # first the step the user asked about: the other system's unit
        symbol = SYMBOLS["volume_per_area" if _is_volume_per_area(quantity) else kind]
        work.steps.append(conversion_step(quantity, spelling, COUNTERPARTS[spelling], symbol))
    if kind == "film":
        film = quantity.to("um")
        anilox = _is_volume_per_area(quantity)
        groups.append(_group("volume_per_area", quantity, VOLUME_PER_AREA_UNITS))
        groups.append(_group("film_thickness", quantity, FILM_UNITS, EMPTIED_NOTE if anilox else None))
        if not anilox:  # mm and inches suit a typed thickness, not an anilox
            groups.append(_group("thickness_other", quantity, THICKNESS_OTHER_UNITS))
        label = "Film thickness, " + EMPTIED_NOTE if anilox else "Film thickness"
        work.add(label, "t", "t = V  (1 cm³/m² spreads to 1 µm)", {"V": quantity}, film)
        if rho is not None:
            weight = Q_(film.magnitude * rho.to("g/cm3").magnitude, "g/m2")
            work.add("Coat weight of this film", "w", "w = t × ρ", {"t": film, "ρ": rho}, weight)
            mileage = Q_(1.0 / weight.magnitude, "m2/g").to("m2/kg")
            work.add("Ink mileage at full coverage", "M", "M = 1 / w", {"w": weight}, mileage)
            groups.append(_group("coat_weight", weight, COAT_WEIGHT_UNITS, "wet, at the density given"))
            groups.append(_group("mileage", mileage, MILEAGE_UNITS, "at full coverage"))
    elif kind in ("coat_weight", "mileage"):
        if kind == "coat_weight":
            weight = quantity.to("g/m2")
            mileage = Q_(1.0 / weight.magnitude, "m2/g").to("m2/kg")
            work.add("Ink mileage at full coverage", "M", "M = 1 / w", {"w": quantity}, mileage)
        else:
            mileage = quantity.to("m2/kg")
            weight = Q_(1.0 / mileage.to("m2/g").magnitude, "g/m2")
            work.add("Coat weight", "w", "w = 1 / M", {"M": quantity}, weight)
        first, second = (weight, mileage) if kind == "coat_weight" else (mileage, weight)
        keys = ("coat_weight", "mileage") if kind == "coat_weight" else ("mileage", "coat_weight")
        units = {"coat_weight": COAT_WEIGHT_UNITS, "mileage": MILEAGE_UNITS}
        notes = {"coat_weight": None, "mileage": "at full coverage"}
        groups.append(_group(keys[0], first, units[keys[0]], notes[keys[0]]))
        groups.append(_group(keys[1], second, units[keys[1]], notes[keys[1]]))
        if rho is not None:
            film = Q_(weight.magnitude / rho.to("g/cm3").magnitude, "um")
            work.add("Film thickness", "t", "t = w / ρ", {"w": weight, "ρ": rho}, film)
            groups.append(_group("film_thickness", film, FILM_UNITS, "at the density given"))
            groups.append(_group("volume_per_area", film, VOLUME_PER_AREA_UNITS))
    elif kind == "line_screen":
        groups.append(_group("line_screen", quantity, LINE_SCREEN_UNITS))
        pitch = Q_(1.0 / quantity.to("1/um").magnitude, "um")
        work.add("Cell pitch", "p", "p = 1 / S", {"S": quantity}, pitch)
        groups.append(_group("cell_pitch", pitch, CELL_PITCH_UNITS))
    elif kind == "area":
        groups.append(_group("area", quantity, AREA_UNITS))
        if share is not None:
            inked = Q_(quantity.to("m2").magnitude * share, "m2")
            work.add("Inked area", "A_ink", "A_ink = A × c", {"A": quantity, "c": share}, inked)
            groups.append(_group("inked_area", inked, AREA_UNITS, f"at {share:.0%} coverage"))
    elif kind in ("volume", "mass"):
        own_units = VOLUME_UNITS if kind == "volume" else MASS_UNITS
        groups.append(_group(kind, quantity, own_units))
        if rho is not None:
            density_kg_l = rho.to("kg/l").magnitude
            if kind == "volume":
                other = Q_(quantity.to("l").magnitude * density_kg_l, "kg")
                work.add("Mass of this ink", "m", "m = V × ρ", {"V": quantity, "ρ": rho}, other)
                groups.append(_group("mass", other, MASS_UNITS, "at the density given"))
            else:
                other = Q_(quantity.to("kg").magnitude / density_kg_l, "l")
                work.add("Volume of this ink", "V", "V = m / ρ", {"m": quantity, "ρ": rho}, other)
                groups.append(_group("volume", other, VOLUME_UNITS, "at the density given"))
    else:  # density
        groups.append(_group("density", quantity, DENSITY_UNITS))
    return Equivalents(quantity, kind, groups, work.steps)
