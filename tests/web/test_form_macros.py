"""The one set of form pieces (``templates/_form.html``) behind the roll register, the inks and the saved
snippets: the message beside each field, alone or in a slot a live answer refills out of band."""

from __future__ import annotations

import re

from tests.conftest import csrf_from


def render(app, source: str, **context) -> str:
    with app.test_request_context():
        return app.jinja_env.from_string(source).render(**context)


def test_an_error_alone_or_in_a_slot_refilled_out_of_band(app):
    errors = {"m-volume": "must be a number"}
    alone = render(app, '{% from "_form.html" import error %}{{ error(errors, "m-volume") }}', errors=errors)
    assert alone == '<p class="field-error" role="alert" id="e-m-volume">must be a number</p>'
    assert render(app, '{% from "_form.html" import error %}{{ error({}, "x") }}') == ""
    slot = render(app, '{% from "rolls/_macros.html" import error %}{{ error(errors, "m-volume") }}', errors=errors)
    assert slot == f'<div id="slot-m-volume" class="error-slot">{alone}</div>'
    oob = render(app, '{% from "rolls/_macros.html" import error %}{{ error({}, "work", oob=True) }}')
    assert oob == '<div id="slot-work" class="error-slot" hx-swap-oob="innerHTML"></div>'


def test_a_field_names_its_message_and_hint_and_keeps_what_was_typed(app):
    source = (
        '{% from "_form.html" import field %}'
        '{{ field("volume", "Volume", "1,6x", errors, p="m-", hint="As read", inputmode="decimal") }}'
    )
    html = render(app, source, errors={"m-volume": "must be a number"})
    assert '<div class="field has-error">' in html and '<label for="f-m-volume">Volume</label>' in html
    assert re.search(r'<input id="f-m-volume" name="volume" type="text" value="1,6x" autocomplete="off"', html)
    assert 'inputmode="decimal"' in html and 'aria-describedby="h-m-volume e-m-volume"' in html
    assert 'aria-invalid="true"' in html and '<p class="field-hint" id="h-m-volume">As read</p>' in html
    rolls = render(app, source.replace('"_form.html"', '"rolls/_macros.html"'), errors={"m-volume": "bad"})
    assert '<div id="slot-m-volume" class="error-slot"><p class="field-error"' in rolls


def test_the_snippets_passcode_asks_for_digits_the_others_do_not(app):
    snippets = render(app, '{% from "snippets/_macros.html" import passcode_field %}{{ passcode_field({}, "shop") }}')
    shared = render(app, '{% from "_form.html" import passcode %}{{ passcode({}, "shop") }}')
    assert 'inputmode="numeric"' in snippets and "inputmode" not in shared
    assert snippets.replace(' inputmode="numeric"', "") == shared
    assert '<label for="f-passcode">Shop passcode</label>' in shared


def test_the_register_and_the_inks_refuse_a_form_with_the_same_markup_beside_the_field(client):
    token = csrf_from(client)
    ink = client.post("/inks/new", data={"csrf_token": token, "name": "", "type": "water_based", "density": "1"})
    roll = client.post("/rolls/new", data={"csrf_token": token, "roll_id": "", "screen": "800", "angle": "60"})
    assert ink.status_code == roll.status_code == 400
    ink_page, roll_page = ink.get_data(as_text=True), roll.get_data(as_text=True)
    assert re.search(r'<div class="field has-error">\s*<label for="f-name">', ink_page)
    assert re.search(r'<p class="field-error" role="alert" id="e-name">[^<]+</p>\s*</div>', ink_page)
    assert re.search(r'<div class="field has-error">\s*<label for="f-nominal_volume">', roll_page)
    assert re.search(r'<div id="slot-nominal_volume" class="error-slot"><p class="field-error" role="alert"', roll_page)


def test_both_csv_import_pages_are_one_form_with_their_own_tables(client):
    rolls, inks = (client.get(url).get_data(as_text=True) for url in ("/rolls/import", "/inks/import"))

    def form(page: str) -> str:
        return re.search(r'<form method="post" action="/[a-z]+/import".*?</form>', page, re.S).group(0)

    tables = [re.findall(r'name="table" value="(\w+)"', form(page)) for page in (rolls, inks)]
    assert tables == [["rolls", "measurements", "cleanings"], ["inks", "readings"]]
    for page in (rolls, inks):
        assert 'enctype="multipart/form-data"' in form(page) and 'accept=".csv,text/csv"' in form(page)
        assert ">Check and import</button>" in form(page) and 'name="csrf_token"' in form(page)
    assert '<div id="slot-file" class="error-slot">' in rolls and "slot-file" not in inks
