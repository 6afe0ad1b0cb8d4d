"""How a result was worked out: the formula and the numbers put into it."""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class Step:
    """One line of working.

    ``label`` says what the step gives in plain words, ``formula`` the rule in
    symbols, ``inputs`` the symbols with the values put in (Quantities, or
    plain floats for shares), and ``result`` the value the step gave.
    """

    label: str
    symbol: str
    formula: str
    inputs: tuple[tuple[str, object], ...]
    result: object


@dataclass
class Working:
    """The steps of one calculation, in order."""

    steps: list[Step] = field(default_factory=list)

    def add(self, label: str, symbol: str, formula: str, inputs: dict, result):
        self.steps.append(Step(label, symbol, formula, tuple(inputs.items()), result))
        return result


class Count(int):
    """A whole number in the working (impressions, labels, labels across), read as a count, not a share."""


class Money(float):
    """A price or cost in the working, in the currency of the prices, read as money, not a share."""
