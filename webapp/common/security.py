"""Security headers for a shop-network app: everything from our own origin,
no inline scripts or styles, no framing, no referrer leaving the app."""

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

HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    "X-Content-Type-Options": "nosniff",
    "Referrer-Policy": "same-origin",
    "X-Frame-Options": "DENY",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Permissions-Policy": "camera=(), microphone=(), geolocation=(), payment=()",
}


# Static files (served by WhiteNoise, webapp.common.assets) are no documents that
# run or load anything: the policy allows them nothing (an SVG opened on its own
# runs no script), and the document headers above would only add weight to
# every file of a page's first load.
STATIC_CONTENT_SECURITY_POLICY = "default-src 'none'; style-src 'self'; frame-ancestors 'none'"
STATIC_HEADERS = {
    "Content-Security-Policy": STATIC_CONTENT_SECURITY_POLICY,
    "X-Content-Type-Options": "nosniff",
}


def add_headers(response):
    for name, value in HEADERS.items():
        response.headers.setdefault(name, value)
    return response


def init_app(app) -> None:
    app.after_request(add_headers)
