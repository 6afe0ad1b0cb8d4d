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
    if kind == "film":
        film = quantity.to("um")
        groups.append(_group("volume_per_area", quantity, VOLUME_PER_AREA_UNITS))
        groups.append(_group("film_thickness", quantity, FILM_UNITS))
        if not _is_volume_per_area(quantity):  # mm and inches suit a typed thickness, not an anilox
            groups.append(_group("thickness_other", quantity, THICKNESS_OTHER_UNITS))
        work.add("Film thickness", "t", "t = V  (1 cm³/m² spreads to 1 µm)", {"V": quantity}, film)
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
