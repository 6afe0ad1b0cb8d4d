"""The phone's offline answers agree with the server's, input for input.

For 640 generated form inputs (every unit of the converter, density and
coverage given and not, answers asked in other units, the film chain with
and without solids and density, values from 1e-3 to 1e4, typed units, and
bad input of every kind) the offline code (static/js/offline-calc.js with the
offline document) works the answer out in Chromium, and the same form is
posted to the server as htmx posts it. Both fragments are read with the same
parser and compared: every number (full precision, from the ``<data value>``
and ``data-api-value`` attributes) within a relative 1e-9, every error in the
same field's slot with the same words, the menus set from typed units, the
links, the saved inputs, the drawing, and every word of the text (numbers as
rounded, labels, notes, "How this was worked out"). The raw numbers the
offline code returns are also checked against the JSON API
(``/api/v1/equivalents``, ``/api/v1/film``).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.browser.conftest import PHONE, record_measurement
from tests.browser.offline_cases import all_cases

pytestmark = pytest.mark.browser

# The comparison, run in the page: one call for every case.
_SOURCE = Path(__file__).with_name("offline_agreement.js").read_text(encoding="utf-8")
COMPARE = "\n".join(line for line in _SOURCE.splitlines() if not line.startswith("//"))


def test_offline_answers_agree_with_the_server(open_context):
    cases = all_cases()
    assert len(cases) >= 500
    page = open_context(PHONE).new_page()
    page.goto("/")
    page.add_script_tag(url="/offline-calc.js")  # the very script the service worker imports
    result = page.evaluate(COMPARE, cases)
    record_measurement(
        f"offline agreement: {result['compared']} inputs ({result['errors']} with an error), "
        f"{result['numbers']} numbers, {result['apiChecked']} checked against the JSON API, "
        f"{result['problemCount']} disagreements"
    )
    assert result["problemCount"] == 0, "\n".join(map(repr, result["problems"]))
    assert result["compared"] >= 500 and result["apiChecked"] >= 300 and result["errors"] >= 50
