"""How much ink a job needs, station by station, and what it costs."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from calc.errors import InputError
from calc.film import parse_anilox_volume
from calc.steps import Step, Working
from calc.units import (
    LENGTH,
    Q_,
    check_fraction,
    check_number,
    check_range,
    parse_density,
    parse_quantity,
    require_dimension,
)

MAX_STATIONS = 12
WEB_WIDTH_HIGH = Q_(10.0, "m")  # the widest presses are under 3 m; 10 m catches unit slips
REPEAT_HIGH = Q_(5.0, "m")
RUN_LENGTH_HIGH = Q_(10_000.0, "km")
IMPRESSIONS_HIGH = 1_000_000_000
NAME_MAX = 60


@dataclass(frozen=True)
class Station:
    """One print station's inputs for an estimate.

    ``transfer`` is the share of the anilox cell volume that ends up on the
    substrate (about 0.25 by the trade's rule of thumb); ``coverage`` the share
    of the printed area this station inks.
    """

    name: str
    anilox_volume: object
    coverage: float
    transfer: float
    ink_density: object
    price_per_kg: float | None = None


@dataclass
class StationEstimate:
    name: str
    substrate_wet: object
    ink_volume: object
    ink_mass: object
    cost: float | None
    steps: list[Step] = field(default_factory=list)


@dataclass
class JobEstimate:
    printed_area: object
    run_length: object
    waste: float
    stations: list[StationEstimate]
    total_ink_mass: object
    total_ink_volume: object
    total_cost: float | None
    steps: list[Step] = field(default_factory=list)


def _length(text, field, high, what, examples):
    value = parse_quantity(text, field)
    require_dimension(value, LENGTH, field, "a length", examples)
    check_range(value, Q_(0.0, high.units), high, field, what)
    return value


def _station_name(name, field):
    if not isinstance(name, str) or not name.strip():
        raise InputError(field, "needs a name, such as 'Cyan' or 'Unit 3 white'")
    name = name.strip()
    if len(name) > NAME_MAX:
        raise InputError(field, f"must be at most {NAME_MAX} characters")
    return name


def run_length_from_impressions(impressions, repeat):
    """Run length from impressions and the repeat length: L = n × r.

    >>> run_length_from_impressions(50000, "18 in").to("m")  # doctest: +NUMBER
    <Quantity(22860.0, 'meter')>
    """
    if isinstance(impressions, bool) or not isinstance(impressions, int | float):
        raise InputError("impressions", "must be a whole number of impressions")
    n = check_number(impressions, "impressions")
    if n != math.floor(n) or n < 1 or n > IMPRESSIONS_HIGH:
        raise InputError("impressions", f"must be a whole number from 1 to {IMPRESSIONS_HIGH:,}")
    r = _length(repeat, "repeat", REPEAT_HIGH, "the repeat", "18 in or 457 mm")
    return Q_(n * r.to("m").magnitude, "m")


def job_ink(
    web_width,
    stations: list[Station],
    run_length=None,
    impressions=None,
    repeat=None,
    waste: float = 0.0,
) -> JobEstimate:
    """Ink needed for a run, per station and in total.

    A = W × L                          printed area (web width × run length)
    t₂ = V_a × T                       wet film on the substrate
    V_ink = t₂ × A × c × (1 + waste)   ink volume for the station
    m_ink = V_ink × ρ                  ink mass
    cost = m_ink × price per kg

    Parameters
    ----------
    web_width : Quantity or str
        Printed width of the web [mm, in].
    stations : list of Station
        One to twelve stations.
    run_length : Quantity or str, optional
        Length of the run [m, ft]; or give ``impressions`` and ``repeat``.
    impressions : int, optional
        Number of impressions (cylinder turns).
    repeat : Quantity or str, optional
        Repeat length per impression [in, mm].
    waste : float
        Extra share for make-ready and spoilage, added on top [0..1].

    Returns
    -------
    JobEstimate with area in m², ink in kg and l, costs in the currency of
    the prices (unrounded).

    Notes
    -----
    The ink a press keeps in its chamber, pump and hoses (the system fill) is
    not counted: it comes back at the end of the run.
    """
    work = Working()
    width = _length(web_width, "web_width", WEB_WIDTH_HIGH, "the web width", "330 mm or 13 in")
    if run_length is not None and (impressions is not None or repeat is not None):
        raise InputError("run_length", "give either the run length or impressions and repeat, not both")
    if run_length is not None:
        length = _length(run_length, "run_length", RUN_LENGTH_HIGH, "the run length", "12000 m or 40000 ft")
    elif impressions is not None and repeat is not None:
        r = _length(repeat, "repeat", REPEAT_HIGH, "the repeat", "18 in or 457 mm")
        run = run_length_from_impressions(impressions, r)  # checks impressions before they are used
        length = work.add("Run length", "L", "L = n × r", {"n": float(impressions), "r": r}, run)
    elif impressions is not None:
        raise InputError("repeat", "with impressions, give the repeat length too (e.g. '18 in')")
    elif repeat is not None:
        raise InputError("impressions", "with the repeat, give the number of impressions too")
    else:
        raise InputError("run_length", "give the run length (e.g. '12000 m'), or impressions and repeat")
    waste = check_fraction(waste, "waste")
    if not isinstance(stations, list | tuple) or not 1 <= len(stations) <= MAX_STATIONS:
        raise InputError("stations", f"a job needs from 1 to {MAX_STATIONS} stations")

    area_m2 = width.to("m").magnitude * length.to("m").magnitude
    area = work.add("Printed area", "A", "A = W × L", {"W": width, "L": length}, Q_(area_m2, "m2"))

    results = []
    for index, station in enumerate(stations):
        try:
            results.append(_station_ink(station, area_m2, waste))
        except InputError as exc:
            raise exc.within(f"stations[{index}]") from None

    total_mass = math.fsum(s.ink_mass.magnitude for s in results)
    total_volume = math.fsum(s.ink_volume.magnitude for s in results)
    costs = [s.cost for s in results]
    total_cost = math.fsum(costs) if all(c is not None for c in costs) else None
    return JobEstimate(
        printed_area=area,
        run_length=length.to("m"),
        waste=waste,
        stations=results,
        total_ink_mass=Q_(total_mass, "kg"),
        total_ink_volume=Q_(total_volume, "l"),
        total_cost=total_cost,
        steps=work.steps,
    )


def _station_ink(station: Station, area_m2: float, waste: float) -> StationEstimate:
    name = _station_name(station.name, "name")
    volume = parse_anilox_volume(station.anilox_volume, "anilox_volume")
    coverage = check_fraction(station.coverage, "coverage")
    transfer = check_fraction(station.transfer, "transfer")
    density = parse_density(station.ink_density, "ink_density")
    price = None if station.price_per_kg is None else check_number(station.price_per_kg, "price_per_kg")

    work = Working()
    t2_um = volume.to("cm3/m2").magnitude * transfer
    t2 = work.add("Wet film on the substrate", "t₂", "t₂ = V_a × T", {"V_a": volume, "T": transfer}, Q_(t2_um, "um"))
    # t [µm] × A [m²] = cm³; / 1000 = litres
    litres = t2_um * area_m2 * coverage * (1.0 + waste) / 1000.0
    ink_volume = work.add(
        "Ink volume",
        "V_ink",
        "V_ink = t₂ × A × c × (1 + waste)",
        {"t₂": t2, "A": Q_(area_m2, "m2"), "c": coverage, "waste": waste},
        Q_(litres, "l"),
    )
    kg = litres * density.to("kg/l").magnitude
    ink_mass = work.add("Ink mass", "m_ink", "m_ink = V_ink × ρ", {"V_ink": ink_volume, "ρ": density}, Q_(kg, "kg"))
    cost = None
    if price is not None:
        cost = work.add("Ink cost", "cost", "cost = m_ink × price", {"m_ink": ink_mass, "price": price}, kg * price)
    return StationEstimate(name, t2, ink_volume, ink_mass, cost, work.steps)
