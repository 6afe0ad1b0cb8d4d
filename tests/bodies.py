"""Request bodies the tests share: one valid body per calculation, as the API takes it."""

from __future__ import annotations

import copy

FILM = {"anilox_volume": "4 BCM/in2", "anilox_to_plate": 0.5, "plate_to_substrate": 0.5}
FILM_FULL = {**FILM, "solids_by_volume": 0.3, "solids_by_weight": 0.4, "ink_density": "1.05 g/cm3"}
CONVERT = {"quantity": "3.5 BCM/in2", "to": "cm3/m2", "density": "1.05 g/cm3"}
EQUIVALENTS = {"quantity": "4.5 BCM/in2", "density": "1.05 g/cm3", "coverage": 0.4}
ESTIMATE_UNPRICED = {
    "web_width": "330 mm",
    "run_length": "12000 m",
    "waste": 0.05,
    "stations": [
        {"name": "Cyan", "anilox_volume": "3 BCM/in2", "coverage": 0.4, "transfer": 0.3, "ink_density": "1.0 g/cm3"}
    ],
}
ESTIMATE = copy.deepcopy(ESTIMATE_UNPRICED)
ESTIMATE["stations"][0]["price_per_kg"] = 12.5
ESTIMATE_BY_IMPRESSIONS = {
    "web_width": "13 in",
    "impressions": 50000,
    "repeat": "12 in",
    "waste": 0.05,
    "stations": [
        {"name": "White", "anilox_volume": "6 cm3/m2", "coverage": 0.9, "transfer": 0.3, "ink_density": "1.3 g/cm3"}
    ],
}

FIT = {"plate_screen": "150 lpi", "work": "process", "anilox_screen": "1000 lpi", "anilox_volume": "1.5 BCM/in2"}
CELL = {"screen": "800 lpi", "wall": "3 um", "angle": 60, "shape": "bowl", "depth": "12 um"}

# Six solid-density readings on one stock (invented, following a Tollenaar–Ernst curve).
READINGS = [
    {"film": f"{film} um", "density": density}
    for film, density in ((1, 0.8), (2, 1.15), (3, 1.33), (4, 1.43), (6, 1.52), (8, 1.56))
]
READINGS_BY_VOLUME = [
    {"anilox_volume": f"{film * 4} cm3/m2", "transfer": 0.25, "density": density}
    for film, density in ((1, 0.8), (2, 1.15), (3, 1.33), (4, 1.43), (6, 1.52), (8, 1.56))
]
DENSITY_FIT = {"readings": READINGS}
DENSITY_VOLUME_FOR = {"readings": READINGS, "target_density": 1.3, "transfer": 0.25}
DENSITY_FROM = {"readings": READINGS, "anilox_volume": "4 BCM/in2", "transfer": 0.25}

# One valid body for every calculation endpoint, by kind.
BY_KIND = {
    "convert": CONVERT,
    "equivalents": EQUIVALENTS,
    "film": FILM_FULL,
    "estimate": ESTIMATE,
    "fit": FIT,
    "cell": CELL,
    "density_fit": DENSITY_FIT,
    "density_volume_for": DENSITY_VOLUME_FOR,
    "density_from": DENSITY_FROM,
}


def fresh(body: dict) -> dict:
    """A copy to change without touching the shared one."""
    return copy.deepcopy(body)
