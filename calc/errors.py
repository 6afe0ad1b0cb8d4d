"""The one error type the core raises for anything a user typed wrong."""


class InputError(ValueError):
    """An input the core cannot work with.

    ``field`` names the input (as the caller named it, e.g. ``"anilox_volume"``
    or ``"stations[2].coverage"``) where it is known; ``message`` says in plain
    words what is wrong and, where possible, what would be right.
    """

    def __init__(self, field: str | None, message: str):
        super().__init__(message)
        self.field = field
        self.message = message

    def within(self, prefix: str) -> "InputError":
        """The same error with its field placed inside ``prefix``."""
        if not prefix:
            return self
        field = f"{prefix}.{self.field}" if self.field else prefix
        return InputError(field, self.message)

    def __str__(self) -> str:
        return f"{self.field}: {self.message}" if self.field else self.message
