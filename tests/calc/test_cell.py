"""Anilox cell geometry against hand-worked numbers and geometry computed here independently.

The model (REFERENCES.md "Anilox rolls", a derivation, not a published oracle):
p = 25 400 µm / lpi, o = p − w, open area (o/p)², volume = (o/p)² × depth × k.
"""

import math

import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from calc import InputError
from calc.cell import ANILOX_SCREEN_HIGH, ANILOX_SCREEN_LOW, SHAPE_FACTORS, cell_geometry
from calc.practice import DEPTH_TO_OPENING
from calc.units import Q_

# inch = 25.4 mm exactly (NIST SP 811, Appendix B): 1 BCM/in² = 1/0.64516 cm³/m².
CM3M2_PER_BCM = 1 / 0.64516


def test_800_lpi_by_hand():
    # p = 25 400 / 800 = 31.75 µm; o = 31.75 − 3 = 28.75 µm;
    # open area = (28.75 / 31.75)² = 826.5625 / 1008.0625 = 0.819 95…;
    # bowl, 12 µm deep: V = 0.819 95 × 12 × 0.5 = 4.919 7 cm³/m² = 4.919 7 × 0.645 16 = 3.174 BCM/in².
    cell = cell_geometry("800 lpi", "3 um", depth="12 um")
    assert cell.pitch.to("um").magnitude == pytest.approx(31.75, rel=1e-12)
    assert cell.opening.to("um").magnitude == pytest.approx(28.75, rel=1e-12)
    assert cell.open_area == pytest.approx(826.5625 / 1008.0625, rel=1e-12)
    assert round(cell.open_area, 4) == 0.8200
    assert round(cell.volume.to("cm3/m2").magnitude, 3) == 4.920
    assert round(cell.volume.to("BCM/in2").magnitude, 3) == 3.174
    # depth to opening = 12 / 28.75 = 0.417 (deeper than the usual band)
    assert round(cell.depth_to_opening, 3) == 0.417
    assert [code for code, _ in cell.problems] == ["cell_too_deep"]


def test_800_lpi_reverse_by_hand():
    # 3.174 BCM/in² = 3.174 / 0.645 16 = 4.919 7 cm³/m²; h = 4.919 7 / (0.819 95 × 0.5) = 12.00 µm.
    cell = cell_geometry("800 lpi", "3 um", volume="3.174 BCM/in2")
    assert round(cell.depth.to("um").magnitude, 2) == 12.00
    assert cell.volume.to("cm3/m2").magnitude == pytest.approx(3.174 * CM3M2_PER_BCM, rel=1e-12)


@pytest.mark.parametrize(
    ("shape", "volume_cm3m2"),
    [
        # 0.819 95 × 12 × k
        ("prism", 9.8394),
        ("bowl", 4.9197),
        ("cone", 3.2798),
    ],
)
def test_shape_factors_by_hand(shape, volume_cm3m2):
    cell = cell_geometry("800 lpi", "3 um", shape=shape, depth="12 um")
    assert round(cell.volume.to("cm3/m2").magnitude, 4) == volume_cm3m2


def test_line_screen_in_lines_per_cm():
    # 315 l/cm: p = 10 000 µm / 315 = 31.746 µm (lines/cm = lpi / 2.54, REFERENCES.md)
    for spelling in ("315 lpcm", "315 l/cm", "315 lines/cm"):
        cell = cell_geometry(spelling, "3 um", depth="8 um")
        assert round(cell.pitch.to("um").magnitude, 3) == 31.746
        assert round(cell.screen.to("lpi").magnitude, 1) == 800.1


def test_depth_to_opening_band_from_practice():
    low, high = DEPTH_TO_OPENING
    opening = 28.75  # 800 lpi, 3 µm wall
    inside = cell_geometry("800 lpi", "3 um", depth=f"{opening * (low + high) / 2} um")
    assert inside.problems == ()
    assert cell_geometry("800 lpi", "3 um", depth=f"{opening * high * 1.01} um").problems[0].code == "cell_too_deep"
    shallow = cell_geometry("800 lpi", "3 um", depth=f"{opening * low * 0.99} um")
    assert shallow.problems[0].code == "cell_too_shallow"
    assert "release ink poorly" in cell_geometry("800 lpi", "3 um", depth="20 um").problems[0].message


def test_steps_record_the_working():
    cell = cell_geometry("800 lpi", "3 um", depth="12 um")
    assert [step.symbol for step in cell.steps] == ["p", "o", "A_o", "V", "r"]
    assert cell.steps[3].result == cell.volume
    reverse = cell_geometry("800 lpi", "3 um", volume="3 BCM/in2")
    assert [step.symbol for step in reverse.steps] == ["p", "o", "A_o", "h", "r"]
    assert reverse.steps[3].result == reverse.depth


# --- The model against geometry computed independently --------------------------


def _polygon_area_from_triangles(vertices):
    """Area of a convex polygon around the origin as the sum of its triangles from the centre."""
    area = 0.0
    for (x1, y1), (x2, y2) in zip(vertices, vertices[1:] + vertices[:1], strict=True):
        area += 0.5 * abs(x1 * y2 - x2 * y1)
    return area


def _hexagon(flat_to_flat, turn):
    # A regular hexagon's circumradius is its flat-to-flat width / √3.
    radius = flat_to_flat / math.sqrt(3)
    return [
        (radius * math.cos(turn + math.radians(30 + 60 * k)), radius * math.sin(turn + math.radians(30 + 60 * k)))
        for k in range(6)
    ]


def _square(side, turn):
    half_diagonal = side / math.sqrt(2)
    return [
        (
            half_diagonal * math.cos(turn + math.radians(45 + 90 * k)),
            half_diagonal * math.sin(turn + math.radians(45 + 90 * k)),
        )
        for k in range(4)
    ]


def _lattice(pitch, angle):
    """Two lattice vectors: hexagonal (60° apart) for 60° and 30°, square (90° apart) for 45°."""
    turn = math.radians({60: 0, 30: 30, 45: 45}[angle])
    between = math.radians(90 if angle == 45 else 60)
    a1 = (pitch * math.cos(turn), pitch * math.sin(turn))
    a2 = (pitch * math.cos(turn + between), pitch * math.sin(turn + between))
    return a1, a2, turn


@pytest.mark.parametrize("angle", [60, 45, 30])
@pytest.mark.parametrize(("screen", "wall_um"), [(800, 3.0), (200, 12.0), (1200, 2.5), (400, 8.0)])
def test_open_area_against_independent_geometry(angle, screen, wall_um):
    pitch = 25_400 / screen  # µm; 1 in = 25.4 mm exactly (NIST SP 811)
    opening = pitch - wall_um
    a1, a2, turn = _lattice(pitch, angle)
    # nearest neighbour distance of the lattice is the pitch
    neighbours = [
        math.hypot(i * a1[0] + j * a2[0], i * a1[1] + j * a2[1])
        for i in range(-2, 3)
        for j in range(-2, 3)
        if (i, j) != (0, 0)
    ]
    assert min(neighbours) == pytest.approx(pitch, rel=1e-12)
    cells_per_um2 = 1 / abs(a1[0] * a2[1] - a1[1] * a2[0])
    if angle == 45:
        region = _polygon_area_from_triangles(_square(pitch, turn))
        hole = _polygon_area_from_triangles(_square(opening, turn))
    else:
        # flats of the cell face the neighbours: turn the hexagon with the lattice
        region = _polygon_area_from_triangles(_hexagon(pitch, turn - math.radians(30)))
        hole = _polygon_area_from_triangles(_hexagon(opening, turn - math.radians(30)))
    # each cell's region tiles the surface: one region per lattice point
    assert region * cells_per_um2 == pytest.approx(1.0, rel=1e-12)
    open_share = hole * cells_per_um2

    cell = cell_geometry(f"{screen} lpi", f"{wall_um} um", angle=angle, shape="prism", depth="10 um")
    assert cell.open_area == pytest.approx(open_share, rel=1e-12)
    # volume per area = holes per area × hole area × depth (prism), µm³/µm² = µm = cm³/m²
    assert cell.volume.to("cm3/m2").magnitude == pytest.approx(cells_per_um2 * hole * 10.0, rel=1e-12)
    assert cell.layout == ("square" if angle == 45 else "hexagonal")


@pytest.mark.parametrize(("shape", "profile"), [("bowl", lambda u: 1 - u**2), ("cone", lambda u: 1 - u)])
def test_shape_factor_against_numerical_volume(shape, profile):
    # Volume of a round cell of radius 1 and depth 1 with the given profile, by the midpoint
    # rule over rings, against the prism's π: a paraboloid gives ½, a cone ⅓.
    n = 20_000
    volume = sum(2 * math.pi * ((i + 0.5) / n) * profile((i + 0.5) / n) / n for i in range(n))
    assert volume / math.pi == pytest.approx(SHAPE_FACTORS[shape], rel=1e-6)


# --- Properties ---------------------------------------------------------------------


@given(
    screen=st.floats(100, 2000),
    wall_share=st.floats(0.02, 0.5),
    volume_bcm=st.floats(0.5, 30),
    shape=st.sampled_from(sorted(SHAPE_FACTORS)),
    angle=st.sampled_from([60, 45, 30]),
)
def test_volume_depth_volume_round_trip(screen, wall_share, volume_bcm, shape, angle):
    wall_um = wall_share * 25_400 / screen
    forward = cell_geometry(f"{screen!r} lpi", f"{wall_um!r} um", angle, shape, volume=f"{volume_bcm!r} BCM/in2")
    back = cell_geometry(f"{screen!r} lpi", f"{wall_um!r} um", angle, shape, depth=forward.depth)
    assert back.volume.to("BCM/in2").magnitude == pytest.approx(volume_bcm, rel=1e-9)
    assert back.depth_to_opening == pytest.approx(forward.depth_to_opening, rel=1e-9)


@given(
    coarse=st.floats(ANILOX_SCREEN_LOW.magnitude, ANILOX_SCREEN_HIGH.magnitude),
    fine=st.floats(ANILOX_SCREEN_LOW.magnitude, ANILOX_SCREEN_HIGH.magnitude),
    wall_um=st.floats(0.1, 10),
)
def test_finer_screen_never_gives_larger_opening(coarse, fine, wall_um):
    coarse, fine = sorted((coarse, fine))
    assume(wall_um < 25_400 / fine)
    big = cell_geometry(f"{coarse!r} lpi", f"{wall_um!r} um", depth="5 um")
    small = cell_geometry(f"{fine!r} lpi", f"{wall_um!r} um", depth="5 um")
    assert small.opening <= big.opening
    assert small.open_area <= big.open_area + 1e-12


# --- Bad input ------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "field", "words"),
    [
        ({"wall": "31.75 um"}, "wall", "as wide as the cell pitch"),  # 800 lpi: p = 31.75 µm
        ({"wall": "40 um"}, "wall", "no opening"),
        ({"wall": "0 um"}, "wall", "more than 0"),
        ({"wall": "-1 um"}, "wall", "negative"),
        ({"wall": "3 lpi"}, "wall", "a length"),
        ({"depth": "0 um"}, "depth", "more than 0"),
        ({"depth": "-5 um"}, "depth", "negative"),
        ({"depth": "5 BCM"}, "depth", "a length"),
        ({"depth": None}, "depth", "give the cell depth"),
        ({"volume": "3 BCM/in2"}, "volume", "not both"),
        ({"depth": None, "volume": "0 BCM/in2"}, "volume", "more than 0"),
        ({"depth": None, "volume": "3 BCM"}, "volume", "volume per area"),
        ({"angle": 50}, "angle", "60"),
        ({"angle": "sixty"}, "angle", "45 or 30"),
        ({"angle": float("nan")}, "angle", "finite"),
        ({"angle": True}, "angle", "number"),
        ({"angle": Q_(1, "m")}, "angle", "degrees"),
        ({"angle": Q_(60, "radian")}, "angle", "degrees"),
        ({"shape": "cup"}, "shape", "prism"),
        ({"shape": None}, "shape", "bowl"),
        ({"screen": "800 um"}, "screen", "line screen"),
        ({"screen": "5 lpi"}, "screen", "at least 10"),
        ({"screen": "3000 lpi"}, "screen", "at most 2500"),
        ({"screen": "800"}, "screen", "no unit"),
        ({"screen": "800 l/ft"}, "screen", "line screen"),
    ],
)
def test_bad_input_names_the_field(kwargs, field, words):
    args = {"screen": "800 lpi", "wall": "3 um", "depth": "10 um"} | kwargs
    with pytest.raises(InputError) as excinfo:
        cell_geometry(**args)
    assert excinfo.value.field == field
    assert words in excinfo.value.message


@pytest.mark.parametrize(
    ("angle", "layout"),
    [
        ("60", "hexagonal"),
        ("45°", "square"),
        ("30 deg", "hexagonal"),
        (60.0, "hexagonal"),
        (Q_(45, "degree"), "square"),
    ],
)
def test_angle_spellings(angle, layout):
    assert cell_geometry("800 lpi", "3 um", angle=angle, depth="8 um").layout == layout
