"""The settings page: unlock this device with a passcode, lock it again."""

from __future__ import annotations

from flask import Blueprint, flash, redirect, render_template, request, session, url_for

from webapp.auth.csrf import protect
from webapp.auth.passcodes import Locked, role_for_passcode, unlock
from webapp.common.urls import safe_next

bp = Blueprint("auth", __name__)
protect(bp)


def _next(target) -> str:
    # Only paths on this server: never send a user elsewhere after unlocking.
    return safe_next(target, url_for("auth.settings"))


@bp.get("/settings")
def settings():
    return render_template("auth/settings.html", next=_next(request.args.get("next")))


@bp.post("/unlock")
def unlock_page():
    passcode = request.form.get("passcode", "")
    target = _next(request.form.get("next"))
    try:
        role = role_for_passcode(passcode) if passcode else None
    except Locked as exc:
        return render_template("auth/settings.html", next=target, passcode_error=exc.message), 429
    if role is None:
        message = "That passcode is not right." if passcode else "Type the passcode first."
        return render_template("auth/settings.html", next=target, passcode_error=message), 403
    unlock(role)
    flash("Unlocked for supervisors on this device." if role == "supervisor" else "Unlocked for saving on this device.")
    return redirect(target, code=303)


@bp.post("/lock")
def lock_page():
    session.pop("unlocked", None)
    flash("Locked again on this device.")
    return redirect(url_for("auth.settings"), code=303)
