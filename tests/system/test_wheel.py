"""A wheel built from pyproject.toml carries the templates, stylesheets, scripts
and icons: installed on its own (not as an editable checkout) it serves a
styled page."""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import sys
import sysconfig
import textwrap
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
SKIP = shutil.ignore_patterns(
    ".git", ".venv", "node_modules", "tests", "benchmarks", "*.egg-info", "__pycache__", "inkfilm-*data"
)


@pytest.mark.slow
def test_an_installed_wheel_serves_a_styled_page(tmp_path):
    source = tmp_path / "source"
    shutil.copytree(ROOT, source, ignore=SKIP)
    wheels = tmp_path / "wheels"
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--quiet", "--no-deps", "-w", wheels, source],
        check=True,
    )
    [wheel] = wheels.glob("inkfilm-*.whl")
    venv = tmp_path / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", venv], check=True)
    python = venv / "bin" / "python"
    site = Path(
        subprocess.check_output(
            [python, "-c", "import sysconfig; print(sysconfig.get_path('purelib'))"], text=True
        ).strip()
    )
    # The wheel's own files, unpacked as pip would; its dependencies from this
    # test environment (a path line, so that this environment's editable inkfilm
    # is not seen).
    shutil.unpack_archive(wheel, site, "zip")
    (site / "deps.pth").write_text(sysconfig.get_path("purelib") + "\n")
    script = textwrap.dedent(
        """
        import re, sys, tempfile, webapp
        assert webapp.__file__.startswith(sys.prefix), webapp.__file__
        app = webapp.create_app({"TESTING": True, "DATA_DIR": tempfile.mkdtemp()})
        client = app.test_client()
        page = client.get("/").get_data(as_text=True)
        sheet = re.search(r'href="(/static/css/inkfilm\\.css[^"]*)"', page).group(1)
        script = re.search(r'src="(/static/vendor/htmx-[0-9.]+\\.min\\.js[^"]*)"', page).group(1)
        for url in (sheet, script, "/static/icons/inkfilm-192.png", "/static/inkfilm.webmanifest"):
            response = client.get(url)
            assert response.status_code == 200 and len(response.get_data()) > 100, url
        css = client.get(sheet).get_data(as_text=True)
        # Offline working: the phone's script (minified with rjsmin) and the outbox's code, lazily named.
        worker = client.get("/sw.js").get_data(as_text=True)
        offline = re.search(r'importScripts\\("(/offline-calc\\.js\\?v=[0-9a-f]+)"\\)', worker).group(1)
        assert "self.inkfilmOfflineData=" in client.get(offline).get_data(as_text=True)
        for url in re.search(r'data-scripts="([^"]+)"', page).group(1).split(" "):
            assert client.get(url).status_code == 200, url
        # Compressed once into a fresh cache folder, from the installed package's files.
        squeezed = client.get(sheet, headers={"Accept-Encoding": "br"})
        assert squeezed.headers["Content-Encoding"] == "br", squeezed.headers
        assert "immutable" in squeezed.headers["Cache-Control"]
        import os, pathlib
        assert any((pathlib.Path(os.environ["INKFILM_CACHE_DIR"]) / "static").glob("*/css/inkfilm.css.br"))
        from webapp.common import db
        assert db.SCHEMA_VERSION == int(sys.argv[1]), db.SCHEMA_VERSION
        print("ok", len(page), len(css))
        """
    )
    from webapp.common import db

    # Every migration is in the wheel; its dependencies (rjsmin for the phone's script and the worker,
    # rcssmin and rjsmin for the static copy) are declared.
    metadata = zipfile.ZipFile(wheel).read(next(n for n in zipfile.ZipFile(wheel).namelist() if n.endswith("METADATA")))
    assert re.search(rb"^Requires-Dist: rjsmin", metadata, re.M)
    assert re.search(rb"^Requires-Dist: rcssmin", metadata, re.M)
    command = [python, "-c", script, str(db.SCHEMA_VERSION)]
    env = {**os.environ, "INKFILM_CACHE_DIR": str(tmp_path / "cache")}
    result = subprocess.run(command, cwd=tmp_path, env=env, capture_output=True, text=True, timeout=120)
    assert result.returncode == 0, result.stderr
    assert result.stdout.startswith("ok ")
