"""Answering htmx and plain requests from one view.

A request with ``HX-Request`` gets the fragment it asked for; any other
request the whole page. Both vary on that header, so a cache never serves
one as the other.
"""

from __future__ import annotations

from flask import Response, make_response, render_template, request


def is_htmx() -> bool:
    return request.headers.get("HX-Request") == "true"


def respond(page: str, fragment: str, **context) -> Response:
    """The whole page, or only the fragment htmx asked for; never cached as the other.

    A fragment also refills the error slots beside the form's fields (out of
    band), unless it is the whole form anyway (``oob=False``).
    """
    context.setdefault("oob", is_htmx())
    response = make_response(render_template(fragment if is_htmx() else page, **context))
    response.vary.add("HX-Request")
    response.vary.add("Cookie")
    response.headers["Cache-Control"] = "no-cache"
    # A page the browser has just loaded is asked for again by the service worker
    # when it installs: with a validator, that costs a 304 instead of the page.
    response.add_etag()
    return response.make_conditional(request)
