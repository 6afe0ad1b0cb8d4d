"""How much ink a job needs, station by station, what to pull and what it costs.

The model, for every station of a job:

    L                                   good run length: given, or n × r, or from labels
    n = ⌈N / (a × b)⌉                   whole impressions for N labels, a across, b around
    L_p = L × (1 + waste) + L_mr        web printed: good run, waste on top, then make-ready
    c = A_l × a × b / (W × r)           coverage from the inked area per label, where given
    t₂ = V_a × T                        wet film on the substrate
    V_ink = t₂ × W × L_p × c            ink the station lays down
    m_ink = V_ink × ρ                   its mass
    m_pull = m_ink + m_fill             what the ink room pulls: ink used and the system fill
    L_good = max(0, ((m_oh − m_fill) / (t₂ × W × c × ρ) − L_mr) / (1 + waste))
                                        good run the ink on hand prints
    M = 1 / (t₂ × ρ)                    ink mileage (area per mass)

Per 1,000 impressions and per 1,000 labels the whole m_ink of a station
(make-ready and waste included) is spread over the *good* count, as estimators
quote it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from calc import practice
from calc.errors import InputError
from calc.film import parse_anilox_volume
from calc.steps import Count, Money, Step, Working
from calc.units import (
    AREA,
    LENGTH,
    MASS,
    Q_,
    VOLUME,
    check_fraction,
    check_number,
    check_range,
    dimension_name,
    parse_density,
    parse_quantity,
    require_dimension,
    ureg,
)

# The units the formulas are written in, parsed once: a twelve-station job makes several hundred
# quantities, and pint parses a unit given as text afresh each time (benchmarks/estimate_12_stations.py).
UNIT = {name: ureg.Unit(name) for name in ("kg", "kg/l", "km", "l", "m", "m2", "m2/kg", "um", "cm3/m2")}

MAX_STATIONS = 12
WEB_WIDTH_HIGH = Q_(10.0, UNIT["m"])  # the widest presses are under 3 m; 10 m catches unit slips
REPEAT_HIGH = Q_(5.0, UNIT["m"])
RUN_LENGTH_HIGH = Q_(10_000.0, UNIT["km"])
IMPRESSIONS_HIGH = 1_000_000_000
NAME_MAX = 60

# Bounds that catch typing and unit slips, far beyond any real job (common practice):
# make-ready takes tens to a few hundred metres of web; labels across and around
# stay in the tens; a chamber, pump and hoses hold a few litres, an open pan some
# more; a shop's stock of one ink is drums, not tankers.
MAKEREADY_HIGH = Q_(100.0, UNIT["km"])
LABELS_HIGH = 1_000_000_000_000
ACROSS_AROUND_HIGH = 1000
LABEL_AREA_HIGH = Q_(1.0, UNIT["m2"])
FILL_MASS_HIGH = Q_(1000.0, UNIT["kg"])
FILL_VOLUME_HIGH = Q_(1000.0, UNIT["l"])
ON_HAND_MASS_HIGH = Q_(100_000.0, UNIT["kg"])
ON_HAND_VOLUME_HIGH = Q_(100_000.0, UNIT["l"])

# The avoirdupois pound, exactly (NIST SP 811, Appendix B).
KG_PER_LB = 0.45359237

# Rough coverages by kind of artwork live with the other common-practice values.
TYPICAL_COVERAGES = practice.TYPICAL_COVERAGES


@dataclass(frozen=True)
class Station:
    """One print station's inputs for an estimate.

    ``transfer`` is the share of the anilox cell volume that ends up on the
    substrate (about 0.25 by the trade's rule of thumb); ``coverage`` the share
    of the printed area this station inks — or leave it ``None`` and give
    ``inked_area_per_label`` (an area, e.g. ``"12 cm2"``) for a labels job.
    ``price_per_kg`` or ``price_per_lb`` (not both) is in the shop's currency.
    ``fill`` is the ink the chamber or pan, pump and hoses hold (a volume or a
    mass); ``on_hand`` the ink of this station in the ink room (a volume or a
    mass).
    """

    name: str
    anilox_volume: object
    coverage: float | None
    transfer: float
    ink_density: object
    price_per_kg: float | None = None
    price_per_lb: float | None = None
    fill: object = None
    on_hand: object = None
    inked_area_per_label: object = None


@dataclass(frozen=True)
class OnHandPrints:
    """The good run the ink on hand will print: a length [m], and where known whole impressions and labels."""

    run_length: object
    impressions: int | None
    labels: int | None


@dataclass
class StationEstimate:
    """One station's answer. Masses in kg, volumes in l, lengths in m, money in the prices' currency.

    ``on_hand_prints`` is ``None`` when no ink on hand was given, or when the
    station lays no ink (coverage or transfer 0) and the ink on hand covers the
    fill: then the ink on hand sets no limit.
    """

    name: str
    substrate_wet: object
    ink_volume: object
    ink_mass: object
    cost: float | None
    steps: list[Step] = field(default_factory=list)
    coverage: float = 0.0
    mileage: object = None  # m²/kg; None when the station lays no film
    price_per_kg: float | None = None
    fill_mass: object = None
    pull_mass: object = None
    ink_per_1000_impressions: object = None
    ink_per_1000_labels: object = None
    cost_per_1000_impressions: float | None = None
    cost_per_1000_labels: float | None = None
    on_hand_mass: object = None
    on_hand_prints: OnHandPrints | None = None
    enough: bool | None = None
    short_by: object = None


@dataclass
class JobEstimate:
    """The job's answer: ``printed_area`` is the good run's area (W × L) [m²]; lengths in m, ink in kg and l."""

    printed_area: object
    run_length: object
    waste: float
    stations: list[StationEstimate]
    total_ink_mass: object
    total_ink_volume: object
    total_cost: float | None
    steps: list[Step] = field(default_factory=list)
    makeready: object = None
    printed_length: object = None
    repeat: object = None
    impressions: int | None = None
    across: int | None = None
    around: int | None = None
    labels: int | None = None
    total_pull_mass: object = None
    cost_per_1000_impressions: float | None = None
    cost_per_1000_labels: float | None = None


@dataclass(frozen=True)
class _Run:
    """The job's run, in the units the formulas are written in (m, whole counts)."""

    width: object
    width_m: float
    length_m: float
    area_m2: float
    waste: float
    makeready_m: float
    printed_m: float
    printed: object
    repeat: object
    repeat_m: float | None
    impressions: int | None
    across: int | None
    around: int | None
    labels: int | None


def _length(text, field, high, what, examples, *, zero_ok=False):
    value = parse_quantity(text, field)
    require_dimension(value, LENGTH, field, "a length", examples)
    check_range(value, Q_(0.0, high.units), high, field, what, low_inclusive=zero_ok)
    return value


def _station_name(name, field):
    if not isinstance(name, str) or not name.strip():
        raise InputError(field, "needs a name, such as 'Cyan' or 'Unit 3 white'")
    name = name.strip()
    if len(name) > NAME_MAX:
        raise InputError(field, f"must be at most {NAME_MAX} characters")
    return name


def _whole(value, field, high, what):
    """A whole number from 1 to ``high`` (an int, or a float with nothing after the point)."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(field, f"must be a whole number of {what}")
    n = check_number(value, field)
    if n != math.floor(n) or n < 1 or n > high:
        raise InputError(field, f"must be a whole number of {what} from 1 to {high:,}")
    return int(n)


def _mass_or_volume(text, field, mass_high, volume_high, what):
    """Ink given as a mass or a volume, from 0 up to a bound; returns the Quantity."""
    value = parse_quantity(text, field)
    if value.dimensionality == MASS:
        check_range(value, Q_(0.0, UNIT["kg"]), mass_high, field, what, low_inclusive=True)
    elif value.dimensionality == VOLUME:
        check_range(value, Q_(0.0, UNIT["l"]), volume_high, field, what, low_inclusive=True)
    else:
        raise InputError(
            field,
            f"must be a volume or a mass of ink, such as 2 l, 0.5 gal or 1.5 kg, "
            f"not {dimension_name(value.dimensionality)}",
        )
    return value


def _whole_below(x: float) -> int:
    """⌊x⌋, except that a value a rounding error short of a whole number counts as that number."""
    nearest = round(x)
    if abs(x - nearest) <= 1e-9 * max(1.0, abs(x)):
        return int(nearest)
    return math.floor(x)


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
    return Q_(n * r.to(UNIT["m"]).magnitude, UNIT["m"])


def impressions_for_labels(labels, across, around) -> int:
    """Whole impressions that print ``labels`` labels: n = ⌈N / (a × b)⌉.

    Parameters
    ----------
    labels : int
        Labels ordered [count, ≥ 1].
    across, around : int
        Labels across the web and around the plate cylinder [count, ≥ 1].

    Returns
    -------
    int, the impressions; the last one may print a few labels more than ordered.

    >>> impressions_for_labels(10000, 3, 2)
    1667
    """
    n_labels = _whole(labels, "labels", LABELS_HIGH, "labels")
    a = _whole(across, "across", ACROSS_AROUND_HIGH, "labels across the web")
    b = _whole(around, "around", ACROSS_AROUND_HIGH, "labels around the cylinder")
    return -(-n_labels // (a * b))  # exact integer ceiling


def job_ink(
    web_width,
    stations: list[Station],
    run_length=None,
    impressions=None,
    repeat=None,
    waste: float = 0.0,
    labels=None,
    across=None,
    around=None,
    makeready=None,
) -> JobEstimate:
    """Ink needed for a run, per station and in total: what is used, what to pull, what it costs.

    L = given, or n × r, or with n = ⌈N / (a × b)⌉ for a labels job
    L_p = L × (1 + waste) + L_mr                 web printed
    c = A_l × a × b / (W × r)                    coverage from the inked area per label
    t₂ = V_a × T                                 wet film on the substrate
    V_ink = t₂ × W × L_p × c                     ink volume for the station
    m_ink = V_ink × ρ                            ink mass (ink used)
    cost = m_ink × price per kg
    m_pull = m_ink + m_fill                      pull quantity (fill as mass: V_fill × ρ)
    L_good = max(0, ((m_oh − m_fill) / (t₂ × W × c × ρ) − L_mr) / (1 + waste))
    q_n = m_ink × 1000 / n,  q_N = m_ink × 1000 / (n × a × b)   ink per 1,000 impressions, labels
    M = 1 / (t₂ × ρ)                             ink mileage

    Parameters
    ----------
    web_width : Quantity or str
        Printed width of the web [mm, in].
    stations : list of Station
        One to twelve stations.
    run_length : Quantity or str, optional
        Good run length [m, ft]; or give ``impressions`` and ``repeat``, or
        ``labels``, ``across``, ``around`` and ``repeat``.
    impressions : int, optional
        Good impressions (cylinder turns).
    repeat : Quantity or str, optional
        Repeat length per impression [in, mm].
    waste : float
        Spoilage during the run, as a share of the good run, added on top [0..1].
    labels : int, optional
        Good labels ordered; rounded up to whole impressions.
    across, around : int, optional
        Labels across the web and around the cylinder (per impression a × b labels).
    makeready : Quantity or str, optional
        Web printed to set the job up, before the good run [m, ft]; default 0.

    Returns
    -------
    JobEstimate with lengths in m, area in m², ink in kg and l, mileage in
    m²/kg, costs in the currency of the prices (unrounded). ``impressions`` is
    known for impressions and labels jobs; ``labels`` (n × a × b, the labels the
    good run prints) where across and around are known too. Per-1,000 figures
    and the costs per 1,000 are ``None`` where a count or a price is missing.

    Notes
    -----
    The system fill is pulled with the ink but not used up: it comes back at
    the end of the run, so it counts in the pull quantity and in what the ink
    on hand must cover, never in the ink used or its cost. Waste is a share of
    the good run; make-ready is a length of its own, as pressrooms count it.
    Masses and volumes of ink stock are arithmetic only: storing solvent or UV
    inks is bound by their safety data sheets and local fire codes.

    References
    ----------
    Unit definitions: NIST SP 811, Appendix B (inch, pound); NIST Handbook 44,
    Appendix C (US gallon). The mileage route and the pan and set-up allowance
    follow an ink maker's technical note on estimating ink coverage (see
    REFERENCES.md); the tests reproduce its worked example.
    """
    work = Working()
    width = _length(web_width, "web_width", WEB_WIDTH_HIGH, "the web width", "330 mm or 13 in")
    if run_length is not None and (impressions is not None or repeat is not None):
        raise InputError("run_length", "give either the run length or impressions and repeat, not both")
    if labels is not None and (run_length is not None or impressions is not None):
        raise InputError("labels", "give the labels, or the impressions, or the run length: only one of them")
    count = None
    n_labels = None
    a = b = None
    r = None
    if labels is not None:
        n_labels = _whole(labels, "labels", LABELS_HIGH, "labels")
        for value, name, example in ((repeat, "repeat", "'18 in'"), (across, "across", "3"), (around, "around", "2")):
            if value is None:
                raise InputError(name, f"a job counted in labels needs the {name}, e.g. {example}")
        r = _length(repeat, "repeat", REPEAT_HIGH, "the repeat", "18 in or 457 mm")
        count = impressions_for_labels(n_labels, across, around)
        a, b = int(across), int(around)
        if count > IMPRESSIONS_HIGH:
            raise InputError("labels", f"needs more than {IMPRESSIONS_HIGH:,} impressions: check the count")
        count = work.add(
            "Impressions (whole, for the labels ordered)",
            "n",
            "n = ⌈N / (a × b)⌉",
            {"N": Count(n_labels), "a": Count(a), "b": Count(b)},
            Count(count),
        )
        length = work.add(
            "Run length", "L", "L = n × r", {"n": count, "r": r}, run_length_from_impressions(int(count), r)
        )
    elif run_length is not None:
        length = _length(run_length, "run_length", RUN_LENGTH_HIGH, "the run length", "12000 m or 40000 ft")
    elif impressions is not None and repeat is not None:
        r = _length(repeat, "repeat", REPEAT_HIGH, "the repeat", "18 in or 457 mm")
        length = run_length_from_impressions(impressions, r)
        count = Count(int(impressions))
        length = work.add("Run length", "L", "L = n × r", {"n": count, "r": r}, length)
    elif impressions is not None:
        raise InputError("repeat", "with impressions, give the repeat length too (e.g. '18 in')")
    elif repeat is not None:
        raise InputError("impressions", "with the repeat, give the number of impressions too")
    else:
        raise InputError("run_length", "give the run length (e.g. '12000 m'), or impressions and repeat, or labels")
    waste = check_fraction(waste, "waste")
    if labels is None and (across is not None or around is not None):
        a, b = _across_around(across, around, count)
    if not isinstance(stations, list | tuple) or not 1 <= len(stations) <= MAX_STATIONS:
        raise InputError("stations", f"a job needs from 1 to {MAX_STATIONS} stations")
    mr = Q_(0.0, UNIT["m"]) if makeready is None else _makeready(makeready)

    width_m = width.to(UNIT["m"]).magnitude
    length_m = length.to(UNIT["m"]).magnitude
    area_m2 = width_m * length_m
    area = work.add("Printed area", "A", "A = W × L", {"W": width, "L": length}, Q_(area_m2, UNIT["m2"]))
    if a is not None and count is not None:
        n_labels = work.add(
            "Labels the good run prints",
            "N",
            "N = n × a × b",
            {"n": count, "a": Count(a), "b": Count(b)},
            Count(count * a * b),
        )
    makeready_m = mr.to(UNIT["m"]).magnitude
    printed_m = length_m * (1.0 + waste) + makeready_m
    printed = work.add(
        "Web printed (good run, waste, make-ready)",
        "L_p",
        "L_p = L × (1 + waste) + L_mr",
        {"L": length, "waste": waste, "L_mr": mr},
        Q_(printed_m, UNIT["m"]),
    )
    run = _Run(
        width=width,
        width_m=width_m,
        length_m=length_m,
        area_m2=area_m2,
        waste=waste,
        makeready_m=makeready_m,
        printed_m=printed_m,
        printed=printed,
        repeat=r,
        repeat_m=None if r is None else r.to(UNIT["m"]).magnitude,
        impressions=None if count is None else int(count),
        across=a,
        around=b,
        labels=None if n_labels is None or a is None else int(n_labels),
    )

    results = []
    for index, station in enumerate(stations):
        try:
            results.append(_station_ink(station, run))
        except InputError as exc:
            raise exc.within(f"stations[{index}]") from None

    total_mass = math.fsum(s.ink_mass.magnitude for s in results)
    total_volume = math.fsum(s.ink_volume.magnitude for s in results)
    costs = [s.cost for s in results]
    total_cost = math.fsum(costs) if all(c is not None for c in costs) else None
    total_pull = work.add(
        "Ink to pull, all stations",
        "Σm_pull",
        "Σm_pull = Σ(m_ink + m_fill)",
        {f"m_pull,{i + 1}": s.pull_mass for i, s in enumerate(results)},
        Q_(math.fsum(s.pull_mass.magnitude for s in results), UNIT["kg"]),
    )
    per_impressions = per_labels = None
    if total_cost is not None and run.impressions is not None:
        per_impressions = float(
            work.add(
                "Cost per 1,000 impressions, all stations",
                "Σcost_n",
                "Σcost_n = Σcost × 1000 / n",
                {"Σcost": Money(total_cost), "n": Count(run.impressions)},
                Money(total_cost * 1000.0 / run.impressions),
            )
        )
    if total_cost is not None and run.labels is not None:
        per_labels = float(
            work.add(
                "Cost per 1,000 labels, all stations",
                "Σcost_N",
                "Σcost_N = Σcost × 1000 / N",
                {"Σcost": Money(total_cost), "N": Count(run.labels)},
                Money(total_cost * 1000.0 / run.labels),
            )
        )
    return JobEstimate(
        printed_area=area,
        run_length=length.to(UNIT["m"]),
        waste=waste,
        stations=results,
        total_ink_mass=Q_(total_mass, UNIT["kg"]),
        total_ink_volume=Q_(total_volume, UNIT["l"]),
        total_cost=total_cost,
        steps=work.steps,
        makeready=mr.to(UNIT["m"]),
        printed_length=printed,
        repeat=None if r is None else r.to(UNIT["m"]),
        impressions=run.impressions,
        across=a,
        around=b,
        labels=run.labels,
        total_pull_mass=total_pull,
        cost_per_1000_impressions=per_impressions,
        cost_per_1000_labels=per_labels,
    )


def _across_around(across, around, count):
    """Labels across and around for a job counted in impressions or by length."""
    if count is None:
        name = "across" if across is not None else "around"
        raise InputError(
            name, "labels across and around need the repeat: give the run as impressions or labels with the repeat"
        )
    if across is None:
        raise InputError("across", "with labels around, give the labels across too (e.g. 3)")
    if around is None:
        raise InputError("around", "with labels across, give the labels around too (e.g. 2)")
    a = _whole(across, "across", ACROSS_AROUND_HIGH, "labels across the web")
    b = _whole(around, "around", ACROSS_AROUND_HIGH, "labels around the cylinder")
    return a, b


def _makeready(text):
    return _length(text, "makeready", MAKEREADY_HIGH, "the make-ready", "150 m or 500 ft", zero_ok=True)


def _coverage_from_label_area(station: Station, run: _Run, work: Working) -> float:
    field = "inked_area_per_label"
    if station.coverage is not None:
        raise InputError(field, "give either the coverage or the inked area per label, not both")
    area = parse_quantity(station.inked_area_per_label, field)
    require_dimension(area, AREA, field, "an area", "12 cm2 or 1.9 in2")
    check_range(area, Q_(0.0, UNIT["m2"]), LABEL_AREA_HIGH, field, "the inked area per label", low_inclusive=True)
    if run.repeat_m is None or run.across is None:
        raise InputError(
            field,
            "needs the job's repeat and its labels across and around: give the run as impressions or labels, "
            "or give this station a coverage instead",
        )
    share = area.to(UNIT["m2"]).magnitude * run.across * run.around / (run.width_m * run.repeat_m)
    if share > 1.0:
        raise InputError(
            field,
            f"{run.across * run.around} labels of this inked area would cover {share:.0%} of the web "
            "(more than all of it): check the area and its unit, the labels across and around, and the web width",
        )
    return work.add(
        "Coverage from the inked area per label",
        "c",
        "c = A_l × a × b / (W × r)",
        {"A_l": area, "a": Count(run.across), "b": Count(run.around), "W": run.width, "r": run.repeat},
        share,
    )


def _station_ink(station: Station, run: _Run) -> StationEstimate:
    name = _station_name(station.name, "name")
    volume = parse_anilox_volume(station.anilox_volume, "anilox_volume")
    work = Working()
    if station.inked_area_per_label is None and station.coverage is None:
        raise InputError("coverage", "needs the share of the printed area this station inks (e.g. 0.4 for 40 %)")
    if station.inked_area_per_label is None:
        coverage = check_fraction(station.coverage, "coverage")
    else:
        coverage = None  # worked out below, once the other inputs are known good
    transfer = check_fraction(station.transfer, "transfer")
    density = parse_density(station.ink_density, "ink_density")
    price = None if station.price_per_kg is None else check_number(station.price_per_kg, "price_per_kg")
    if station.price_per_lb is not None:
        if price is not None:
            raise InputError("price_per_lb", "give the price per kg or the price per lb, not both")
        check_number(station.price_per_lb, "price_per_lb")
    fill = (
        None
        if station.fill is None
        else _mass_or_volume(station.fill, "fill", FILL_MASS_HIGH, FILL_VOLUME_HIGH, "the system fill")
    )
    on_hand = (
        None
        if station.on_hand is None
        else _mass_or_volume(station.on_hand, "on_hand", ON_HAND_MASS_HIGH, ON_HAND_VOLUME_HIGH, "the ink on hand")
    )
    if coverage is None:
        coverage = _coverage_from_label_area(station, run, work)
    rho = density.to(UNIT["kg/l"]).magnitude

    t2_um = volume.to(UNIT["cm3/m2"]).magnitude * transfer
    t2 = work.add(
        "Wet film on the substrate", "t₂", "t₂ = V_a × T", {"V_a": volume, "T": transfer}, Q_(t2_um, UNIT["um"])
    )
    # t [µm] × A [m²] = cm³; / 1000 = litres
    if run.makeready_m == 0.0:
        # the previous release's formula and order of operations, so that its answers stay the same
        area_m2 = run.area_m2
        litres = t2_um * area_m2 * coverage * (1.0 + run.waste) / 1000.0
        formula = "V_ink = t₂ × A × c × (1 + waste)"
        inputs = {"t₂": t2, "A": Q_(area_m2, UNIT["m2"]), "c": coverage, "waste": run.waste}
    else:
        litres = t2_um * run.width_m * run.printed_m * coverage / 1000.0
        formula = "V_ink = t₂ × W × L_p × c"
        inputs = {"t₂": t2, "W": run.width, "L_p": run.printed, "c": coverage}
    ink_volume = work.add("Ink volume", "V_ink", formula, inputs, Q_(litres, UNIT["l"]))
    kg = litres * rho
    ink_mass = work.add(
        "Ink mass", "m_ink", "m_ink = V_ink × ρ", {"V_ink": ink_volume, "ρ": density}, Q_(kg, UNIT["kg"])
    )
    if station.price_per_lb is not None:
        price = float(
            work.add(
                "Price per kg",
                "p_kg",
                "p_kg = p_lb / 0.45359237 (kg per lb)",
                {"p_lb": Money(station.price_per_lb)},
                Money(float(station.price_per_lb) / KG_PER_LB),
            )
        )
    cost = None
    if price is not None:
        cost = float(
            work.add(
                "Ink cost",
                "cost",
                "cost = m_ink × price",
                {"m_ink": ink_mass, "price": Money(price)},
                Money(kg * price),
            )
        )

    mileage = None
    if t2_um > 0.0:
        # 1 / (µm × kg/l) = 1 / (g/m²) = 1000 m²/kg
        mileage = work.add(
            "Ink mileage", "M", "M = 1 / (t₂ × ρ)", {"t₂": t2, "ρ": density}, Q_(1000.0 / (t2_um * rho), UNIT["m2/kg"])
        )
    fill_kg = 0.0
    fill_mass = Q_(0.0, UNIT["kg"])
    if fill is not None and fill.dimensionality == VOLUME:
        fill_kg = fill.to(UNIT["l"]).magnitude * rho
        fill_mass = work.add(
            "System fill as mass",
            "m_fill",
            "m_fill = V_fill × ρ",
            {"V_fill": fill, "ρ": density},
            Q_(fill_kg, UNIT["kg"]),
        )
    elif fill is not None:
        fill_kg = fill.to(UNIT["kg"]).magnitude
        fill_mass = Q_(fill_kg, UNIT["kg"])
    pull_kg = kg + fill_kg
    pull_mass = work.add(
        "Ink to pull (used, and the system fill)",
        "m_pull",
        "m_pull = m_ink + m_fill",
        {"m_ink": ink_mass, "m_fill": fill_mass},
        Q_(pull_kg, UNIT["kg"]),
    )

    estimate = StationEstimate(
        name,
        t2,
        ink_volume,
        ink_mass,
        cost,
        work.steps,
        coverage=coverage,
        mileage=mileage,
        price_per_kg=price,
        fill_mass=fill_mass,
        pull_mass=pull_mass,
    )
    _per_thousand(estimate, run, work)
    if on_hand is not None:
        _on_hand(estimate, on_hand, run, work, t2_um * coverage * rho / 1000.0, density)
    return estimate


def _per_thousand(estimate: StationEstimate, run: _Run, work: Working) -> None:
    kg = estimate.ink_mass.magnitude
    for count, symbol, what in ((run.impressions, "n", "impressions"), (run.labels, "N", "labels")):
        if count is None:
            continue
        q = work.add(
            f"Ink per 1,000 {what}",
            f"q_{symbol}",
            f"q_{symbol} = m_ink × 1000 / {symbol}",
            {"m_ink": estimate.ink_mass, symbol: Count(count)},
            Q_(kg * 1000.0 / count, UNIT["kg"]),
        )
        setattr(estimate, f"ink_per_1000_{what}", q)
        if estimate.cost is not None:
            c = work.add(
                f"Cost per 1,000 {what}",
                f"cost_{symbol}",
                f"cost_{symbol} = cost × 1000 / {symbol}",
                {"cost": Money(estimate.cost), symbol: Count(count)},
                Money(estimate.cost * 1000.0 / count),
            )
            setattr(estimate, f"cost_per_1000_{what}", float(c))


def _on_hand(estimate: StationEstimate, on_hand, run: _Run, work: Working, kg_per_m2: float, density) -> None:
    """What the ink on hand covers: enough or short, and the good run it prints."""
    if on_hand.dimensionality == VOLUME:
        oh_kg = on_hand.to(UNIT["l"]).magnitude * density.to(UNIT["kg/l"]).magnitude
        oh_mass = work.add(
            "Ink on hand as mass", "m_oh", "m_oh = V_oh × ρ", {"V_oh": on_hand, "ρ": density}, Q_(oh_kg, UNIT["kg"])
        )
    else:
        oh_kg = on_hand.to(UNIT["kg"]).magnitude
        oh_mass = Q_(oh_kg, UNIT["kg"])
    estimate.on_hand_mass = oh_mass
    pull_kg = estimate.pull_mass.magnitude
    short_kg = pull_kg - oh_kg
    # a last-digit rounding difference (ink on hand typed as the pull figure) is not a shortfall
    enough = short_kg <= 1e-12 * pull_kg
    estimate.enough = enough
    estimate.short_by = work.add(
        "Short by (0 when the ink on hand is enough)",
        "s",
        "s = max(0, m_pull − m_oh)",
        {"m_pull": estimate.pull_mass, "m_oh": oh_mass},
        Q_(0.0 if enough else short_kg, UNIT["kg"]),
    )
    fill_kg = estimate.fill_mass.magnitude
    kg_per_m = kg_per_m2 * run.width_m  # ink used per metre of web printed: t₂ × W × c × ρ
    if kg_per_m <= 0.0 and oh_kg >= fill_kg:
        return  # the station lays no ink: what is on hand sets no limit once the fill is covered
    if kg_per_m <= 0.0:
        good_m = 0.0
    else:
        good_m = max(0.0, ((oh_kg - fill_kg) / kg_per_m - run.makeready_m) / (1.0 + run.waste))
    good = work.add(
        "Good run the ink on hand prints",
        "L_good",
        "L_good = max(0, ((m_oh − m_fill) / (t₂ × W × c × ρ) − L_mr) / (1 + waste))",
        {
            "m_oh": oh_mass,
            "m_fill": estimate.fill_mass,
            "t₂": estimate.substrate_wet,
            "W": run.width,
            "c": estimate.coverage,
            "ρ": density,
            "L_mr": Q_(run.makeready_m, UNIT["m"]),
            "waste": run.waste,
        },
        Q_(good_m, UNIT["m"]),
    )
    impressions = labels = None
    if run.repeat_m is not None:
        impressions = int(
            work.add(
                "Whole impressions the ink on hand prints",
                "n_oh",
                "n_oh = ⌊L_good / r⌋",
                {"L_good": good, "r": run.repeat},
                Count(_whole_below(good_m / run.repeat_m)),
            )
        )
        if run.across is not None:
            labels = int(
                work.add(
                    "Labels the ink on hand prints",
                    "N_oh",
                    "N_oh = n_oh × a × b",
                    {"n_oh": Count(impressions), "a": Count(run.across), "b": Count(run.around)},
                    Count(impressions * run.across * run.around),
                )
            )
    estimate.on_hand_prints = OnHandPrints(good, impressions, labels)
