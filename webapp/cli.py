"""The ``inkfilm`` command: serve the app with waitress, back up its database."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

DEFAULT_DATA = Path("inkfilm-data")
DEMO_DATA = Path("inkfilm-demo-data")
# More threads than a busy shop has clients saving at once (32 in the load test): a save waiting for
# its group's commit holds a thread without using the CPU, and a read must not queue behind those
# (benchmarks/store_concurrency.py: reads beside 32 savers 0.17x their solo rate with 8 threads, 0.43x with 48).
SERVE_THREADS = 48


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="inkfilm", description="inkfilm: anilox volume, ink film and ink quantities")
    commands = parser.add_subparsers(dest="command", required=True)

    serve = commands.add_parser("serve", help="serve the app on the shop network")
    serve.add_argument("--host", default="0.0.0.0", help="address to listen on (default 0.0.0.0, every interface)")
    serve.add_argument(
        "--port",
        type=int,
        default=8080,
        help="plain HTTP port: the phone set-up page, the rest redirected to HTTPS (default 8080; "
        "with --no-https the app itself)",
    )
    serve.add_argument("--https-port", type=int, default=8443, help="HTTPS port for the app (default 8443)")
    serve.add_argument(
        "--name",
        action="append",
        default=[],
        metavar="NAME",
        help="a host name phones use for this server, e.g. inkfilm.local (repeatable); the certificate covers "
        "these besides this machine's addresses and host name",
    )
    serve.add_argument(
        "--tls-cert",
        type=Path,
        metavar="PEM",
        help="the shop's own certificate (chain) instead of inkfilm's shop root; needs --tls-key",
    )
    serve.add_argument("--tls-key", type=Path, metavar="PEM", help="the private key of --tls-cert")
    serve.add_argument(
        "--no-https",
        action="store_true",
        help="serve plain HTTP on --port only, as behind the shop's own HTTPS proxy (phones then get no "
        "offline pages or home-screen app unless that proxy serves HTTPS)",
    )
    serve.add_argument(
        "--data-dir",
        type=Path,
        default=DEFAULT_DATA,
        help=f"folder for inkfilm's data, created if missing (default ./{DEFAULT_DATA}, with --demo ./{DEMO_DATA})",
    )
    serve.add_argument(
        "--time-zone",
        metavar="ZONE",
        default=os.environ.get("INKFILM_TIME_ZONE", ""),
        help="the shop's time zone for the times shown, e.g. Europe/Berlin (default the server's own; "
        "or set INKFILM_TIME_ZONE)",
    )
    serve.add_argument("--threads", type=int, default=SERVE_THREADS, help=f"worker threads (default {SERVE_THREADS})")
    serve.add_argument(
        "--demo",
        action="store_true",
        help="serve an invented shop's saved snippets from a separate data folder, to look around",
    )
    serve.add_argument(
        "--shop-passcode",
        metavar="PASSCODE",
        help="passcode for saving and editing snippets (or set INKFILM_SHOP_PASSCODE; the variable keeps it "
        "out of the process list)",
    )
    serve.add_argument(
        "--supervisor-passcode",
        metavar="PASSCODE",
        help="passcode for deleting, the bin and import (or set INKFILM_SUPERVISOR_PASSCODE)",
    )
    serve.add_argument(
        "--currency",
        metavar="SYMBOL",
        help="the shop's currency symbol or code, shown beside every cost, e.g. € or $ or CHF "
        "(or set INKFILM_CURRENCY; default none: costs are in the currency of the prices typed)",
    )
    # The supervisor runs the server itself as a child with this flag (see webapp.watchdog).
    serve.add_argument("--worker", action="store_true", help=argparse.SUPPRESS)
    serve.set_defaults(handler=serve_command)

    backup = commands.add_parser("backup", help="copy the database consistently to PATH, also while the server runs")
    backup.add_argument("path", type=Path, metavar="PATH", help="file to write the copy to (replaced if it exists)")
    backup.add_argument(
        "--data-dir", type=Path, default=DEFAULT_DATA, help=f"the server's data folder (default ./{DEFAULT_DATA})"
    )
    backup.set_defaults(handler=backup_command)
    return parser


def serve_command(args) -> int:
    if not args.worker:
        from webapp import watchdog

        return watchdog.supervise([sys.executable, "-m", "webapp.cli", *args.argv, "--worker"])
    return serve_worker(args)


def serve_worker(args) -> int:
    import sqlite3

    import waitress

    from webapp import create_app, watchdog
    from webapp.common import db
    from webapp.common.db import NewerDatabaseError

    # The demo shop never fills the real data folder.
    data_dir = (DEMO_DATA if args.demo and args.data_dir == DEFAULT_DATA else args.data_dir).resolve()
    # A folder the server cannot write: one plain line, not a traceback on the first save.
    problem = db.writable_problem(data_dir)
    if problem:
        print(f"inkfilm: {problem}; give a --data-dir the server may write to", file=sys.stderr)
        return 2
    # The server's remembered work (pint's definitions, compressed static files) stays
    # in its data folder like everything else it writes, unless INKFILM_CACHE_DIR says where.
    # Set before calc.units is first imported (create_app imports it).
    os.environ.setdefault("INKFILM_CACHE_DIR", str(data_dir / "cache"))
    config = {"DATA_DIR": str(data_dir), "DEMO": args.demo, "TIME_ZONE": args.time_zone}
    from webapp.common.formatting import check_currency, shop_zone

    try:
        config["CURRENCY"] = check_currency(
            args.currency if args.currency is not None else os.environ.get("INKFILM_CURRENCY", "")
        )
    except ValueError as exc:
        print(f"inkfilm: --currency: {exc}", file=sys.stderr)
        return 2
    try:
        shop_zone(args.time_zone)
    except ValueError as exc:
        print(f"inkfilm: --time-zone {str(exc).partition(': ')[2]}", file=sys.stderr)
        return 2
    shop = args.shop_passcode or os.environ.get("INKFILM_SHOP_PASSCODE")
    supervisor = args.supervisor_passcode or os.environ.get("INKFILM_SUPERVISOR_PASSCODE")
    front = None
    if not args.no_https:
        from webapp.https import front as https_front

        if bool(args.tls_cert) != bool(args.tls_key):
            print("inkfilm: --tls-cert and --tls-key go together: give both, or neither", file=sys.stderr)
            return 2
        for option, path in (("--tls-cert", args.tls_cert), ("--tls-key", args.tls_key)):
            if path and not path.is_file():
                print(f"inkfilm: {option} {path}: there is no such file", file=sys.stderr)
                return 2
        front = https_front.Front(
            data_dir=data_dir,
            host=args.host,
            http_port=args.port,
            https_port=args.https_port,
            names=https_front.own_certificate_names(args.tls_cert, args.name)
            if args.tls_cert
            else https_front.machine_names(args.host, args.name),
            tls_cert=args.tls_cert.resolve() if args.tls_cert else None,
            tls_key=args.tls_key.resolve() if args.tls_key else None,
        )
        config["HTTPS_FRONT"] = front.settings()
    if shop:
        config["SHOP_PASSCODE"] = shop
    if supervisor:
        config["SUPERVISOR_PASSCODE"] = supervisor
    if args.demo:
        from webapp.snippets import demo

        data_dir.mkdir(parents=True, exist_ok=True)
        added = demo.fill(data_dir)
        if added:
            print(f"inkfilm: filled {data_dir} with {added} snippets of the demo shop", flush=True)
        from webapp.rolls import demo as roll_demo

        if rolls_added := roll_demo.fill(data_dir):
            print(f"inkfilm: filled {data_dir} with {rolls_added} anilox rolls of the demo shop", flush=True)
        from webapp.inks import demo as ink_demo

        if inks_added := ink_demo.fill(data_dir):
            print(f"inkfilm: filled {data_dir} with {inks_added} inks and their ink sets of the demo shop", flush=True)
    watchdog.start()
    try:
        app = create_app(config)
    except NewerDatabaseError as exc:
        print(f"inkfilm: {exc}", file=sys.stderr)
        return 2
    except (OSError, sqlite3.DatabaseError) as exc:
        print(f"inkfilm: cannot use the data in {data_dir}: {exc}", file=sys.stderr)
        return 2
    locks = [name for name, value in (("shop", shop), ("supervisor", supervisor)) if value]
    lock_note = f"passcodes set: {', '.join(locks)}" if locks else "no passcodes: the floor can write freely"
    # The passcodes themselves are never printed.
    if front is not None:
        return https_front.serve(app, front, threads=args.threads, note=lock_note)
    print(
        f"inkfilm: serving on http://{args.host}:{args.port}/ with data in {data_dir} ({lock_note})",
        flush=True,
    )
    waitress.serve(app, host=args.host, port=args.port, threads=args.threads, ident="inkfilm")
    return 0


def backup_command(args) -> int:
    from webapp.common import db

    source = args.data_dir.resolve() / db.FILENAME
    if not source.exists():
        print(f"inkfilm: there is no database at {source}", file=sys.stderr)
        return 1
    db.backup(source, args.path)
    print(f"inkfilm: copied {source} to {args.path}", flush=True)
    return 0


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else list(argv)
    args = build_parser().parse_args(argv)
    args.argv = argv
    return args.handler(args)


if __name__ == "__main__":
    sys.exit(main())
