"""Run one call in a forked child with a time limit, for tests of inputs that could freeze the server.

pint evaluates powers exactly, and a huge exact power holds the GIL for as
long as it takes: no thread, signal handler or pytest timeout in the same
process gets a turn. A forked child can be killed, so a test of such an input
fails within seconds, naming the input, instead of hanging the run.
"""

from __future__ import annotations

import multiprocessing
import time
from dataclasses import dataclass


@dataclass(frozen=True)
class Outcome:
    """What the call did: its value, or the type, field and message of what it raised."""

    value: object = None
    raised: str | None = None
    field: str | None = None
    message: str = ""
    seconds: float = 0.0

    def returned(self):
        """The call's value; fails the test, with what was raised, if it raised instead."""
        assert self.raised is None, f"raised {self.raised}: {self.message}"
        return self.value


def _child(send, function, args) -> None:
    start = time.monotonic()
    try:
        value = function(*args)
    except BaseException as exc:  # noqa: BLE001 - every kind is reported to the parent
        outcome = Outcome(
            raised=type(exc).__name__,
            field=getattr(exc, "field", None),
            message=str(getattr(exc, "message", exc)),
            seconds=time.monotonic() - start,
        )
    else:
        outcome = Outcome(value=value, seconds=time.monotonic() - start)
    send.send(outcome)
    send.close()


def run_within(seconds: float, function, *args) -> Outcome:
    """``function(*args)`` in a forked child; fails the test if it has not finished in ``seconds``.

    The value must pickle (return plain data: a status code, a dict, a string).
    """
    context = multiprocessing.get_context("fork")
    receive, send = context.Pipe(duplex=False)
    child = context.Process(target=_child, args=(send, function, args), daemon=True)
    child.start()
    send.close()
    try:
        if not receive.poll(seconds):
            shown = repr(args)[:120]
            raise AssertionError(f"{getattr(function, '__name__', function)}{shown} ran over {seconds} s")
        return receive.recv()
    finally:
        receive.close()
        if child.is_alive():
            child.kill()
        child.join(10)
        child.close()
