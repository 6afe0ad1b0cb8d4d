"""Colour strength: solid ink density against ink film (Tollenaar–Ernst), learned from the shop's prints.

Density rises with the ink film and levels off. Tollenaar and Ernst (1962)
describe the curve with two numbers, the ceiling D∞ that a thick film
approaches and the rate m at which density rises towards it::

    D = D∞ · (1 − e^(−m·x))            x the wet film [µm], m [1/µm]
    x = −ln(1 − D/D∞) / m              the film a density D needs (D < D∞)

Both depend on ink, substrate and press, so they are fitted by least squares
to densities read from the shop's own prints, each with the wet film it was
printed with, or the anilox volume and the share of it that reached the
substrate (then x = V × T, since 1 cm³/m² is a 1 µm film).

Densities are plain numbers (optical density, a logarithm of reflectance).

References
----------
D. Tollenaar and P. A. H. Ernst, "Optical density and ink layer thickness",
in *Advances in Printing Science and Technology*, vol. 2, Pergamon, 1962.

>>> round(density_tollenaar_ernst("1 um", 1.6, "1.0 1/um"), 5)
1.01139
>>> film_for_density(1.30, 1.6, "1.0 1/um")  # doctest: +NUMBER
<Quantity(1.67398, 'micrometer')>
"""

from __future__ import annotations

import math
import statistics
from dataclasses import dataclass, field

from calc.errors import InputError
from calc.film import ANILOX_VOLUME_HIGH, parse_anilox_volume
from calc.steps import Count, Step, Working
from calc.units import (
    LENGTH,
    LINE_SCREEN,
    MIN_MAGNITUDE,
    Q_,
    check_fraction,
    check_number,
    check_range,
    parse_quantity,
    require_dimension,
)

# --- Limits (common practice, from memory; not published oracles) -------------
# Reflection densitometers read solids up to about 2.5–3 and are specified to
# about 4; a reading above 4 is a typing slip.
DENSITY_HIGH = 4.0
# A fitted ceiling above 3 is no print's: it means the readings have not
# levelled off and the fit is extrapolating a nearly straight line.
D_INF_HIGH = 3.0
# A ceiling known no better than ±25 %, or a rate known no better than ±100 %
# (one standard error), is no answer to give a press.
D_INF_RELATIVE_SE_HIGH = 0.25
M_RELATIVE_SE_HIGH = 1.0
# Wet films on a substrate are a few µm; the thickest anilox's volume read as
# a film (100 BCM/in² ≈ 155 µm) bounds every real one.
FILM_HIGH = ANILOX_VOLUME_HIGH.to("um")
# The rate m of real inks is of order 1/µm; 1000/µm (or 1e-6/µm) is no ink's.
M_LOW, M_HIGH = Q_(1e-6, "1/um"), Q_(1e3, "1/um")
MIN_READINGS = 3
MAX_READINGS = 60
# Bands are two-sided 95 % confidence bands of the fitted curve.
CONFIDENCE = 0.95


class Plain(float):
    """A plain number in the working (a density, a correlation), read as a number, not a share."""


# --- Reading the inputs -----------------------------------------------------------


def check_density(value, field: str | None = "density", what: str = "a density reading") -> float:
    """A solid ink density: a plain number from 0 to 4."""
    value = check_number(value, field, allow_negative=True)
    if value < 0:
        raise InputError(field, f"{what} cannot be negative (unprinted stock reads 0 or a little above)")
    if value > DENSITY_HIGH:
        raise InputError(field, f"{what} of {value:g} is beyond what a densitometer reads (at most {DENSITY_HIGH:g})")
    return value


def parse_film(text, field: str | None = "film"):
    """A wet ink film: a length from 0 to 155 µm (``"1.2 um"``, ``"0.05 mil"``)."""
    film = parse_quantity(text, field)
    require_dimension(film, LENGTH, field, "an ink film thickness", "1.2 um or 0.05 mil")
    check_range(film, Q_(0.0, "um"), FILM_HIGH, field, "an ink film", low_inclusive=True)
    return film


def parse_rate(text, field: str | None = "m"):
    """The Tollenaar–Ernst rate m: per length (``"1.2 1/um"``, ``"1.2 /um"``, ``"30 /mil"``)."""
    if isinstance(text, str):
        number, _, unit = text.strip().partition(" ")
        if unit.strip().startswith("/"):
            text = f"{number} 1{unit.strip()}"
    rate = parse_quantity(text, field)
    require_dimension(rate, LINE_SCREEN, field, "a rate per film thickness", "1.2 1/um")
    value = rate.to("1/um").magnitude
    if not M_LOW.magnitude <= value <= M_HIGH.magnitude:
        raise InputError(
            field, f"a rate m of {value:g} /µm is no ink's (from {M_LOW.magnitude:g} to {M_HIGH.magnitude:g})"
        )
    return rate


def check_ceiling(value, field: str | None = "d_inf") -> float:
    """The ceiling D∞: more than 0, at most 3."""
    value = check_number(value, field, allow_negative=True)
    if not 0.0 < value <= D_INF_HIGH:
        raise InputError(field, f"the ceiling D∞ must be more than 0 and at most {D_INF_HIGH:g}")
    return value


@dataclass(frozen=True)
class Reading:
    """One print: the wet film it was printed with [µm] and the density read on it."""

    film: object
    density: float
    anilox_volume: object | None = None
    transfer: float | None = None


def make_reading(density, film=None, anilox_volume=None, transfer=None, field: str = "") -> Reading:
    """A reading from a density and either the film or the anilox volume and transfer share.

    ``field`` is the reading's place (``"readings[2]"``); errors name its fields.
    """
    where = f"{field}." if field else ""
    density = check_density(density, where + "density")
    if film is not None:
        if anilox_volume is not None or transfer is not None:
            raise InputError(where + "film", "give the film, or the anilox volume and transfer, not both")
        return Reading(parse_film(film, where + "film").to("um"), density)
    if anilox_volume is None:
        raise InputError(where + "film", "give the film, or the anilox volume and the transfer share")
    volume = parse_anilox_volume(anilox_volume, where + "anilox_volume")
    if transfer is None:
        raise InputError(where + "transfer", "is required with the anilox volume (the share that reached the stock)")
    share = check_fraction(transfer, where + "transfer")
    if share == 0:
        raise InputError(where + "transfer", "must be more than 0: with no transfer nothing was printed")
    film_um = volume.to("cm3/m2").magnitude * share  # 1 cm³/m² is a 1 µm film
    if 0.0 < film_um < MIN_MAGNITUDE:
        raise InputError(where + "transfer", "is too small: volume × transfer gives a film far too thin to read")
    return Reading(Q_(film_um, "um"), density, volume, share)


# --- The formula and its inverse --------------------------------------------------


def _rate_per_um(m) -> float:
    return parse_rate(m).to("1/um").magnitude


def density_tollenaar_ernst(film, d_inf, m) -> float:
    """Solid ink density of a film by Tollenaar–Ernst.

    D = D∞ · (1 − e^(−m·x))

    Parameters
    ----------
    film : Quantity or str
        Wet ink film x [µm, mil, or a volume per area].
    d_inf : float
        The curve's ceiling D∞ (density of a very thick film).
    m : Quantity or str
        Rate of rise [1/µm].

    Returns
    -------
    float, the density.

    References
    ----------
    Tollenaar and Ernst (1962), see the module docstring.
    """
    x = parse_film(film).to("um").magnitude
    return check_ceiling(d_inf) * (1.0 - math.exp(-_rate_per_um(m) * x))


def film_for_density(target, d_inf, m, field: str | None = "target_density"):
    """The wet film a target density needs, by Tollenaar–Ernst.

    x = −ln(1 − D/D∞) / m, for 0 < D < D∞

    A target at or above the ceiling D∞ is reached by no film: an
    :class:`InputError` naming ``field`` says so, and what the ceiling is.

    Parameters
    ----------
    target : float
        Target solid ink density D.
    d_inf : float
        The curve's ceiling D∞.
    m : Quantity or str
        Rate of rise [1/µm].

    Returns
    -------
    Quantity [µm]

    References
    ----------
    Tollenaar and Ernst (1962), see the module docstring.
    """
    ceiling = check_ceiling(d_inf)
    rate = _rate_per_um(m)
    target = check_density(target, field, "a target density")
    if target <= 0:
        raise InputError(field, "a target density must be more than 0")
    if target >= ceiling:
        raise InputError(
            field,
            f"a density of {target:g} cannot be reached: this ink's curve levels off at D∞ = {ceiling:.3g}; "
            "no film, however thick, prints stronger (a stronger ink or another stock can)",
        )
    return Q_(-math.log1p(-target / ceiling) / rate, "um")


# --- The fit ----------------------------------------------------------------------


# Two-sided 95 % critical values of Student's t by degrees of freedom, from the
# standard table (NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.7.2,
# "Critical values of the Student's t distribution", column 0.975).
T_975 = {
    1: 12.706, 2: 4.303, 3: 3.182, 4: 2.776, 5: 2.571, 6: 2.447, 7: 2.365, 8: 2.306, 9: 2.262, 10: 2.228,
    11: 2.201, 12: 2.179, 13: 2.160, 14: 2.145, 15: 2.131, 16: 2.120, 17: 2.110, 18: 2.101, 19: 2.093,
    20: 2.086, 21: 2.080, 22: 2.074, 23: 2.069, 24: 2.064, 25: 2.060, 26: 2.056, 27: 2.052, 28: 2.048,
    29: 2.045, 30: 2.042, 40: 2.021, 50: 2.009, 60: 2.000, 100: 1.984,
}  # fmt: skip


def t_quantile(dof: int) -> float:
    """Two-sided 95 % quantile of Student's t with ``dof`` degrees of freedom.

    From the table :data:`T_975`; between its rows beyond 30, interpolated
    linearly in 1/dof (the usual way to read such a table).

    >>> t_quantile(4), t_quantile(45)
    (2.776, 2.014)
    """
    if dof < 1:
        raise ValueError("needs at least one degree of freedom")
    if dof in T_975:
        return T_975[dof]
    rows = sorted(T_975)
    above = next((row for row in rows if row > dof), None)
    if above is None:
        return 1.960
    below = max(row for row in rows if row < dof)
    share = (1 / below - 1 / dof) / (1 / below - 1 / above)
    return round(T_975[below] + share * (T_975[above] - T_975[below]), 3)


@dataclass(frozen=True)
class Expected:
    """A density expected from a film, with its 95 % band from the fit's uncertainty."""

    film: object
    density: float
    low: float | None
    high: float | None
    standard_error: float | None


@dataclass(frozen=True)
class Needed:
    """The film a target density needs, with its 95 % band from the fit's uncertainty."""

    target: float
    film: object
    low: object | None
    high: object | None


@dataclass
class DensityFit:
    """A Tollenaar–Ernst curve with its uncertainty.

    ``d_inf`` and ``m`` (a Quantity [1/µm]) with their standard errors, the
    correlation between the two estimates, the residual spread (standard
    deviation of a reading about the curve, n − 2 degrees of freedom) and
    the number of readings. The uncertainties are None for a curve given by
    its parameters alone.
    """

    d_inf: float
    m: object
    d_inf_se: float | None = None
    m_se: object | None = None
    correlation: float | None = None
    count: int | None = None
    residual_sd: float | None = None
    readings: list[Reading] = field(default_factory=list)
    steps: list[Step] = field(default_factory=list)

    @property
    def has_band(self) -> bool:
        return self.d_inf_se is not None and self.count is not None and self.count > 2

    def _covariance(self):
        m_se = self.m_se.to("1/um").magnitude
        cov = self.correlation * self.d_inf_se * m_se
        return self.d_inf_se**2, cov, m_se**2

    def _t(self) -> float:
        return t_quantile(self.count - 2)

    def density_at(self, film) -> Expected:
        """D at ``film``, with the 95 % confidence band of the curve (delta method).

        var D = gᵀ Σ g with g = (∂D/∂D∞, ∂D/∂m) = (1 − e^(−m·x), D∞·x·e^(−m·x)).
        """
        x = parse_film(film).to("um").magnitude
        m = self.m.to("1/um").magnitude
        e = math.exp(-m * x)
        density = self.d_inf * (1.0 - e)
        if not self.has_band:
            return Expected(Q_(x, "um"), density, None, None, None)
        v_dd, v_dm, v_mm = self._covariance()
        g_d, g_m = 1.0 - e, self.d_inf * x * e
        se = math.sqrt(max(g_d * g_d * v_dd + 2 * g_d * g_m * v_dm + g_m * g_m * v_mm, 0.0))
        half = self._t() * se
        return Expected(Q_(x, "um"), density, max(density - half, 0.0), density + half, se)

    def film_for(self, target, field: str | None = "target_density") -> Needed:
        """The film ``target`` needs, with a 95 % band (delta method on the inverse).

        x = −ln(1 − D/D∞)/m; ∂x/∂D∞ = −D / (m·D∞²·(1 − D/D∞)), ∂x/∂m = −x/m.
        The low end is not below zero.
        """
        film = film_for_density(target, self.d_inf, self.m, field)
        if not self.has_band:
            return Needed(target, film, None, None)
        x = film.to("um").magnitude
        m = self.m.to("1/um").magnitude
        g_d = -target / (m * self.d_inf**2 * (1.0 - target / self.d_inf))
        g_m = -x / m
        v_dd, v_dm, v_mm = self._covariance()
        se = math.sqrt(max(g_d * g_d * v_dd + 2 * g_d * g_m * v_dm + g_m * g_m * v_mm, 0.0))
        half = self._t() * se
        return Needed(target, film, Q_(max(x - half, 0.0), "um"), Q_(x + half, "um"))


def curve_from_parameters(d_inf, m, d_inf_se=None, m_se=None, correlation=None, count=None) -> DensityFit:
    """A curve from fitted parameters (as :func:`fit_tollenaar_ernst` reports them).

    The uncertainty (for bands) needs all of ``d_inf_se``, ``m_se``,
    ``correlation`` and ``count``; with none of them the curve has no band.
    """
    ceiling = check_ceiling(d_inf)
    rate = parse_rate(m).to("1/um")
    given = {"d_inf_se": d_inf_se, "m_se": m_se, "correlation": correlation, "count": count}
    if all(value is None for value in given.values()):
        return DensityFit(ceiling, rate)
    for name, value in given.items():
        if value is None:
            raise InputError(name, "is needed for a band, with d_inf_se, m_se, correlation and count (as a fit gives)")
    d_inf_se = check_number(d_inf_se, "d_inf_se")
    m_se = parse_rate_se(m_se)
    correlation = check_number(correlation, "correlation", allow_negative=True)
    if not -1.0 <= correlation <= 1.0:
        raise InputError("correlation", "must be from -1 to 1")
    if isinstance(count, bool) or not isinstance(count, int) or not MIN_READINGS <= count <= MAX_READINGS:
        raise InputError(
            "count", f"must be the whole number of readings the fit rests on ({MIN_READINGS} to {MAX_READINGS})"
        )
    return DensityFit(ceiling, rate, d_inf_se, m_se, correlation, count)


def parse_rate_se(text, field: str = "m_se"):
    """A standard error of m: a non-negative rate per film thickness."""
    if isinstance(text, str):
        number, _, unit = text.strip().partition(" ")
        if unit.strip().startswith("/"):
            text = f"{number} 1{unit.strip()}"
    rate = parse_quantity(text, field)
    require_dimension(rate, LINE_SCREEN, field, "a rate per film thickness", "0.05 1/um")
    return rate.to("1/um")


def _start(films: list[float], densities: list[float]) -> tuple[float, float]:
    """A starting point: a ceiling a little above the strongest reading, the median rate that implies."""
    d0 = max(densities) * 1.05
    rates = [-math.log1p(-d / d0) / x for x, d in zip(films, densities, strict=True) if x > 0 and 0 < d < d0]
    m0 = statistics.median(rates) if rates else 1.0 / statistics.fmean(films)
    return d0, m0


def _sum_of_squares(films, densities, d_inf: float, m: float) -> float:
    return math.fsum((d - d_inf * (1.0 - math.exp(-m * x))) ** 2 for x, d in zip(films, densities, strict=True))


def _normal_matrix(films, densities, d_inf: float, m: float):
    """JᵀJ and Jᵀr of the residuals r = D − D∞(1 − e^(−m·x)) at (D∞, m), J the model's Jacobian."""
    a = b = c = g_d = g_m = 0.0
    for x, d in zip(films, densities, strict=True):
        e = math.exp(-m * x)
        j_d, j_m = 1.0 - e, d_inf * x * e  # ∂D/∂D∞, ∂D/∂m
        r = d - d_inf * j_d
        a, b, c = a + j_d * j_d, b + j_d * j_m, c + j_m * j_m
        g_d, g_m = g_d + j_d * r, g_m + j_m * r
    return (a, b, c), (g_d, g_m)


def _levenberg_marquardt(films, densities, d_inf: float, m: float, iterations: int = 500):
    """Least squares of two parameters by Levenberg–Marquardt (Marquardt's scaling of the diagonal).

    Each step solves (JᵀJ + λ·diag JᵀJ) δ = Jᵀr; a step that lowers the sum of
    squares is taken and λ shrinks, else λ grows. Stops when a step changes
    both parameters by less than 1e-12 of their size. Returns (D∞, m) or None
    if it does not settle.
    """
    damping = 1e-3
    sse = _sum_of_squares(films, densities, d_inf, m)
    for _ in range(iterations):
        (a, b, c), (g_d, g_m) = _normal_matrix(films, densities, d_inf, m)
        while True:
            a_l, c_l = a * (1.0 + damping), c * (1.0 + damping)
            det = a_l * c_l - b * b
            if det <= 0 or not math.isfinite(det):
                damping *= 10.0
                if damping > 1e12:
                    return None
                continue
            step_d = (c_l * g_d - b * g_m) / det
            step_m = (a_l * g_m - b * g_d) / det
            trial_d, trial_m = d_inf + step_d, m + step_m
            if trial_m > 0 and trial_d > 0:
                trial = _sum_of_squares(films, densities, trial_d, trial_m)
                if trial <= sse:
                    break
            damping *= 10.0
            if damping > 1e12:
                return (d_inf, m)  # no step lowers the sum of squares: a minimum
        settled = abs(step_d) <= 1e-12 * abs(trial_d) and abs(step_m) <= 1e-12 * abs(trial_m)
        d_inf, m, sse = trial_d, trial_m, trial
        damping = max(damping / 10.0, 1e-12)
        if settled or sse == 0.0:
            return (d_inf, m)
    return None


def fit_tollenaar_ernst(readings) -> DensityFit:
    """Fit D∞ and m of Tollenaar–Ernst to readings by least squares.

    Minimises Σ (Dᵢ − D∞ (1 − e^(−m·xᵢ)))² by Levenberg–Marquardt with the
    model's analytic Jacobian, in plain Python: the same method and the same
    covariance as ``scipy.optimize.curve_fit`` (its default for unbounded
    problems), which the tests use as a reference. Not scipy itself: pint
    imports numpy and scipy at start-up whenever they are installed, which
    would cost every start of the server about a third of a second for a fit
    of two numbers. Standard errors are the square roots of the diagonal of
    the covariance s²·(JᵀJ)⁻¹ at the minimum, s² = Σ rᵢ² / (n − 2); the
    residual spread is s.

    Refused with an :class:`InputError` in plain words, never a wrong number:
    fewer than three readings, or films at fewer than three different values;
    readings with no density above zero; readings that do not level off (a
    ceiling D∞ above 3, a ceiling known no better than ±25 %, a covariance
    that cannot be estimated); a rate m that the readings do not pin down
    (±100 %); a fit that does not settle.

    Parameters
    ----------
    readings : sequence of Reading
        Film [µm] and density of each print (see :func:`make_reading`).

    Returns
    -------
    DensityFit

    References
    ----------
    Tollenaar and Ernst (1962), see the module docstring.
    """
    readings = list(readings)
    n = len(readings)
    if n < MIN_READINGS:
        raise InputError(
            "readings",
            f"a curve needs at least {MIN_READINGS} readings (this has {n}): read prints at three or more films",
        )
    if n > MAX_READINGS:
        raise InputError("readings", f"at most {MAX_READINGS} readings, please (this has {n})")
    films = [reading.film.to("um").magnitude for reading in readings]
    densities = [reading.density for reading in readings]
    if len({round(x, 9) for x in films}) < MIN_READINGS:
        raise InputError("readings", "the readings need three or more different films to show the curve's shape")
    if max(densities) <= 0:
        raise InputError("readings", "every density is zero: there is no curve to fit")

    not_level = (
        "the readings do not level off, so the curve's ceiling D∞ cannot be told: "
        "add readings from heavier films (larger anilox volumes)"
    )
    try:
        found = _levenberg_marquardt(films, densities, *_start(films, densities))
    except (OverflowError, ZeroDivisionError, ValueError):
        found = None
    if found is None:
        raise InputError("readings", f"the fit did not settle on a curve; {not_level}")
    d_inf, m = found
    if m <= 0 or d_inf <= 0:
        raise InputError("readings", "the densities do not rise with the film, so no Tollenaar–Ernst curve fits them")
    sse = _sum_of_squares(films, densities, d_inf, m)
    (a, b, c), _ = _normal_matrix(films, densities, d_inf, m)
    det = a * c - b * b
    if not det > 1e-12 * a * c:  # JᵀJ singular: the sum of squares is flat along some direction
        raise InputError("readings", not_level)
    s2 = sse / (n - 2)
    var_d, cov_dm, var_m = s2 * c / det, -s2 * b / det, s2 * a / det
    d_inf_se, m_se = math.sqrt(var_d), math.sqrt(var_m)
    if d_inf > D_INF_HIGH or d_inf_se > D_INF_RELATIVE_SE_HIGH * d_inf:
        raise InputError("readings", not_level)
    if m_se > M_RELATIVE_SE_HIGH * m or not M_LOW.magnitude <= m <= M_HIGH.magnitude:
        raise InputError(
            "readings",
            "the readings do not show how fast density rises with film: add readings from thinner films",
        )
    correlation = cov_dm / (d_inf_se * m_se) if d_inf_se > 0 and m_se > 0 else 0.0
    correlation = min(max(correlation, -1.0), 1.0)
    residual_sd = math.sqrt(s2)

    work = Working()
    formula = "D = D∞ (1 − e^(−m·x)); D∞, m minimise Σ (Dᵢ − D(xᵢ))²"
    work.add("Ceiling of the curve (least squares)", "D∞", formula, {"n": Count(n)}, Plain(d_inf))
    work.add("Rate of rise (least squares)", "m", formula, {"n": Count(n)}, Q_(m, "1/um"))
    work.add(
        "Residual spread of a reading about the curve",
        "s",
        "s = √(Σ (Dᵢ − D(xᵢ))² / (n − 2))",
        {"n": Count(n)},
        Plain(residual_sd),
    )
    return DensityFit(
        d_inf,
        Q_(m, "1/um"),
        d_inf_se,
        Q_(m_se, "1/um"),
        correlation,
        n,
        residual_sd,
        readings,
        work.steps,
    )


# --- The answers ------------------------------------------------------------------


@dataclass
class VolumeFor:
    """The film and the anilox volume a target density needs at a transfer share."""

    curve: DensityFit
    needed: Needed
    transfer: float
    anilox_volume: object
    anilox_low: object | None
    anilox_high: object | None
    beyond_readings: bool
    steps: list[Step] = field(default_factory=list)


def volume_for_density(curve: DensityFit, target, transfer, field: str | None = "target_density") -> VolumeFor:
    """The anilox volume that prints ``target`` at ``transfer`` (share of the cell volume on the stock).

    x = −ln(1 − D/D∞) / m;  V = x / T  (1 µm of film is 1 cm³/m²).
    """
    share = check_fraction(transfer, "transfer")
    if share == 0:
        raise InputError("transfer", "must be more than 0: with no transfer no volume prints anything")
    needed = curve.film_for(target, field)
    work = Working()
    work.steps.extend(curve.steps)
    x = needed.film.to("um").magnitude
    work.add(
        "Film for the target density",
        "x",
        "x = −ln(1 − D/D∞) / m",
        {"D": Plain(needed.target), "D∞": Plain(curve.d_inf), "m": curve.m},
        needed.film,
    )
    volume = work.add(
        "Anilox volume that lays that film", "V", "V = x / T", {"x": needed.film, "T": share}, Q_(x / share, "cm3/m2")
    )
    low = None if needed.low is None else Q_(needed.low.to("um").magnitude / share, "cm3/m2")
    high = None if needed.high is None else Q_(needed.high.to("um").magnitude / share, "cm3/m2")
    beyond = bool(curve.readings) and x > max(reading.film.to("um").magnitude for reading in curve.readings)
    return VolumeFor(curve, needed, share, volume, low, high, beyond, work.steps)


def density_from_volume(curve: DensityFit, anilox_volume=None, transfer=None, film=None) -> tuple[Expected, list[Step]]:
    """The density expected from an anilox volume at a transfer share (or from a film), with its band."""
    work = Working()
    work.steps.extend(curve.steps)
    if film is not None:
        if anilox_volume is not None or transfer is not None:
            raise InputError("film", "give the film, or the anilox volume and transfer, not both")
        x = parse_film(film).to("um")
    else:
        if anilox_volume is None:
            raise InputError("anilox_volume", "give the anilox volume and transfer share, or the film")
        volume = parse_anilox_volume(anilox_volume)
        if transfer is None:
            raise InputError("transfer", "is required with the anilox volume (the share that reaches the stock)")
        share = check_fraction(transfer, "transfer")
        x = work.add(
            "Film on the stock",
            "x",
            "x = V × T",
            {"V": volume, "T": share},
            Q_(volume.to("cm3/m2").magnitude * share, "um"),
        )
    expected = curve.density_at(x)
    work.add(
        "Density expected from that film",
        "D",
        "D = D∞ (1 − e^(−m·x))",
        {"D∞": Plain(curve.d_inf), "m": curve.m, "x": x},
        Plain(expected.density),
    )
    return expected, work.steps
