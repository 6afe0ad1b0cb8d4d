"""The second line against a frozen interpreter: the watchdog ends a frozen
worker, the supervisor starts a new one, and a real server survives it."""

from __future__ import annotations

import io
import subprocess
import sys
import textwrap
import time
import urllib.request

import pytest

from tests.conftest import serving

# An exact power of a huge integer: one C call that holds the GIL for many
# seconds, the way pint's exact exponents did before the spelling guard.
FREEZE = "10 ** (10 ** 9)"


def test_the_watchdog_ends_a_frozen_interpreter_and_names_the_culprit():
    script = textwrap.dedent(
        f"""
        from webapp import watchdog
        watchdog.start(frozen_after=1.0, beat=0.2)
        def frozen_here():
            return {FREEZE}
        frozen_here()
        """
    )
    began = time.monotonic()
    result = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=60)
    took = time.monotonic() - began
    assert result.returncode != 0
    assert result.stderr.startswith("Timeout (")
    assert "frozen_here" in result.stderr
    assert took < 20  # the power itself would take minutes


def test_the_watchdog_leaves_a_busy_but_live_interpreter_alone():
    # Pure-Python work lets the heartbeat run between bytecodes.
    script = textwrap.dedent(
        """
        import time
        from webapp import watchdog
        watchdog.start(frozen_after=1.0, beat=0.2)
        end = time.monotonic() + 3
        while time.monotonic() < end:
            sum(range(1000))
        print("done")
        """
    )
    result = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=60)
    assert result.returncode == 0 and result.stdout.strip() == "done", result.stderr


def test_the_supervisor_starts_a_frozen_worker_again_and_passes_on_the_exit_code(tmp_path):
    from webapp import watchdog

    marker = tmp_path / "froze-once"
    worker = textwrap.dedent(
        f"""
        import pathlib, sys
        from webapp import watchdog
        marker = pathlib.Path({str(marker)!r})
        if not marker.exists():
            marker.write_text("x")
            watchdog.start(frozen_after=1.0, beat=0.2)
            {FREEZE}
        print("second worker ran")
        sys.exit(3)
        """
    )
    out = io.StringIO()
    code = watchdog.supervise([sys.executable, "-c", worker], out=out)
    log = out.getvalue()
    assert code == 3
    assert "Timeout (" in log and "starting it again" in log and "second worker ran" in log


def test_the_supervisor_does_not_restart_a_worker_that_failed_by_itself():
    from webapp import watchdog

    out = io.StringIO()
    code = watchdog.supervise([sys.executable, "-c", "print('port taken'); raise SystemExit(2)"], out=out)
    assert code == 2
    assert out.getvalue().count("port taken") == 1


@pytest.mark.slow
def test_a_real_server_is_a_supervised_worker_that_stops_cleanly(tmp_path):
    with serving(tmp_path / "data", env={"INKFILM_FROZEN_AFTER_S": "5"}) as (process, base):
        with urllib.request.urlopen(base + "/healthz", timeout=5) as response:
            assert response.status == 200
        children = subprocess.run(["pgrep", "-P", str(process.pid)], capture_output=True, text=True).stdout.split()
        assert len(children) == 1  # the worker, under the supervisor
    assert process.returncode is not None
    time.sleep(0.5)
    assert subprocess.run(["ps", "-p", children[0]], capture_output=True).returncode != 0  # no stray worker
