"""The calculations over HTTP and from the command line answer the same JSON."""

import json

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError
from django.urls import reverse

from compliance.engineering import run
from tests.conftest import client_for
from tests.engineering.examples import SUCTION
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db

HOLD = {**SUCTION, "vacuum_kpa": 60, "cup_diameter_m": 0.2, "mass_kg": 60}


def test_api_and_command_agree_with_the_library(job, capsys):
    user = UserFactory(organisation=job.organisation, role="auditor")
    response = client_for(user).post(reverse("calc", args=["suction-hold"]), HOLD, format="json")
    assert response.status_code == 200
    body = response.json()
    call_command("calc", "suction-hold", "--input", json.dumps(HOLD))
    printed = json.loads(capsys.readouterr().out)
    assert body == printed == json.loads(json.dumps(run("suction-hold", HOLD).to_dict()))
    assert set(body) == {
        "name",
        "inputs",
        "outputs",
        "verdict",
        "margin",
        "governing",
        "steps",
        "reason",
        "caution",
    }
    assert body["steps"] and "licensed engineer" in body["caution"]


def test_bad_input_names_the_field(job):
    client = client_for(UserFactory(organisation=job.organisation))
    response = client.post(
        reverse("calc", args=["suction-hold"]), {**HOLD, "vacuum_kpa": -1}, format="json"
    )
    assert response.status_code == 400 and "vacuum_kpa" in response.json()
    response = client.post(reverse("calc", args=["suction-hold"]), [1, 2], format="json")
    assert response.status_code == 400
    assert client.post(reverse("calc", args=["warp-drive"]), {}, format="json").status_code == 404
    with pytest.raises(CommandError, match="vacuum_kpa"):
        call_command("calc", "suction-hold", "--input", json.dumps({**HOLD, "vacuum_kpa": "lots"}))
    with pytest.raises(CommandError, match="input"):
        call_command("calc", "suction-hold", "--input", "{not json")


def test_anonymous_cannot_compute(api):
    assert api.post(reverse("calc", args=["suction-hold"]), HOLD, format="json").status_code in (
        401,
        403,
    )
