"""Saved snippets in Chromium at phone size: save a film chain, find it by job number,
open it on a second device by its share link, edit it on both and meet the conflict."""

from __future__ import annotations

import random

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE

pytestmark = pytest.mark.browser


def no_sideways_scroll(page):
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE["width"]


def test_save_find_share_and_edit_on_two_phones(open_context, screenshots):
    job = f"24-{random.randint(1000, 9999)}"
    operator = open_context(PHONE).new_page()

    # At the press: work out the film and save it in one tap.
    operator.goto("/film")
    operator.get_by_label("Anilox volume").fill("4.5")
    operator.get_by_label("Anilox to plate %").fill("50")
    operator.get_by_label("Plate to substrate %").fill("50")
    save = operator.get_by_role("button", name="Save this…")
    expect(save).to_be_visible()
    save.click()
    expect(operator.get_by_role("heading", name="Save this film chain")).to_be_visible()
    operator.get_by_label("Title").fill(f"Station 3 film, job {job}")
    operator.get_by_label("Job number").fill(job)
    operator.get_by_label("Station").fill("3")
    operator.get_by_label("Press").fill("N2")
    operator.get_by_label("Notes").fill("Ran well at the end of the day.\nSleeve 4.5-B.")
    operator.get_by_label("Tags").fill("handover, spot colour")
    operator.get_by_label("Your name").fill("Oksana")
    operator.screenshot(path=str(screenshots / "snippet-save-phone.png"), full_page=True)
    operator.get_by_role("button", name="Save", exact=True).click()
    expect(operator.get_by_text("Saved. Anyone on the shop network")).to_be_visible()
    expect(operator.get_by_role("heading", name=f"Station 3 film, job {job}")).to_be_visible()

    # Next shift: find it by job number on the Saved page.
    operator.get_by_role("link", name="Saved").click()
    # Type only once the page (and htmx with it) has loaded, as a person would.
    operator.wait_for_load_state("load")
    operator.get_by_label("Find").fill(job)
    result = operator.locator("#snippet-results").get_by_role("link", name=f"Station 3 film, job {job}")
    expect(result).to_be_visible()
    expect(operator.locator("#snippet-results .lead")).to_have_text("1 found.")
    no_sideways_scroll(operator)
    operator.screenshot(path=str(screenshots / "snippet-list-phone.png"), full_page=True)
    result.click()
    expect(operator.get_by_text("Results as saved")).to_be_visible()
    operator.get_by_role("link", name="Work it out again with today's version").click()
    expect(operator.get_by_text("the same results")).to_be_visible()
    qr = operator.get_by_role("img", name="QR code of the link")
    expect(qr).to_be_visible()
    assert operator.evaluate("(img) => img.naturalWidth", qr.element_handle()) > 0
    share_url = operator.locator("a.share-link").get_attribute("href")
    no_sideways_scroll(operator)
    operator.screenshot(path=str(screenshots / "snippet-view-phone.png"), full_page=True)

    # A second phone opens what the first one shows, by its share link.
    supervisor = open_context(PHONE).new_page()
    supervisor.goto(share_url)
    expect(supervisor.get_by_role("heading", name=f"Station 3 film, job {job}")).to_be_visible()

    # Both open the editor; the operator saves first, the supervisor second.
    operator.get_by_role("link", name="Edit").click()
    supervisor.get_by_role("link", name="Edit").click()
    operator.get_by_label("Notes").fill("Blade changed at 14:00.")
    operator.get_by_role("button", name="Save changes").click()
    expect(operator.get_by_text("Changes saved (version 2).")).to_be_visible()

    supervisor.get_by_label("Notes").fill("Keep for the reorder in spring.")
    supervisor.get_by_role("button", name="Save changes").click()
    conflict = supervisor.get_by_role("alert").filter(has_text="changed this snippet while you were editing")
    expect(conflict).to_be_visible()
    expect(conflict).to_contain_text("Blade changed at 14:00.")
    # Both changed the notes: the supervisor's words wait as "Yours", beside theirs, for a choice.
    expect(supervisor.get_by_role("radio", name="Yours")).to_be_visible()
    expect(supervisor.locator("#choose-notes")).to_contain_text("Keep for the reorder in spring.")
    no_sideways_scroll(supervisor)
    supervisor.screenshot(path=str(screenshots / "snippet-conflict-phone.png"), full_page=True)

    # Nothing was overwritten silently.
    operator.reload()
    expect(operator.get_by_text("Blade changed at 14:00.")).to_be_visible()


def test_axe_finds_no_serious_problems_on_the_snippet_pages(open_context, check_axe):
    # The CSP forbids inline scripts, axe's included: this context bypasses it.
    page = open_context(PHONE, bypass_csp=True).new_page()
    body = {
        "kind": "estimate",
        "title": "Axe check: two stations",
        "job_number": "24-0001",
        "notes": "checked",
        "tags": ["axe"],
        "inputs": {
            "web_width": "330 mm",
            "run_length": "1000 m",
            "stations": [
                {
                    "name": "Cyan",
                    "anilox_volume": "3 BCM/in2",
                    "coverage": 0.4,
                    "transfer": 0.3,
                    "ink_density": "1 g/cm3",
                },
                {
                    "name": "Black",
                    "anilox_volume": "3 BCM/in2",
                    "coverage": 0.2,
                    "transfer": 0.3,
                    "ink_density": "1 g/cm3",
                },
            ],
        },
    }
    snippet = page.request.post("/api/v1/snippets", data=body).json()
    paths = [
        "/snippets",
        f"/snippets/{snippet['id']}?rerun=1",
        f"/snippets/{snippet['id']}/edit",
        "/snippets/bin",
        "/snippets/import",
        "/settings",
    ]
    for path in paths:
        page.goto(path)
        no_sideways_scroll(page)
        check_axe(page, path)
