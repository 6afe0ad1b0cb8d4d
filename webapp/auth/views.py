"""The settings page: unlock this device with a passcode, lock it again, lock every device."""

from __future__ import annotations

from flask import Blueprint, flash, redirect, render_template, request, url_for

from webapp.auth import passcodes
from webapp.auth.csrf import protect
from webapp.auth.passcodes import Locked, role_for_passcode, unlock
from webapp.common.urls import safe_next

bp = Blueprint("auth", __name__)
protect(bp)

# The settings page takes either passcode: a wrong one counts against both roles.
SETTINGS_ROLES = ("shop", "supervisor")


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
        role = role_for_passcode(passcode, SETTINGS_ROLES) if passcode else None
    except Locked as exc:
        page = render_template("auth/settings.html", next=target, passcode_error=exc.message)
        return page, 429, {"Retry-After": str(max(1, round(exc.seconds)))}
    if role is None:
        message = "That passcode is not right." if passcode else "Type the passcode first."
        return render_template("auth/settings.html", next=target, passcode_error=message), 403
    unlock(role)
    flash("Unlocked for supervisors on this device." if role == "supervisor" else "Unlocked for saving on this device.")
    return redirect(target, code=303)


@bp.post("/lock")
def lock_page():
    passcodes.lock_this_device()
    target = _next(request.form.get("next"))
    if target == url_for("auth.settings"):
        flash("Locked again on this device.")
    # The header's one-tap lock comes back to the page it was on (its bar gone says it is locked).
    return redirect(target, code=303)


@bp.post("/lock-all")
def lock_all_page():
    """Lock every unlocked device (a lost tablet, a passcode seen by the wrong person): supervisors only."""
    if not passcodes.allowed("supervise", passcodes.session_role()):
        message = "Locking every device needs the supervisor passcode: unlock this device for supervisors first."
        return render_template("auth/settings.html", next=url_for("auth.settings"), lock_all_error=message), 403
    count = passcodes.lock_every_device()
    flash(
        f"Every device is locked again ({count} were unlocked, this one too). "
        "Each needs its passcode to save or delete."
    )
    return redirect(url_for("auth.settings"), code=303)
