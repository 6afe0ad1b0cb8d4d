"""The register as the API and pages see it: each roll with its wear picture, and the fit for a job.

``calc.wear.wear_picture`` judges each roll, ``calc.fit.fit_check`` each
roll against a job; this module feeds them a stored roll and turns their
answers into the API's JSON. The shop may override the wear thresholds with
``ROLL_WEAR`` in the app config (keys as ``wear_picture``'s settings).
"""

from __future__ import annotations

from datetime import date

from flask import current_app

from calc import InputError
from calc.fit import fit_check, parse_plate_screen, parse_work
from calc.units import Q_
from calc.wear import BCM_PER_IN2, MESSAGE_UNITS, URGENCY_FINE, wear_picture
from webapp.common.jsonapi import quantity_json
from webapp.rolls.rules import AVAILABLE, STATUS_NAMES

SETTING_NAMES = ("replace_at", "clean_plugging", "clean_below", "audit_days", "off_spec")
FLAG_NAMES = {"replace": "replace", "off_spec": "new roll off spec", "clean": "clean", "measure": "measure"}


def wear_settings() -> dict:
    configured = current_app.config.get("ROLL_WEAR") or {}
    return {name: configured[name] for name in SETTING_NAMES if name in configured}


def picture(roll: dict, log: dict, today: date | None = None, unit: str = "BCM/in2"):
    """The wear picture of a stored roll with its log; its messages state volumes in ``unit``."""
    return wear_picture(
        Q_(roll["nominal_bcm"], "BCM/in2"),
        date.fromisoformat(roll["engraved_on"]),
        [(m["measured_on"], Q_(m["volume_bcm"], BCM_PER_IN2), m["condition"]) for m in log["measurement"]],
        certificate_volume=None if roll["certificate_bcm"] is None else Q_(roll["certificate_bcm"], "BCM/in2"),
        cleanings=[c["cleaned_on"] for c in log["cleaning"]],
        today=today or date.today(),
        message_unit=unit,
        **wear_settings(),
    )


def _bcm(value: float) -> dict:
    return {"value": value, "unit": "BCM/in2"}


def wear_json(wear) -> dict:
    return {
        "percent_of_nominal": wear.percent_of_nominal,
        "slope_per_year": None if wear.slope_per_year is None else quantity_json(wear.slope_per_year, "BCM/in2"),
        "slope_stderr": None if wear.slope_stderr is None else quantity_json(wear.slope_stderr, "BCM/in2"),
        "certainty": wear.certainty,
        "line_points": wear.line_points,
        "plugging": wear.plugging,
        "threshold": quantity_json(wear.threshold, "BCM/in2"),
        "replace_by": None if wear.replace_by is None else wear.replace_by.isoformat(),
        "latest": None
        if wear.latest is None
        else {
            "measured_on": wear.latest.on.isoformat(),
            "volume": quantity_json(wear.latest.volume, "BCM/in2"),
            "condition": wear.latest.condition,
        },
        "flags": wear.codes,
        "reasons": [{"flag": flag.code, "message": flag.message} for flag in wear.flags],
    }


def roll_json(roll: dict, log: dict, wear=None) -> dict:
    wear = wear or picture(roll, log)
    return {
        "id": roll["id"],
        "roll_id": roll["roll_id"],
        "screen": {"value": roll["screen_lpi"], "unit": "lpi"},
        "angle": roll["angle"],
        "nominal_volume": _bcm(roll["nominal_bcm"]),
        "certificate_volume": None if roll["certificate_bcm"] is None else _bcm(roll["certificate_bcm"]),
        "engraved_on": roll["engraved_on"],
        "press": roll["press"],
        "location": roll["location"],
        "status": roll["status"],
        "notes": roll["notes"],
        "version": roll["version"],
        "updated_at": roll["updated_at"],
        "wear": wear_json(wear),
    }


def measurement_json(entry: dict) -> dict:
    return {
        "id": entry["id"],
        "roll": entry["roll"],
        "measured_on": entry["measured_on"],
        "volume": _bcm(entry["volume_bcm"]),
        "condition": entry["condition"],
        "method": entry["method"],
        "by": entry["measured_by"],
        "version": entry["version"],
    }


def cleaning_json(entry: dict) -> dict:
    return {
        "id": entry["id"],
        "roll": entry["roll"],
        "cleaned_on": entry["cleaned_on"],
        "method": entry["method"],
        "by": entry["cleaned_by"],
        "notes": entry["notes"],
        "version": entry["version"],
    }


ENTRY_JSON = {"measurement": measurement_json, "cleaning": cleaning_json}


def location_text(roll: dict) -> str:
    if roll["press"] and roll["location"]:
        return f"{roll['press']}, {roll['location']}"
    return roll["press"] or roll["location"] or "—"


def overview(
    rolls: list[dict], logs: dict, *, press="", status="", screen_low=None, screen_high=None, today=None, unit="BCM/in2"
):
    """``(roll, wear)`` pairs, filtered, most urgent first (replace, off spec, clean, measure, fine), then by ID."""
    rows = []
    for roll in rolls:
        if press and roll["press"] != press:
            continue
        if status and roll["status"] != status:
            continue
        if screen_low is not None and roll["screen_lpi"] < screen_low:
            continue
        if screen_high is not None and roll["screen_lpi"] > screen_high:
            continue
        rows.append((roll, picture(roll, logs[roll["id"]], today, unit)))
    # Retired rolls need nothing: they sort last whatever their flags.
    rows.sort(
        key=lambda pair: (
            pair[0]["status"] == "retired",
            pair[1].urgency if pair[0]["status"] != "retired" else URGENCY_FINE,
            pair[0]["roll_id"].upper(),
        )
    )
    return rows


def fitting(rolls: list[dict], logs: dict, plate_screen, work, *, today=None, unit="BCM/in2") -> dict:
    """Which rolls in use or spare fit the job, judged on their latest measured volume; best first.

    Best is closest to the middle of the volume range for the work (as a share
    of the range's width). A roll never measured is judged on its certificate
    volume, else its nominal, and says so. Rolls sent out or retired are left
    out without a fit check. Messages state volumes in ``unit``; the numbers are in BCM/in².
    """
    kind = parse_work(work)
    plate = None if plate_screen in (None, "") else parse_plate_screen(plate_screen)
    fit_check(kind, plate)  # refuses a missing plate screen for process work before any roll is judged
    fitting_rows, left_out = [], []
    for roll in rolls:
        log = logs[roll["id"]]
        wear = picture(roll, log, today, unit)
        entry = roll_json(roll, log, wear)
        if roll["status"] not in AVAILABLE:
            left_out.append(
                {
                    "roll": entry,
                    "problems": [{"code": "not_available", "message": f"it is {STATUS_NAMES[roll['status']]}"}],
                }
            )
            continue
        if wear.latest is not None:
            volume, judged_on = wear.latest.volume.to("BCM/in2").magnitude, "measured"
        elif roll["certificate_bcm"] is not None:
            volume, judged_on = roll["certificate_bcm"], "certificate"
        else:
            volume, judged_on = roll["nominal_bcm"], "nominal"
        check = fit_check(kind, plate, Q_(roll["screen_lpi"], "lpi"), Q_(volume, "BCM/in2").to(unit))
        low = check.volume_range.low.to("BCM/in2").magnitude
        high = check.volume_range.high.to("BCM/in2").magnitude
        middle, width = (low + high) / 2, max(high - low, 1e-9)
        entry["fit"] = {
            "volume": _bcm(volume),
            "judged_on": judged_on,
            "ratio": check.ratio,
            "volume_range": {"low": _bcm(low), "high": _bcm(high)},
            "off_middle": abs(volume - middle) / width,
            "advice": [
                {"code": p.code, "message": p.message}
                for p in check.problems
                if p.code not in ("screen_too_coarse", "volume_too_high", "volume_too_low")
            ],
        }
        if check.fits:
            fitting_rows.append(entry)
            continue
        problems = [{"code": p.code, "message": p.message} for p in check.problems]
        if judged_on == "measured":
            nominal = fit_check(kind, plate, Q_(roll["screen_lpi"], "lpi"), Q_(roll["nominal_bcm"], "BCM/in2"))
            if nominal.fits:
                problems.insert(
                    0,
                    {
                        "code": "worn_out_of_range",
                        "message": f"its nominal {_say(roll['nominal_bcm'], unit)} would fit, but it measured "
                        f"{_say(volume, unit)} on {wear.latest.on.isoformat()}: out of the range for this work",
                    },
                )
        left_out.append({"roll": entry, "problems": problems})
    fitting_rows.sort(key=lambda entry: (entry["fit"]["off_middle"], entry["roll_id"].upper()))
    return {"fitting": fitting_rows, "left_out": left_out}


def _say(bcm: float, unit: str) -> str:
    return f"{Q_(bcm, 'BCM/in2').to(unit).magnitude:.3g} {MESSAGE_UNITS[unit]}"


def check_screen_filter(value, field: str) -> float | None:
    """An optional lpi number from a filter (``'400'`` or ``'400 lpi'``)."""
    if value in (None, ""):
        return None
    text = value.strip().lower().removesuffix("lpi").strip()
    try:
        number = float(text)
    except ValueError:
        raise InputError(field, "must be a line screen in lpi, e.g. 400") from None
    if not 0 <= number <= 10_000:
        raise InputError(field, "must be a line screen from 0 to 10000 lpi")
    return number
