"""The ``inkfilm serve`` command, as the README runs it."""

import json
import urllib.request

import pytest

from tests.conftest import serving
from webapp.cli import build_parser


def test_serve_defaults():
    args = build_parser().parse_args(["serve"])
    assert (args.host, args.port, str(args.data_dir)) == ("0.0.0.0", 8080, "inkfilm-data")


def test_waitress_serves_the_api_and_creates_the_data_dir(tmp_path):
    data_dir = tmp_path / "fresh" / "data"
    with serving(data_dir) as (_process, base):
        request = urllib.request.Request(
            base + "/api/v1/convert",
            data=json.dumps({"quantity": "0.6 mil", "to": "um"}).encode(),
            headers={"Content-Type": "application/json"},
        )
        with urllib.request.urlopen(request, timeout=5) as response:
            assert response.headers["Server"] == "inkfilm"  # waitress, not the development server
            assert json.load(response)["result"]["value"] == pytest.approx(15.24, rel=1e-12)
        assert data_dir.is_dir()
