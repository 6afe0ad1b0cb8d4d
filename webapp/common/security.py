"""Security headers for a shop-network app: everything from our own origin,
no inline scripts or styles, no framing, no referrer leaving the app.

Each answer carries the headers a browser reads on that kind of answer, and no
more, because every byte of a header is paid on each answer of a page's first
load (``tests/browser/test_offline_and_budget.py``):

- a document (HTML, and every answer not named below: API answers, CSV,
  redirects, errors) gets the whole set, ``HEADERS``;
- the service worker's script gets its own policy, ``WORKER_HEADERS``: a
  worker runs under the CSP and the referrer policy of its script's answer,
  and is no document that could be framed, open a window or ask for a camera;
- any other script the app answers (``/offline-calc.js``, which the worker
  imports) gets ``SCRIPT_HEADERS``: an imported or linked script runs under
  the policy of the worker or page that loads it, its own CSP is never read;
- a 304 gets ``SCRIPT_HEADERS`` too: the browser keeps the headers of the
  answer it has stored (the whole set) and takes from a 304 only what it sends;
- static files (WhiteNoise, ``webapp.common.assets``): ``static_headers``.

``X-Content-Type-Options: nosniff`` is on every answer: a file is only ever
read as the type it is sent as.
"""

from __future__ import annotations

CONTENT_SECURITY_POLICY = "; ".join(
    [
        "default-src 'self'",
        "script-src 'self'",
        "style-src 'self'",
        "img-src 'self' data:",
        "font-src 'self'",
        "connect-src 'self'",
        "manifest-src 'self'",
        "worker-src 'self'",
        "object-src 'none'",
        "base-uri 'self'",
        "form-action 'self'",
        "frame-ancestors 'none'",
    ]
)

NOSNIFF = {"X-Content-Type-Options": "nosniff"}

HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    **NOSNIFF,
    "Referrer-Policy": "same-origin",
    "X-Frame-Options": "DENY",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Permissions-Policy": "camera=(), microphone=(), geolocation=(), payment=()",
}

# The service worker's own policy: what it may import and fetch (CSP) and the
# referrer its fetches send. Frame options, the opener policy and the
# permissions policy are read on documents only.
WORKER_HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    **NOSNIFF,
    "Referrer-Policy": "same-origin",
}

# A script that is not a worker, and a 304 (see the module's docstring).
SCRIPT_HEADERS = dict(NOSNIFF)

# Static files are no documents that run or load anything, except an SVG opened
# on its own: that is a document, which could hold a script, so it gets a policy
# that allows it nothing. A stylesheet, a script, an image or the manifest opened
# on its own is shown as text or as a picture, and runs nothing.
STATIC_CONTENT_SECURITY_POLICY = "default-src 'none'; style-src 'self'; frame-ancestors 'none'"
STATIC_HEADERS = {"Content-Security-Policy": STATIC_CONTENT_SECURITY_POLICY, **NOSNIFF}
STATIC_DOCUMENTS = (".svg", ".html", ".xml")


def static_headers(path: str) -> dict[str, str]:
    """The headers of the static file at ``path`` (an SVG gets the locked-down policy)."""
    return STATIC_HEADERS if path.lower().endswith(STATIC_DOCUMENTS) else NOSNIFF


def worker_script(response):
    """Mark ``response`` as the service worker's script: the worker's headers, not a document's."""
    response.headers.update(WORKER_HEADERS)
    return response


def add_headers(response):
    if response.status_code == 304 or response.mimetype == "text/javascript":
        headers = SCRIPT_HEADERS
    else:
        headers = HEADERS
    for name, value in headers.items():
        response.headers.setdefault(name, value)
    return response


def init_app(app) -> None:
    app.after_request(add_headers)
