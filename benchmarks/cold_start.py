"""Benchmark: cold start to the first answer (issue 16: <= 0.4 s).

Two measures, each the median of three starts after one that fills the caches
(byte code as pip compiles it at install, pint's definitions, the compressed
static files), as a shop's installed server starts again:

- ``inkfilm serve --no-https`` launched until its first calculation is
  answered over HTTP (polled every 5 ms), the supervisor and its worker included;
- a fresh ``python -c``: import, ``create_app``, the first answer through the
  test client, with the time of each part.

``--profile`` also prints where a fresh process's time goes (cProfile, by
cumulative time), to find what the first answer does not need.

    python benchmarks/cold_start.py [--profile]

Not a timed test; on a busy machine the absolute figures rise.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from request_path import CONVERT_BODY, ROOT, START_PARTS, section_start, start_environment  # noqa: E402

PROFILED = """
import cProfile, pstats, sys
profile = cProfile.Profile()
profile.enable()
exec(compile(sys.argv[2], "<start>", "exec"), {"__name__": "__start__"})
profile.disable()
pstats.Stats(profile, stream=sys.stderr).sort_stats("cumulative").print_stats(int(sys.argv[1]))
"""


def profile(lines: int) -> str:
    with tempfile.TemporaryDirectory() as pycache:
        env = start_environment(pycache)
        command = [
            sys.executable,
            "-c",
            PROFILED,
            str(lines),
            START_PARTS.replace("sys.argv[1]", repr(CONVERT_BODY.decode())),
        ]
        for _ in range(2):  # the first compiles and fills the caches
            result = subprocess.run(command, cwd=ROOT, env=env, capture_output=True, text=True, check=True)
    return result.stderr


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--profile", action="store_true", help="also print a cProfile of one fresh start")
    parser.add_argument("--lines", type=int, default=40)
    args = parser.parse_args(argv)
    print(f"machine: {os.cpu_count()} cores; load {os.getloadavg()[0]:.1f}")
    print("\n".join(section_start(args)))
    if args.profile:
        print(profile(args.lines))
    return 0


if __name__ == "__main__":
    sys.exit(main())
