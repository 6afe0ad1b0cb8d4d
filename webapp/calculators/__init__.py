"""The calculators: the registry of every calculation, its API and its page.

Adding a calculator: write one module here with its spec (see
``webapp.calculators.spec``), its templates under ``templates/calculators/``,
and add its spec to ``CALCULATORS`` below. The API route, the nav, the
service worker's shell pages, the snippet kind names and the share and money
fields all follow from this one list.
"""

from __future__ import annotations

from flask import Blueprint, jsonify

from webapp.calculators import cell, convert, density, estimate, film, fit
from webapp.calculators.spec import Calculator
from webapp.common.formatting import shown
from webapp.common.jsonapi import api, request_body

# In nav order; API-only calculations (no path) last.
CALCULATORS: tuple[Calculator, ...] = (
    convert.EQUIVALENTS,
    film.FILM,
    estimate.ESTIMATE,
    fit.FIT,
    cell.CELL,
    *density.SPECS,  # Ink strength: its page, then its API-only answers
    convert.CONVERT,
)

BY_KIND = {spec.kind: spec for spec in CALCULATORS}
CALCULATIONS = {spec.kind: spec.compute for spec in CALCULATORS}
PAGES = tuple(spec for spec in CALCULATORS if spec.path)
SHARES = frozenset().union(*(spec.shares for spec in CALCULATORS))
MONEY = frozenset().union(*(spec.money for spec in CALCULATORS))

pages = Blueprint("calculators", __name__)
for _spec in PAGES:
    pages.add_url_rule(_spec.path, endpoint=_spec.kind, view_func=_spec.view, methods=["GET", "POST"])

calculations = Blueprint("calculations", __name__)


@calculations.post(f"/<any({', '.join(sorted(CALCULATIONS))}):kind>")
def calculate(kind: str):
    return jsonify(CALCULATIONS[kind](request_body()))


# Nested once, at import: every app made by create_app registers ``api`` with this child.
api.register_blueprint(calculations)


def kind_name(kind) -> str:
    """What people call a saved calculation's kind."""
    spec = BY_KIND.get(kind)
    return spec.title if spec else str(kind).replace("_", " ").capitalize()


def init_app(app) -> None:
    """The calculator pages and the nav for every page (their API is a child of ``api``)."""
    app.register_blueprint(pages)
    app.add_template_global(PAGES, "calculator_pages")
    app.add_template_filter(kind_name, "kind_name")
    # Saved inputs and answers read as the calculator pages show them.
    app.add_template_global(lambda key, value: shown(key, value, shares=SHARES, money=MONEY), "shown")
