"""The web side's one error type for refusals that are not a calculation's input error.

``calc.InputError`` says what a user typed wrong (400). ``WebError`` carries
any other refusal with its status: a passcode needed (401/403), too many
guesses (429), a body that is not JSON (415). The ``/api/v1`` parent blueprint
answers both in the same shape, ``{"error": {"field", "message"}}``.
"""

from __future__ import annotations


class WebError(Exception):
    """A refusal with an HTTP status, the field (or header) it is about, and plain words."""

    def __init__(self, field: str | None, message: str, status: int = 400, *, retry_after: float | None = None):
        super().__init__(message)
        self.field = field
        self.message = message
        self.status = status
        self.retry_after = retry_after
