"""The ``inkfilm`` command: serve the app with waitress."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="inkfilm", description="inkfilm: anilox volume, ink film and ink quantities")
    commands = parser.add_subparsers(dest="command", required=True)

    serve = commands.add_parser("serve", help="serve the app on the shop network")
    serve.add_argument("--host", default="0.0.0.0", help="address to listen on (default 0.0.0.0, every interface)")
    serve.add_argument("--port", type=int, default=8080, help="port to listen on (default 8080)")
    serve.add_argument(
        "--data-dir",
        type=Path,
        default=Path("inkfilm-data"),
        help="folder for inkfilm's data, created if missing (default ./inkfilm-data)",
    )
    serve.add_argument("--threads", type=int, default=8, help="worker threads (default 8)")
    serve.set_defaults(handler=serve_command)
    return parser


def serve_command(args) -> int:
    import waitress

    from webapp import create_app

    data_dir = args.data_dir.resolve()
    app = create_app({"DATA_DIR": str(data_dir)})
    print(f"inkfilm: serving on http://{args.host}:{args.port}/ with data in {data_dir}", flush=True)
    waitress.serve(app, host=args.host, port=args.port, threads=args.threads, ident="inkfilm")
    return 0


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    return args.handler(args)


if __name__ == "__main__":
    sys.exit(main())
