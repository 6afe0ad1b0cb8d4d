"""The second line against a request that holds the server: a watchdog and a restart.

The first line is ``calc.units``' spelling guard: no known input makes pint
(or anything else) work for long. But waitress serves every request on
threads of one interpreter, and a C-level computation that holds the GIL
(an exact power of a huge integer, say) stops all of them: no Python thread,
however well written, gets to run until it ends. So the second line does not
live in Python threads:

- In the server process (the *worker*), a heartbeat thread re-arms
  ``faulthandler.dump_traceback_later`` every second. faulthandler's timer is
  a C thread that needs no GIL: if the heartbeat has not re-armed it for
  ``FROZEN_AFTER_S`` seconds, the interpreter is frozen; it writes every
  thread's traceback (naming the culprit) to the log and ends the process.
- ``inkfilm serve`` itself is a small *supervisor* that runs the worker as a
  child, relays its output, forwards Ctrl-C and SIGTERM, and starts a new
  worker when one was ended by the watchdog. Every answered save was
  already on disk (SQLite, ``synchronous = FULL``; the kill test SIGKILLs the
  server eight times and loses nothing), so a restart loses no saved work; the
  frozen request and those in flight with it get no answer.

A stall is so bounded at ``FROZEN_AFTER_S`` plus a restart (a few seconds)
instead of lasting as long as the computation.
"""

from __future__ import annotations

import faulthandler
import os
import signal
import subprocess
import sys
import threading
import time

FROZEN_AFTER_S = float(os.environ.get("INKFILM_FROZEN_AFTER_S", "20"))
# faulthandler writes this line first when its timer runs out.
FROZEN_MARK = "Timeout ("
RESTARTS_PER_HOUR = 30


def start(frozen_after: float = FROZEN_AFTER_S, beat: float = 1.0) -> threading.Thread:
    """Arm the watchdog in this process: it ends the process if the interpreter freezes."""

    def heartbeat():
        while True:
            faulthandler.dump_traceback_later(frozen_after, repeat=False, file=sys.stderr, exit=True)
            time.sleep(beat)

    thread = threading.Thread(target=heartbeat, name="inkfilm-watchdog", daemon=True)
    thread.start()
    return thread


def _die_with_parent():
    # The worker goes when the supervisor goes, even if it is SIGKILLed.
    try:
        import ctypes

        ctypes.CDLL("libc.so.6", use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass


def _relay(source, target, seen: list[bool]) -> None:
    for line in source:
        if line.startswith(FROZEN_MARK):
            seen[0] = True
        target.write(line)
        target.flush()
    source.close()


def supervise(command: list[str], out=None, err=None) -> int:
    """Run ``command`` (the worker) until it ends; start it again if the watchdog ended it.

    Returns the worker's exit code. Ctrl-C and SIGTERM are passed on to the
    worker, which stops cleanly; no new worker is started after them.
    """
    # A caller that gives one stream (a test) gets both in it.
    err = err or out or sys.stderr
    out = out or sys.stdout
    stopping = threading.Event()
    restarts: list[float] = []
    current: list[subprocess.Popen] = []

    def pass_on(signum, _frame):
        stopping.set()
        if current and current[0].poll() is None:
            current[0].send_signal(signum)

    old = {sig: signal.signal(sig, pass_on) for sig in (signal.SIGTERM, signal.SIGINT)}
    try:
        while True:
            process = subprocess.Popen(
                command,
                stdout=subprocess.PIPE,
                stderr=subprocess.PIPE,
                text=True,
                errors="replace",
                preexec_fn=_die_with_parent if sys.platform.startswith("linux") else None,
            )
            current[:] = [process]
            frozen = [False]
            relays = [
                threading.Thread(target=_relay, args=(process.stdout, out, [False]), daemon=True),
                threading.Thread(target=_relay, args=(process.stderr, err, frozen), daemon=True),
            ]
            for relay in relays:
                relay.start()
            code = process.wait()
            for relay in relays:
                relay.join(timeout=5)
            frozen = frozen[0]
            now = time.monotonic()
            restarts[:] = [when for when in restarts if now - when < 3600]
            if stopping.is_set() or not frozen:
                return code
            if len(restarts) >= RESTARTS_PER_HOUR:
                print("inkfilm: the server froze too often this hour; not starting it again", file=out, flush=True)
                return code
            restarts.append(now)
            print(
                f"inkfilm: the server stopped answering for {FROZEN_AFTER_S:g} s (the trace above shows where); "
                "starting it again",
                file=out,
                flush=True,
            )
    finally:
        for sig, handler in old.items():
            signal.signal(sig, handler)
