"""The film chain: from anilox cell volume to the ink film on the substrate.

Volume per area is a length: 1 cm³ of ink spread over 1 m² is a film 1 µm
thick, so an anilox of 1 BCM/in² (≈ 1.55 cm³/m²) holds ink enough for a
1.55 µm film if every cell emptied completely.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from calc.errors import InputError
from calc.steps import Step, Working
from calc.units import (
    LENGTH,
    Q_,
    check_fraction,
    check_range,
    parse_density,
    parse_quantity,
    require_dimension,
)

# Anilox rolls run from well under 1 BCM/in² (fine process work) to some
# 30–60 BCM/in² for coating and adhesive rolls (common practice); 100 BCM/in²
# bounds every real roll with room to spare.
ANILOX_VOLUME_HIGH = Q_(100.0, "BCM/in2")

# The trade's rule of thumb (common practice, see docs/references.md): about half
# of the cell volume goes to the plate, about half of that to the substrate.
TYPICAL_ANILOX_TO_PLATE = 0.5
TYPICAL_PLATE_TO_SUBSTRATE = 0.5


def parse_anilox_volume(text, field: str | None = "anilox_volume"):
    """Read and check an anilox volume per area (more than 0, at most 100 BCM/in²)."""
    volume = parse_quantity(text, field)
    require_dimension(volume, LENGTH, field, "a volume per area", "4 BCM/in2 or 6.2 cm3/m2")
    check_range(volume, Q_(0.0, "BCM/in2"), ANILOX_VOLUME_HIGH, field, "an anilox volume")
    return volume


def theoretical_film(anilox_volume):
    """Wet film if every cell emptied completely.

    t = V_a, since a volume per area is a thickness (1 cm³/m² = 1 µm).

    Parameters
    ----------
    anilox_volume : Quantity or str
        Cell volume per roll area [BCM/in², cm³/m²].

    Returns
    -------
    Quantity [µm]

    >>> theoretical_film("1 BCM/in2")  # doctest: +NUMBER
    <Quantity(1.55000, 'micrometer')>
    """
    return parse_anilox_volume(anilox_volume).to("um")


@dataclass
class FilmChain:
    """Every film of the chain, with the working that led to it."""

    anilox_volume: object
    theoretical_wet: object
    plate_wet: object
    substrate_wet: object
    dry: object | None = None
    wet_coat_weight: object | None = None
    dry_coat_weight: object | None = None
    steps: list[Step] = field(default_factory=list)


def film_chain(
    anilox_volume,
    anilox_to_plate: float = TYPICAL_ANILOX_TO_PLATE,
    plate_to_substrate: float = TYPICAL_PLATE_TO_SUBSTRATE,
    solids_by_volume: float | None = None,
    solids_by_weight: float | None = None,
    ink_density=None,
) -> FilmChain:
    """Ink film from the anilox cells to the dry film on the substrate.

    t₀ = V_a                         theoretical wet film (cells empty fully)
    t₁ = t₀ · T_ap                   wet film on the plate
    t₂ = t₁ · T_ps                   wet film on the substrate
    t_d = t₂ · s_v                   dry film
    w_wet = t₂ · ρ                   wet coat weight
    w_dry = w_wet · s_w              dry coat weight

    Parameters
    ----------
    anilox_volume : Quantity or str
        Cell volume per roll area [BCM/in², cm³/m²].
    anilox_to_plate : float
        Share of the cell volume the plate picks up [0..1]; typically about 0.5.
    plate_to_substrate : float
        Share of the plate's ink given to the substrate [0..1]; typically about 0.5.
    solids_by_volume : float, optional
        Share of the ink's volume left after drying [0..1], from the ink's data sheet.
    solids_by_weight : float, optional
        Share of the ink's mass left after drying [0..1]; needs ``ink_density``.
    ink_density : Quantity or str, optional
        Press-ready ink density [g/cm³].

    Returns
    -------
    FilmChain with films in µm and coat weights in g/m², where the inputs allow.

    Notes
    -----
    Transfer shares vary with plate, mounting tape, substrate, speed and ink;
    the defaults are the trade's rule of thumb, not a measurement.

    >>> chain = film_chain("4 BCM/in2", 0.5, 0.5)
    >>> chain.substrate_wet  # doctest: +NUMBER
    <Quantity(1.55000, 'micrometer')>
    """
    volume = parse_anilox_volume(anilox_volume)
    t_ap = check_fraction(anilox_to_plate, "anilox_to_plate")
    t_ps = check_fraction(plate_to_substrate, "plate_to_substrate")
    s_v = None if solids_by_volume is None else check_fraction(solids_by_volume, "solids_by_volume")
    s_w = None if solids_by_weight is None else check_fraction(solids_by_weight, "solids_by_weight")
    density = None if ink_density is None else parse_density(ink_density, "ink_density")
    if s_w is not None and density is None:
        raise InputError("ink_density", "the dry coat weight needs the ink's density as well")

    work = Working()
    t0_um = volume.to("cm3/m2").magnitude  # 1 cm³/m² is exactly 1 µm of film
    t0 = work.add(
        "Theoretical wet film (cells empty completely)",
        "t₀",
        "t₀ = V_a",
        {"V_a": volume},
        Q_(t0_um, "um"),
    )
    t1 = work.add(
        "Wet film on the plate",
        "t₁",
        "t₁ = t₀ × T_ap",
        {"t₀": t0, "T_ap": t_ap},
        Q_(t0_um * t_ap, "um"),
    )
    t2_um = t0_um * t_ap * t_ps
    t2 = work.add(
        "Wet film on the substrate",
        "t₂",
        "t₂ = t₁ × T_ps",
        {"t₁": t1, "T_ps": t_ps},
        Q_(t2_um, "um"),
    )
    chain = FilmChain(volume, t0, t1, t2, steps=work.steps)
    if s_v is not None:
        chain.dry = work.add(
            "Dry film on the substrate", "t_d", "t_d = t₂ × s_v", {"t₂": t2, "s_v": s_v}, Q_(t2_um * s_v, "um")
        )
    if density is not None:
        rho = density.to("g/cm3").magnitude
        # µm × g/cm³ = g/m² exactly (1 µm over 1 m² is 1 cm³)
        chain.wet_coat_weight = work.add(
            "Wet coat weight", "w_wet", "w_wet = t₂ × ρ", {"t₂": t2, "ρ": density}, Q_(t2_um * rho, "g/m2")
        )
        if s_w is not None:
            chain.dry_coat_weight = work.add(
                "Dry coat weight",
                "w_dry",
                "w_dry = w_wet × s_w",
                {"w_wet": chain.wet_coat_weight, "s_w": s_w},
                Q_(t2_um * rho * s_w, "g/m2"),
            )
    return chain
