"""The wear chart: a roll's readings, cleanings, wear line, nominal and threshold, as inline SVG geometry.

Drawing only (coordinates in the SVG's user units); the numbers come from
``calc.wear``. As-found readings are open triangles and after-cleaning
readings filled circles, so they differ by shape, not by colour alone.
"""

from __future__ import annotations

import math
from datetime import date, timedelta

from calc.display import format_number, unit_label
from calc.units import Q_

WIDTH, HEIGHT = 640, 300
LEFT, RIGHT, TOP, BOTTOM = 52, 96, 14, 34


def _nice_step(span: float) -> float:
    raw = span / 4
    power = 10 ** math.floor(math.log10(raw))
    return next(step * power for step in (1, 2, 2.5, 5, 10) if step * power >= raw)


def wear_chart(wear, cleanings: list[str], today: date, unit: str = "BCM/in2") -> dict:
    """Everything the template draws, in SVG user units (y grows down); volumes labelled in ``unit``."""
    per_bcm = Q_(1.0, "BCM/in2").to(unit).magnitude
    label = unit_label(unit)
    start = wear.engraved_on
    end = today
    if wear.replace_by is not None and wear.replace_by > end:
        # Show the forecast if it falls within a few years; beyond, an arrow note says when.
        end = min(wear.replace_by + timedelta(days=30), today + timedelta(days=3 * 365))
    end = max(end, start + timedelta(days=30))
    nominal = wear.nominal.magnitude * per_bcm
    threshold = wear.threshold.magnitude * per_bcm
    values = [nominal, wear.start_volume.magnitude * per_bcm, threshold]
    values += [r.volume.magnitude * per_bcm for r in wear.readings]
    low, high = min(values), max(values)
    pad = max((high - low) * 0.12, nominal * 0.03)
    low, high = max(0.0, low - pad), high + pad
    span_days = (end - start).days
    inner_w, inner_h = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM

    def x(day: date) -> float:
        return round(LEFT + inner_w * (day - start).days / span_days, 1)

    def y(value: float) -> float:
        return round(TOP + inner_h * (high - value) / (high - low), 1)

    step = _nice_step(high - low)
    ticks = []
    tick = math.ceil(low / step) * step
    while tick <= high:
        ticks.append({"y": y(tick), "label": format_number(tick)})
        tick += step
    years = []
    for year in range(start.year + 1, end.year + 1):
        day = date(year, 1, 1)
        if start < day <= end:
            years.append({"x": x(day), "label": str(year)})
    points = []
    for reading in wear.readings:
        volume = reading.volume.magnitude * per_bcm
        cx, cy = x(reading.on), y(volume)
        title = f"{reading.on.isoformat()}: {format_number(volume)} {label}, {reading.condition.replace('_', ' ')}"
        if reading.condition == "as_found":
            shape = (
                f"{cx},{round(cy - 6, 1)} {round(cx - 6, 1)},{round(cy + 5, 1)} {round(cx + 6, 1)},{round(cy + 5, 1)}"
            )
            points.append({"kind": "as_found", "points": shape, "title": title})
        else:
            points.append({"kind": "after_cleaning", "cx": cx, "cy": cy, "title": title})
    marks = []
    base = HEIGHT - BOTTOM
    for text in cleanings:
        day = date.fromisoformat(text)
        cx = x(day)
        marks.append(
            {
                "points": f"{cx},{base - 6} {cx + 5},{base} {cx},{base + 6} {cx - 5},{base}",
                "title": f"cleaned {text}",
            }
        )
    line = None
    if wear.line is not None:
        line = {
            "x1": x(start),
            "y1": y(wear.line.at(start) * per_bcm),
            "x2": x(end),
            "y2": y(wear.line.at(end) * per_bcm),
        }
        line = _clip(line, TOP, HEIGHT - BOTTOM)
    forecast = None
    if wear.replace_by is not None and wear.replace_by <= end:
        forecast = {"x": x(wear.replace_by), "label": wear.replace_by.isoformat()}
    return {
        "width": WIDTH,
        "height": HEIGHT,
        "left": LEFT,
        "right": WIDTH - RIGHT,
        "top": TOP,
        "bottom": HEIGHT - BOTTOM,
        "ticks": ticks,
        "years": years,
        "unit": label,
        "nominal": {"y": y(nominal), "label": f"nominal {format_number(nominal)}"},
        "threshold": {"y": y(threshold), "label": f"replace {format_number(threshold)}"},
        "points": points,
        "cleanings": marks,
        "line": line,
        "forecast": forecast,
        "today": x(today),
        "later": None if forecast or wear.replace_by is None else wear.replace_by.isoformat(),
    }


def _clip(line: dict, top: float, bottom: float) -> dict:
    """Keep a falling or rising line inside the plot's height (it may leave through the floor)."""
    x1, y1, x2, y2 = line["x1"], line["y1"], line["x2"], line["y2"]
    if y2 != y1:
        for edge in (top, bottom):
            if (y2 - edge) * (y1 - edge) < 0 and not top <= y2 <= bottom:
                x2 = round(x1 + (x2 - x1) * (edge - y1) / (y2 - y1), 1)
                y2 = edge
    return {"x1": x1, "y1": y1, "x2": x2, "y2": y2}
