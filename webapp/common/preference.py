"""The user's metric or imperial preference, kept on the device in a cookie."""

from __future__ import annotations

from flask import request

from calc.display import check_system

UNITS_COOKIE = "inkfilm_units"


def current_system() -> str:
    return check_system(request.cookies.get(UNITS_COOKIE))
