"""The one rule for the volume a roll is judged on (``webapp.rolls.register.judged_volume``): its latest
measured, else its certificate, else its nominal; the fit for a job and an ink set's rolls judge alike."""

from __future__ import annotations

from tests.web.test_inks_api import SETS, add_ink, add_readings, add_set
from tests.web.test_rolls_api import URL, add_roll, measure


def test_the_fit_for_a_job_and_an_ink_set_judge_each_roll_on_the_same_volume(client):
    measured = add_roll(client, roll_id="J-1", nominal_volume="1.8 BCM/in2", certificate_volume="1.85 BCM/in2")
    measure(client, measured["id"], 30, "1.7 BCM/in2")
    measure(client, measured["id"], 5, "1.62 BCM/in2")  # the latest counts
    add_roll(client, roll_id="J-2", nominal_volume="1.2 BCM/in2", certificate_volume="1.3 BCM/in2")
    add_roll(client, roll_id="J-3", nominal_volume="1.4 BCM/in2", certificate_volume=None)
    job = client.get(f"{URL}/fitting?plate_screen=150%20lpi&work=process").get_json()
    by_job = {
        item["roll_id"]: (item["fit"]["volume"]["value"], item["fit"]["judged_on"])
        for item in job["fitting"] + [left["roll"] for left in job["left_out"]]
        if "fit" in item
    }
    assert by_job == {"J-1": (1.62, "measured"), "J-2": (1.3, "certificate"), "J-3": (1.4, "nominal")}

    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    on_rolls = client.get(f"{SETS}/{ink_set['id']}/rolls?target_density=1.3&transfer=0.25").get_json()
    by_set = {item["roll_id"]: (item["volume"]["value"], item["judged_on"]) for item in on_rolls["rolls"]}
    assert by_set == by_job
