"""Anilox wear: how a roll's cell volume is falling, whether it is plugged, and when to replace it.

One model, the same for every roll (``wear_picture``):

- **The wear line** is the least-squares straight line of volume V against time
  t through the roll's starting point (its certificate volume, else its
  nominal, on its engraving date) and every measurement taken *after
  cleaning*. Readings taken *as found* are left out of the line: dried ink in
  the cells makes them read low for a while (plugging), not for good (wear).
- **Plugging** is how far the latest as-found reading lies below the wear line
  on its date, as a share of the line's value there.
- **The forecast** is the date the wear line falls to the replacement
  threshold (a share of the nominal volume); none when the line does not fall.
- **Flags** say what the roll needs: ``replace``, ``off_spec``, ``clean``,
  ``measure`` (in that order of urgency); none means the roll is fine.

Time is counted in years of 365.25 days from the engraving date; volumes are
worked in BCM/in².

References
----------
Least squares with the standard error of the slope: any statistics text, e.g.
NIST/SEMATECH e-Handbook of Statistical Methods, §4.1.4.1 (linear least
squares) and §4.2 ("the standard deviation of the slope"); the slope and
intercept are checked against Python's ``statistics.linear_regression`` in
``tests/calc/test_wear.py``. Thresholds: common practice (``calc.practice``,
REFERENCES.md "Anilox rolls").
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, datetime, timedelta

from calc.errors import InputError
from calc.film import ANILOX_VOLUME_HIGH, parse_anilox_volume
from calc.practice import (
    WEAR_AUDIT_DAYS,
    WEAR_CLEAN_BELOW,
    WEAR_CLEAN_PLUGGING,
    WEAR_OFF_SPEC,
    WEAR_REPLACE_AT,
)
from calc.units import Q_, check_fraction, check_number

DAYS_PER_YEAR = 365.25
CONDITIONS = ("as_found", "after_cleaning")
CONDITION_NAMES = {"as_found": "as found", "after_cleaning": "after cleaning"}
# Flags in order of urgency; a roll with none is fine.
FLAG_ORDER = ("replace", "off_spec", "clean", "measure")
URGENCY_FINE = len(FLAG_ORDER)
# Dates a roll register can sensibly hold.
EARLIEST = date(1950, 1, 1)
LATEST = date(2200, 12, 31)
# The forecast reaches this far ahead at most; beyond it the answer is "not in sight".
FORECAST_YEARS = 100
NOT_ENOUGH = "not enough measurements"
BCM_PER_IN2 = Q_(1.0, "BCM/in2").units
_QUANTITY = type(Q_(1.0, "BCM/in2"))
_HIGH_BCM = ANILOX_VOLUME_HIGH.to("BCM/in2").magnitude
# The units messages may state volumes in, and their labels (pint converts: 1 BCM/in² ≈ 1.55 cm³/m²).
MESSAGE_UNITS = {"BCM/in2": "BCM/in²", "cm3/m2": "cm³/m²"}


def parse_day(value, field: str | None) -> date:
    """A calendar date from an ISO text ``2024-03-05`` (or a ``date``).

    >>> parse_day("2024-03-05", "measured_on")
    datetime.date(2024, 3, 5)
    """
    if isinstance(value, datetime):
        value = value.date()
    if isinstance(value, date):
        day = value
    elif isinstance(value, str) and len(value.strip()) == 10:
        try:
            day = date.fromisoformat(value.strip())
        except ValueError:
            raise InputError(
                field, f"'{value.strip()}' is not a date; write it as year-month-day, e.g. 2024-03-05"
            ) from None
    else:
        raise InputError(field, "must be a date written as year-month-day, e.g. 2024-03-05")
    if not EARLIEST <= day <= LATEST:
        raise InputError(field, f"must be a date from {EARLIEST.year} to {LATEST.year}")
    return day


def parse_condition(value, field: str | None = "condition") -> str:
    """``as_found`` or ``after_cleaning`` (spaces and capitals allowed)."""
    text = "_".join(value.strip().lower().replace("-", " ").split()) if isinstance(value, str) else None
    if text not in CONDITIONS:
        raise InputError(field, "must be as_found (measured as the roll came off the press) or after_cleaning")
    return text


@dataclass(frozen=True)
class Reading:
    """One volume measurement: its date, the volume and the roll's condition."""

    on: date
    volume: object
    condition: str


@dataclass(frozen=True)
class Flag:
    code: str
    message: str


@dataclass(frozen=True)
class WearLine:
    """V(t) = intercept + slope × t, t in years since ``start``; volumes in BCM/in²."""

    start: date
    intercept: float
    slope: float

    def at(self, day: date) -> float:
        return self.intercept + self.slope * years_between(self.start, day)


@dataclass(frozen=True)
class WearPicture:
    """The answer of ``wear_picture``; volumes in BCM/in², the slope per year.

    ``line`` is None with fewer than two points (the start and at least one
    reading after cleaning on a later date); ``slope_stderr`` is None with
    fewer than three, and ``certainty`` then says "not enough measurements".
    ``percent_of_nominal`` [%] is of the latest reading (None if never
    measured); ``plugging`` a share (positive: below the line) of the latest
    as-found reading, None without one or without a line.
    """

    nominal: object
    start_volume: object
    start_from: str
    engraved_on: date
    readings: tuple[Reading, ...]
    line_points: int
    line: WearLine | None
    slope_per_year: object
    slope_stderr: object
    certainty: str
    latest: Reading | None
    percent_of_nominal: float | None
    latest_as_found: Reading | None
    plugging: float | None
    threshold: object
    replace_by: date | None
    flags: tuple[Flag, ...]

    @property
    def urgency(self) -> int:
        """0 for ``replace`` … 3 for ``measure``, 4 for a roll that is fine."""
        codes = [flag.code for flag in self.flags]
        return min((FLAG_ORDER.index(code) for code in codes), default=URGENCY_FINE)

    @property
    def codes(self) -> list[str]:
        return [flag.code for flag in self.flags]


def years_between(start: date, day: date) -> float:
    return (day - start).days / DAYS_PER_YEAR


def least_squares(points: list[tuple[float, float]]) -> tuple[float, float, float | None]:
    """Slope b, intercept a and the slope's standard error of the line y = a + b x.

    b = Sxy / Sxx,  a = ȳ − b x̄,  se(b) = √( Σ(y − a − b x)² / (n − 2) / Sxx )

    with Sxx = Σ(x − x̄)², Sxy = Σ(x − x̄)(y − ȳ). The standard error needs
    n ≥ 3 (None otherwise); Sxx must not be 0 (the caller makes sure).

    >>> least_squares([(0.0, 4.0), (1.0, 3.8), (2.0, 3.6)])  # doctest: +NUMBER
    (-0.2, 4.0, 0.0)
    """
    n = len(points)
    mean_x = math.fsum(x for x, _ in points) / n
    mean_y = math.fsum(y for _, y in points) / n
    sxx = math.fsum((x - mean_x) ** 2 for x, _ in points)
    sxy = math.fsum((x - mean_x) * (y - mean_y) for x, y in points)
    slope = sxy / sxx
    intercept = mean_y - slope * mean_x
    if n < 3:
        return slope, intercept, None
    residual = math.fsum((y - intercept - slope * x) ** 2 for x, y in points)
    return slope, intercept, math.sqrt(residual / (n - 2) / sxx)


def _reading(item, index: int, engraved_on: date, today: date) -> Reading:
    where = f"measurements[{index}]"
    if isinstance(item, Reading):
        on, volume, condition = item.on, item.volume, item.condition
    elif isinstance(item, dict):
        on, volume, condition = item.get("measured_on"), item.get("volume"), item.get("condition")
    else:
        on, volume, condition = item
    day = parse_day(on, f"{where}.measured_on")
    if day < engraved_on:
        raise InputError(f"{where}.measured_on", f"is before the roll was engraved ({engraved_on.isoformat()})")
    if day > today:
        raise InputError(f"{where}.measured_on", "is in the future")
    bcm = _checked_bcm(volume, f"{where}.volume")
    return Reading(day, Q_(bcm, BCM_PER_IN2), parse_condition(condition, f"{where}.condition"))


def _checked_bcm(volume, field: str) -> float:
    """A reading's volume in BCM/in², checked as ``parse_anilox_volume`` checks it.

    A stored register holds hundreds of readings per roll, already in BCM/in²:
    those in range are read as plain floats (pint's conversions were most of a
    wear picture's time); anything else goes through the full check and its message.
    """
    if isinstance(volume, _QUANTITY) and volume.units == BCM_PER_IN2:
        bcm = float(volume.magnitude)
        if 0 < bcm <= _HIGH_BCM:
            return bcm
    return parse_anilox_volume(volume, field).to(BCM_PER_IN2).magnitude


def _sayer(unit: str):
    """``say(bcm)``: a volume in BCM/in² as a message states it in ``unit``."""
    if unit not in MESSAGE_UNITS:
        raise InputError("message_unit", "must be BCM/in2 or cm3/m2")
    factor, label = Q_(1.0, "BCM/in2").to(unit).magnitude, MESSAGE_UNITS[unit]

    def say(bcm: float, spec: str = ".3g") -> str:
        return f"{bcm * factor:{spec}} {label}"

    return say


def _bcm(q) -> float:
    return q.to("BCM/in2").magnitude


def _forecast(line: WearLine | None, threshold: float) -> date | None:
    """The first day the line is at or below ``threshold``, if it falls and within reach."""
    if line is None or not line.slope < 0:
        return None
    years = (threshold - line.intercept) / line.slope
    if years > FORECAST_YEARS:
        return None
    # The day on which the line has reached the threshold (never a day late).
    day = line.start + timedelta(days=max(0, math.floor(years * DAYS_PER_YEAR)))
    return min(day, LATEST)


def wear_picture(
    nominal_volume,
    engraved_on,
    measurements=(),
    *,
    certificate_volume=None,
    cleanings=(),
    today=None,
    replace_at: float = WEAR_REPLACE_AT,
    clean_plugging: float = WEAR_CLEAN_PLUGGING,
    clean_below: float = WEAR_CLEAN_BELOW,
    audit_days: int = WEAR_AUDIT_DAYS,
    off_spec: float = WEAR_OFF_SPEC,
    message_unit: str = "BCM/in2",
) -> WearPicture:
    """How a roll is wearing: its wear line, plugging, forecast and flags.

    V(t) = a + b t                  least squares through (0, V₀) and every
                                     after-cleaning reading (tᵢ, Vᵢ), t in years
    b [BCM/in² per year], se(b) = √(Σ residual² / (n − 2) / Σ(t − t̄)²)
    percent of nominal = 100 × V_latest / V_nominal
    plugging = (V(t_f) − V_f) / V(t_f)   for the latest as-found reading (t_f, V_f)
    forecast: the date where V(t) = replace_at × V_nominal, when b < 0

    Parameters
    ----------
    nominal_volume : Quantity or str
        The roll's nominal cell volume [BCM/in², cm³/m²].
    engraved_on : date or str
        Its engraving date (ISO ``2023-04-01``); t = 0.
    measurements : iterable
        ``Reading``s, ``(date, volume, condition)`` tuples or dicts with
        ``measured_on``, ``volume``, ``condition`` (``as_found`` or
        ``after_cleaning``), in any order.
    certificate_volume : Quantity or str, optional
        The engraver's certified volume; V₀ when given, else the nominal.
    cleanings : iterable of date or str
        Dates of logged cleanings (a cleaning after the latest as-found reading
        turns ``clean`` into ``measure``: measure it again).
    today : date, optional
        The day to judge on (default: today).
    replace_at, clean_plugging, clean_below, off_spec : float
        Shares (common practice, ``calc.practice``): replace at 85 % of
        nominal; clean at 10 % plugging or below 90 % of nominal; off spec
        when the first reading is more than 10 % from V₀.
    audit_days : int
        Measure when the latest reading is older than this (90 days).
    message_unit : str
        ``'BCM/in2'`` or ``'cm3/m2'``: the unit the messages (flags,
        certainty) state volumes in; the numbers returned stay in BCM/in².

    Returns
    -------
    WearPicture (volumes in BCM/in², slope in BCM/in² per year).

    Notes
    -----
    Readings are sorted by date (entry order breaks ties). Flags:
    ``replace`` when the wear line today or the latest after-cleaning reading
    is at or below the threshold; ``off_spec`` when the first reading, taken
    within ``audit_days`` of the engraving (a new roll), lies outside
    ±``off_spec`` of V₀; ``clean`` when the latest reading is an
    as-found one, not followed by a cleaning, that is ``clean_plugging`` or
    more below the line or under ``clean_below`` of nominal; ``measure`` when
    never measured, measured longer than ``audit_days`` ago, or cleaned since
    the latest reading. A straight line is a model: wear slows or speeds with
    the blade, the ink and the press; the forecast is a guide for planning.

    References
    ----------
    Least squares and the slope's standard error: NIST/SEMATECH e-Handbook of
    Statistical Methods §4.1.4.1; thresholds common practice (REFERENCES.md
    "Anilox rolls").

    >>> picture = wear_picture("4 BCM/in2", "2021-01-01",
    ...     [("2022-01-01", "3.8 BCM/in2", "after_cleaning"), ("2023-01-01", "3.6 BCM/in2", "after_cleaning")],
    ...     today=date(2023, 2, 1))
    >>> picture.slope_per_year  # doctest: +NUMBER
    <Quantity(-0.2, 'BCM / inch ** 2')>
    >>> picture.replace_by, picture.codes
    (datetime.date(2024, 1, 1), [])
    """
    today = today or date.today()
    say = _sayer(message_unit)
    nominal = _bcm(parse_anilox_volume(nominal_volume, "nominal_volume"))
    start = parse_day(engraved_on, "engraved_on")
    if start > today:
        raise InputError("engraved_on", "is in the future")
    certificate = None
    if certificate_volume is not None:
        certificate = _bcm(parse_anilox_volume(certificate_volume, "certificate_volume"))
    replace_at = check_fraction(replace_at, "replace_at")
    clean_plugging = check_fraction(clean_plugging, "clean_plugging")
    clean_below = check_fraction(clean_below, "clean_below")
    off_spec = check_fraction(off_spec, "off_spec")
    audit_days = check_number(audit_days, "audit_days")
    cleaned = sorted(parse_day(day, f"cleanings[{i}]") for i, day in enumerate(cleanings))

    readings = [_reading(item, i, start, today) for i, item in enumerate(measurements)]
    readings.sort(key=lambda reading: reading.on)  # stable: entry order breaks ties
    v0 = certificate if certificate is not None else nominal
    threshold = replace_at * nominal

    after = [r for r in readings if r.condition == "after_cleaning"]
    points = [(0.0, v0)] + [(years_between(start, r.on), _bcm(r.volume)) for r in after]
    line, stderr = None, None
    if any(x > 0 for x, _ in points):
        slope, intercept, stderr = least_squares(points)
        line = WearLine(start, intercept, slope)
    if stderr is not None:
        certainty = f"± {say(stderr, '.2g')} per year (standard error, {len(points)} points)"
    else:
        certainty = NOT_ENOUGH

    latest = readings[-1] if readings else None
    as_found = [r for r in readings if r.condition == "as_found"]
    latest_found = as_found[-1] if as_found else None
    plugging = None
    if latest_found is not None and line is not None:
        expected = line.at(latest_found.on)
        if expected > 0:
            plugging = (expected - _bcm(latest_found.volume)) / expected
    replace_by = _forecast(line, threshold)

    flags: list[Flag] = []
    line_today = line.at(today) if line is not None else None
    if line_today is not None and line_today <= threshold:
        flags.append(
            Flag(
                "replace",
                f"its wear line is at {say(line_today)} today, at or below "
                f"the {replace_at:.0%} of nominal ({say(threshold)}) set for replacement",
            )
        )
    elif after and _bcm(after[-1].volume) <= threshold:
        flags.append(
            Flag(
                "replace",
                f"it read {say(_bcm(after[-1].volume))} after cleaning on "
                f"{after[-1].on.isoformat()}, at or below {replace_at:.0%} of nominal",
            )
        )
    if readings and (readings[0].on - start).days <= audit_days:
        first = _bcm(readings[0].volume)
        if abs(first - v0) > off_spec * v0 * (1 + 1e-9):
            basis = "certificate" if certificate is not None else "nominal"
            flags.append(
                Flag(
                    "off_spec",
                    f"its first measurement ({say(first)}, {readings[0].on.isoformat()}) "
                    f"is {abs(first - v0) / v0:.0%} from its {basis} volume "
                    f"({say(v0)}); more than ±{off_spec:.0%}",
                )
            )
    # A cleaning on the day of an after-cleaning reading is the one that reading followed.
    cleaned_since = latest is not None and any(
        day > latest.on or (day == latest.on and latest.condition == "as_found") for day in cleaned
    )
    if latest is not None and latest.condition == "as_found" and not cleaned_since:
        volume = _bcm(latest.volume)
        if plugging is not None and plugging >= clean_plugging * (1 - 1e-9):
            flags.append(
                Flag(
                    "clean",
                    f"it read {say(volume)} as found on {latest.on.isoformat()}, "
                    f"{plugging:.0%} below its wear line: the cells are likely plugged",
                )
            )
        elif volume < clean_below * nominal:
            flags.append(
                Flag(
                    "clean",
                    f"it read {say(volume)} as found on {latest.on.isoformat()}, "
                    f"under {clean_below:.0%} of nominal ({say(clean_below * nominal)})",
                )
            )
    if latest is None:
        flags.append(Flag("measure", "never measured: measure it to check it against its certificate"))
    elif cleaned_since:
        flags.append(Flag("measure", f"cleaned on {cleaned[-1].isoformat()} and not measured since"))
    elif (today - latest.on).days > audit_days:
        flags.append(
            Flag(
                "measure",
                f"last measured {(today - latest.on).days} days ago (the audit interval is {audit_days:g} days)",
            )
        )

    return WearPicture(
        nominal=Q_(nominal, "BCM/in2"),
        start_volume=Q_(v0, "BCM/in2"),
        start_from="certificate" if certificate is not None else "nominal",
        engraved_on=start,
        readings=tuple(readings),
        line_points=len(points),
        line=line,
        slope_per_year=None if line is None else Q_(line.slope, "BCM/in2"),
        slope_stderr=None if stderr is None else Q_(stderr, "BCM/in2"),
        certainty=certainty,
        latest=latest,
        percent_of_nominal=None if latest is None else 100.0 * _bcm(latest.volume) / nominal,
        latest_as_found=latest_found,
        plugging=plugging,
        threshold=Q_(threshold, "BCM/in2"),
        replace_by=replace_by,
        flags=tuple(sorted(flags, key=lambda flag: FLAG_ORDER.index(flag.code))),
    )
