"""Tollenaar–Ernst density against film: the formula, its inverse and the least-squares fit.

Source of the model: D. Tollenaar and P. A. H. Ernst, "Optical density and ink
layer thickness", Advances in Printing Science and Technology vol. 2 (1962):
D = D∞ (1 − e^(−m·x)), inverse x = −ln(1 − D/D∞)/m. The worked values below
are hand calculations from that formula (shown in the comments).
"""

from __future__ import annotations

import math
import random
import subprocess
import sys

import pytest

from calc import InputError
from calc.density import (
    D_INF_HIGH,
    MIN_READINGS,
    curve_from_parameters,
    density_from_volume,
    density_tollenaar_ernst,
    film_for_density,
    fit_tollenaar_ernst,
    make_reading,
    volume_for_density,
)
from calc.units import Q_

FILMS = (0.4, 0.8, 1.2, 1.8, 2.6, 4.0)  # µm, a spread such as six anilox rolls give


def curve(x: float, d_inf: float, m: float) -> float:
    return d_inf * (1.0 - math.exp(-m * x))


def readings_from(d_inf: float, m: float, films=FILMS, noise=None):
    return [
        make_reading(curve(x, d_inf, m) + (noise[i] if noise else 0.0), film=f"{x} um") for i, x in enumerate(films)
    ]


# --- the formula and its inverse (hand-worked) --------------------------------------


def test_density_at_one_micrometre_by_hand():
    # D∞ = 1.6, m = 1.0 /µm, x = 1.0 µm: D = 1.6 × (1 − e^(−1)) = 1.6 × 0.632121 = 1.01139
    assert density_tollenaar_ernst("1.0 um", 1.6, "1.0 1/um") == pytest.approx(1.01139, abs=5e-6)


def test_film_for_1_30_by_hand():
    # x = −ln(1 − 1.30/1.6) / 1.0 = −ln(0.1875) = 1.67398 µm
    film = film_for_density(1.30, 1.6, "1.0 1/um")
    assert film.to("um").magnitude == pytest.approx(1.67398, abs=5e-6)


def test_inverse_undoes_the_formula_in_other_units():
    # 0.05 mil = 1.27 µm exactly (1 mil = 25.4 µm, NIST SP 811); m = 25.4 /mil is 1 /µm.
    density = density_tollenaar_ernst("0.05 mil", 1.45, "25.4 /mil")
    assert density == pytest.approx(1.45 * (1 - math.exp(-1.27)), rel=1e-12)
    assert film_for_density(density, 1.45, "1 /um").to("um").magnitude == pytest.approx(1.27, rel=1e-12)


def test_zero_film_prints_nothing():
    assert density_tollenaar_ernst("0 um", 1.6, "1 /um") == 0.0


@pytest.mark.parametrize("target", [1.6, 1.75])
def test_target_at_or_above_the_ceiling_is_unreachable(target):
    with pytest.raises(InputError) as caught:
        film_for_density(target, 1.6, "1 /um")
    assert caught.value.field == "target_density"
    assert f"{target:g}" in caught.value.message and "D∞ = 1.6" in caught.value.message


@pytest.mark.parametrize(
    ("call", "field", "words"),
    [
        (lambda: density_tollenaar_ernst("1.2 g/m2", 1.6, "1 /um"), "film", "film thickness"),
        (lambda: density_tollenaar_ernst("-1 um", 1.6, "1 /um"), "film", "must not be negative"),
        (lambda: density_tollenaar_ernst("1 um", 1.6, "1 um"), "m", "rate per film"),
        (lambda: density_tollenaar_ernst("1 um", 0, "1 /um"), "d_inf", "more than 0"),
        (lambda: density_tollenaar_ernst("1 um", 4.5, "1 /um"), "d_inf", "at most 3"),
        (lambda: film_for_density(-0.2, 1.6, "1 /um"), "target_density", "negative"),
        (lambda: film_for_density(0, 1.6, "1 /um"), "target_density", "more than 0"),
    ],
)
def test_bad_input_names_its_field(call, field, words):
    with pytest.raises(InputError) as caught:
        call()
    assert caught.value.field == field
    assert words in caught.value.message


# --- readings -------------------------------------------------------------------------


def test_reading_from_volume_and_transfer_is_their_product():
    # 4 BCM/in² = 4/0.64516 cm³/m² (exact, NIST SP 811 inch); × 0.25 transfer = 1.55000 µm
    reading = make_reading(1.2, anilox_volume="4 BCM/in2", transfer=0.25)
    assert reading.film.to("um").magnitude == pytest.approx(4 / 0.64516 * 0.25, rel=1e-12)


@pytest.mark.parametrize(
    ("kwargs", "field", "words"),
    [
        ({"density": -0.1, "film": "1 um"}, "readings[2].density", "negative"),
        ({"density": 5.0, "film": "1 um"}, "readings[2].density", "densitometer"),
        ({"density": "high", "film": "1 um"}, "readings[2].density", "number"),
        ({"density": 1.0, "film": "1 kg"}, "readings[2].film", "film thickness"),
        ({"density": 1.0}, "readings[2].film", "give the film"),
        ({"density": 1.0, "anilox_volume": "4 BCM/in2"}, "readings[2].transfer", "required"),
        ({"density": 1.0, "anilox_volume": "4 BCM/in2", "transfer": 0}, "readings[2].transfer", "more than 0"),
        ({"density": 1.0, "anilox_volume": "4 BCM/in2", "transfer": 1.5}, "readings[2].transfer", "fraction"),
        ({"density": 1.0, "film": "1 um", "anilox_volume": "4 BCM/in2"}, "readings[2].film", "not both"),
        ({"density": 1.0, "anilox_volume": "4 g", "transfer": 0.3}, "readings[2].anilox_volume", "volume per area"),
    ],
)
def test_bad_reading_names_its_field(kwargs, field, words):
    with pytest.raises(InputError) as caught:
        make_reading(field="readings[2]", **kwargs)
    assert caught.value.field == field
    assert words in caught.value.message


# --- the fit --------------------------------------------------------------------------


@pytest.mark.parametrize(("d_inf", "m"), [(1.6, 1.0), (1.35, 0.6), (1.05, 2.2), (1.9, 0.45)])
def test_fit_recovers_exact_parameters(d_inf, m):
    fit = fit_tollenaar_ernst(readings_from(d_inf, m))
    assert fit.d_inf == pytest.approx(d_inf, rel=1e-7)
    assert fit.m.to("1/um").magnitude == pytest.approx(m, rel=1e-7)
    assert fit.residual_sd == pytest.approx(0.0, abs=1e-7)
    assert fit.count == len(FILMS)


@pytest.mark.parametrize("seed", range(8))
def test_fit_with_noise_lies_within_its_standard_errors(seed):
    rng = random.Random(seed)
    noise = [rng.gauss(0.0, 0.02) for _ in FILMS]
    fit = fit_tollenaar_ernst(readings_from(1.6, 1.0, noise=noise))
    assert abs(fit.d_inf - 1.6) < 3 * fit.d_inf_se
    assert abs(fit.m.to("1/um").magnitude - 1.0) < 3 * fit.m_se.to("1/um").magnitude
    # the residual spread estimates the noise put in (0.02), within a factor of three for six readings
    assert 0.02 / 3 < fit.residual_sd < 0.02 * 3
    # two parameters fitted to points that scatter: the ceiling and the rate trade against each other
    assert -1.0 < fit.correlation < 0.0


def sum_of_squares(films, densities, d_inf, m):
    return math.fsum((d - curve(x, d_inf, m)) ** 2 for x, d in zip(films, densities, strict=True))


def grid_minimum(films, densities, d_range, m_range, step):
    """The grid point (D∞, m) with the least sum of squares, and that sum."""
    best = (math.inf, None, None)
    d_count = round((d_range[1] - d_range[0]) / step)
    m_count = round((m_range[1] - m_range[0]) / step)
    for i in range(d_count + 1):
        d = d_range[0] + i * step
        for j in range(m_count + 1):
            m = m_range[0] + j * step
            sse = sum_of_squares(films, densities, d, m)
            if sse < best[0]:
                best = (sse, d, m)
    return best


def test_fit_is_the_least_squares_minimum_by_grid_search():
    """An independent check: a grid search of the sum of squares (coarse, then fine around
    its best point) finds no smaller sum than the fit's, and its best point lies at the fit."""
    noise = [0.015, -0.02, 0.01, 0.025, -0.012, 0.004]
    readings = readings_from(1.5, 0.9, noise=noise)
    films = [r.film.to("um").magnitude for r in readings]
    densities = [r.density for r in readings]
    fit = fit_tollenaar_ernst(readings)
    _, d, m = grid_minimum(films, densities, (1.2, 1.8), (0.5, 1.5), 0.005)
    grid_sse, d, m = grid_minimum(films, densities, (d - 0.01, d + 0.01), (m - 0.01, m + 0.01), 0.0001)
    fitted_sse = sum_of_squares(films, densities, fit.d_inf, fit.m.to("1/um").magnitude)
    assert fitted_sse <= grid_sse + 1e-15
    assert d == pytest.approx(fit.d_inf, abs=0.0002)
    assert m == pytest.approx(fit.m.to("1/um").magnitude, abs=0.0002)
    # and the residual spread is √(SSE / (n − 2))
    assert fit.residual_sd == pytest.approx(math.sqrt(fitted_sse / (len(readings) - 2)), rel=1e-9)


def test_standard_errors_by_finite_differences():
    """The covariance s²(JᵀJ)⁻¹ checked with a Jacobian from finite differences (independent of the fit's own)."""
    noise = [0.015, -0.02, 0.01, 0.025, -0.012, 0.004]
    readings = readings_from(1.5, 0.9, noise=noise)
    films = [r.film.to("um").magnitude for r in readings]
    fit = fit_tollenaar_ernst(readings)
    d, m, h = fit.d_inf, fit.m.to("1/um").magnitude, 1e-6
    j = [
        ((curve(x, d + h, m) - curve(x, d - h, m)) / (2 * h), (curve(x, d, m + h) - curve(x, d, m - h)) / (2 * h))
        for x in films
    ]
    a = sum(row[0] ** 2 for row in j)
    b = sum(row[0] * row[1] for row in j)
    c = sum(row[1] ** 2 for row in j)
    s2 = sum_of_squares(films, [r.density for r in readings], d, m) / (len(films) - 2)
    det = a * c - b * b
    assert fit.d_inf_se == pytest.approx(math.sqrt(s2 * c / det), rel=1e-6)
    assert fit.m_se.to("1/um").magnitude == pytest.approx(math.sqrt(s2 * a / det), rel=1e-6)
    assert fit.correlation == pytest.approx(-b / math.sqrt(a * c), rel=1e-6)


def test_fit_from_volumes_and_transfer_equals_fit_from_films():
    volumes = [1.5, 2.5, 3.5, 4.5, 6.0, 8.0]  # BCM/in²
    films = [v / 0.64516 * 0.3 for v in volumes]
    by_volume = [
        make_reading(curve(x, 1.4, 0.7) + e, anilox_volume=f"{v} BCM/in2", transfer=0.3)
        for v, x, e in zip(volumes, films, [0.01, -0.01, 0.02, 0.0, -0.015, 0.005], strict=True)
    ]
    by_film = readings_from(1.4, 0.7, films=films, noise=[0.01, -0.01, 0.02, 0.0, -0.015, 0.005])
    a, b = fit_tollenaar_ernst(by_volume), fit_tollenaar_ernst(by_film)
    assert a.d_inf == pytest.approx(b.d_inf, rel=1e-9)
    assert a.d_inf_se == pytest.approx(b.d_inf_se, rel=1e-6)


def test_two_readings_are_refused():
    with pytest.raises(InputError) as caught:
        fit_tollenaar_ernst(readings_from(1.6, 1.0, films=(1.0, 2.0)))
    assert caught.value.field == "readings"
    assert f"at least {MIN_READINGS}" in caught.value.message and "has 2" in caught.value.message


def test_three_readings_at_two_films_are_refused():
    with pytest.raises(InputError, match="three or more different films"):
        fit_tollenaar_ernst(readings_from(1.6, 1.0, films=(1.0, 1.0, 2.0)))


@pytest.mark.parametrize(
    "densities",
    [
        [0.1, 0.2, 0.3, 0.4, 0.5, 0.6],  # a straight line: no ceiling in sight
        [0.05, 0.1, 0.16, 0.21, 0.27, 0.31],  # nearly straight: D∞ far above any print
    ],
)
def test_readings_that_do_not_level_off_are_refused(densities):
    readings = [make_reading(d, film=f"{x} um") for x, d in zip((0.5, 1, 1.5, 2, 2.5, 3), densities, strict=True)]
    with pytest.raises(InputError) as caught:
        fit_tollenaar_ernst(readings)
    assert caught.value.field == "readings"
    assert "do not level off" in caught.value.message


def test_falling_readings_are_refused():
    readings = [make_reading(d, film=f"{x} um") for x, d in zip((0.5, 1, 2, 3), (1.4, 1.2, 0.9, 0.8), strict=True)]
    with pytest.raises(InputError) as caught:
        fit_tollenaar_ernst(readings)
    assert caught.value.field == "readings"


def test_flat_readings_do_not_tell_the_rate():
    # Every print already at the ceiling: the rate could be anything large.
    readings = readings_from(1.5, 25.0, noise=[0.01, -0.01, 0.0, 0.01, -0.01, 0.0])
    with pytest.raises(InputError) as caught:
        fit_tollenaar_ernst(readings)
    assert caught.value.field == "readings"


def test_all_zero_densities_are_refused():
    with pytest.raises(InputError, match="zero"):
        fit_tollenaar_ernst([make_reading(0, film=f"{x} um") for x in (1, 2, 3)])


# --- bands and answers --------------------------------------------------------------


def test_band_covers_the_true_curve_and_narrows_among_the_readings():
    noise = [0.015, -0.02, 0.01, 0.025, -0.012, 0.004]
    fit = fit_tollenaar_ernst(readings_from(1.6, 1.0, noise=noise))
    among = fit.density_at("1.5 um")
    far = fit.density_at("12 um")
    assert among.low < curve(1.5, 1.6, 1.0) < among.high
    assert among.low < among.density < among.high
    assert (among.high - among.low) < (far.high - far.low)


def test_band_is_the_delta_method_by_hand():
    # D∞ = 1.5 ± 0.02, m = 0.8 ± 0.05 /µm, correlation −0.5, n = 6 → t(0.975, 4) = 2.776445
    curve_ = curve_from_parameters(1.5, "0.8 /um", 0.02, "0.05 /um", -0.5, 6)
    x = 2.0
    e = math.exp(-0.8 * x)
    g_d, g_m = 1 - e, 1.5 * x * e
    var = g_d**2 * 0.02**2 + g_m**2 * 0.05**2 + 2 * g_d * g_m * (-0.5 * 0.02 * 0.05)
    expected = curve_.density_at("2 um")
    # t quantile from a Student's t table (4 degrees of freedom, 97.5 %): 2.776
    assert expected.high - expected.density == pytest.approx(2.776 * math.sqrt(var), rel=2e-4)


def test_parameters_without_uncertainty_give_no_band():
    expected = curve_from_parameters(1.6, "1 /um").density_at("1 um")
    assert expected.density == pytest.approx(1.01139, abs=5e-6)
    assert expected.low is None and expected.high is None


def test_band_needs_every_uncertainty_field():
    with pytest.raises(InputError) as caught:
        curve_from_parameters(1.6, "1 /um", d_inf_se=0.02)
    assert caught.value.field == "m_se"


def test_volume_for_target_by_hand():
    # D∞ = 1.6, m = 1 /µm, D = 1.30 → x = 1.67398 µm; at T = 0.25, V = 6.69592 cm³/m²
    answer = volume_for_density(curve_from_parameters(1.6, "1 /um"), 1.30, 0.25)
    assert answer.needed.film.to("um").magnitude == pytest.approx(1.67398, abs=5e-6)
    assert answer.anilox_volume.to("cm3/m2").magnitude == pytest.approx(6.69592, abs=5e-5)
    # 6.69592 cm³/m² × 0.64516 = 4.31994 BCM/in² (exact inch, NIST SP 811)
    assert answer.anilox_volume.to("BCM/in2").magnitude == pytest.approx(4.31994, abs=5e-5)


def test_volume_band_brackets_the_answer_and_the_true_volume():
    fit = fit_tollenaar_ernst(readings_from(1.6, 1.0, noise=[0.015, -0.02, 0.01, 0.025, -0.012, 0.004]))
    answer = volume_for_density(fit, 1.3, 0.25)
    true_volume = 1.67398 / 0.25
    assert answer.anilox_low.magnitude < answer.anilox_volume.magnitude < answer.anilox_high.magnitude
    assert answer.anilox_low.magnitude < true_volume < answer.anilox_high.magnitude
    assert not answer.beyond_readings


def test_target_beyond_the_readings_is_flagged():
    fit = fit_tollenaar_ernst(readings_from(1.6, 1.0, films=(0.3, 0.6, 0.9, 1.2)))
    assert volume_for_density(fit, 1.5, 0.3).beyond_readings


def test_density_from_volume_by_hand():
    # 4 BCM/in² × 0.25 = 1.55000 µm; D = 1.6 (1 − e^(−1.55)) = 1.6 × (1 − 0.212248) = 1.26040
    expected, steps = density_from_volume(curve_from_parameters(1.6, "1 /um"), "4 BCM/in2", 0.25)
    assert expected.density == pytest.approx(1.6 * (1 - math.exp(-4 / 0.64516 * 0.25)), rel=1e-12)
    assert expected.density == pytest.approx(1.26040, abs=5e-6)
    assert steps[-1].symbol == "D"


def test_unreachable_target_in_a_fit_states_the_ceiling():
    fit = fit_tollenaar_ernst(readings_from(1.6, 1.0))
    with pytest.raises(InputError) as caught:
        volume_for_density(fit, 1.62, 0.25)
    assert caught.value.field == "target_density" and "1.6" in caught.value.message


def test_ceiling_bound_is_stated():
    assert D_INF_HIGH == 3.0
    with pytest.raises(InputError, match="at most 3"):
        curve_from_parameters(3.5, "1 /um")


def test_the_fit_needs_no_numerical_library():
    # The fit is plain Python: fitting in a fresh interpreter loads neither numpy nor scipy
    # (nor would start-up, see tests/web/test_density_api.py).
    code = (
        "import sys; from calc.density import fit_tollenaar_ernst, make_reading;"
        "fit_tollenaar_ernst([make_reading(1.6 * (1 - 2.718281828 ** -x), film=f'{x} um') for x in (0.5, 1, 2, 4)]);"
        "assert not {'numpy', 'scipy'} & set(sys.modules), 'a numerical library was loaded'"
    )
    subprocess.run([sys.executable, "-c", code], check=True)


def test_steps_show_the_working():
    fit = fit_tollenaar_ernst(readings_from(1.6, 1.0))
    answer = volume_for_density(fit, 1.3, 0.25)
    assert [step.symbol for step in answer.steps] == ["D∞", "m", "s", "x", "V"]
    assert answer.steps[-1].result == answer.anilox_volume
    assert isinstance(answer.steps[-2].result, type(Q_(1, "um")))
