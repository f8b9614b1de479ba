"""Nobody sees or changes another organisation's data; auditors only read; roles are enforced."""

import pytest
from django.urls import reverse

from tests.conftest import PASSING, client_for
from tests.factories import JobFactory, UserFactory, make_drop

pytestmark = pytest.mark.django_db

ROLES = ["operator", "supervisor", "auditor", "admin"]


@pytest.fixture
def two_orgs(simple_checklists):
    home = JobFactory()
    drop = make_drop(home)
    away = JobFactory()
    away_drop = make_drop(away)
    return {"home": home, "drop": drop, "away": away, "away_drop": away_drop}


def detail_urls(job, drop):
    return [
        reverse("job-detail", args=[job.pk]),
        reverse("job-transitions", args=[job.pk]),
        reverse("site-detail", args=[job.site_id]),
        reverse("anchor-detail", args=[drop.anchor_id]),
        reverse("equipment-detail", args=[drop.robot_id]),
    ]


@pytest.mark.parametrize("role", ROLES)
def test_other_organisations_rows_are_invisible(two_orgs, role):
    user = UserFactory(organisation=two_orgs["home"].organisation, role=role)
    client = client_for(user)
    for url in detail_urls(two_orgs["away"], two_orgs["away_drop"]):
        assert client.get(url).status_code == 404, url
    for url in detail_urls(two_orgs["home"], two_orgs["drop"]):
        assert client.get(url).status_code == 200, url
    for name in ("job-list", "site-list", "anchor-list", "equipment-list", "sheet-list"):
        body = client.get(reverse(name)).json()
        ids = {row["id"] for row in body["results"]}
        away = {
            "job-list": two_orgs["away"].pk,
            "site-list": two_orgs["away"].site_id,
            "anchor-list": two_orgs["away_drop"].anchor_id,
            "equipment-list": two_orgs["away_drop"].robot_id,
        }.get(name)
        assert away not in ids, name


@pytest.mark.parametrize("role", ROLES)
def test_other_organisations_rows_cannot_be_changed(two_orgs, role, simple_checklists):
    user = UserFactory(organisation=two_orgs["home"].organisation, role=role)
    client = client_for(user)
    away, away_drop = two_orgs["away"], two_orgs["away_drop"]
    assert client.post(reverse("job-start", args=[away.pk])).status_code in (403, 404)
    assert client.post(
        reverse("anchor-certifications", args=[away_drop.anchor_id]),
        {
            "certifier": "x",
            "rated_capacity_kn": 30,
            "certified_on": "2026-01-01",
            "valid_until": "2027-01-01",
        },
        format="json",
    ).status_code in (403, 404)
    response = client.post(
        reverse("sheet-list"),
        {
            "job": away.pk,
            "version": simple_checklists["site"].pk,
            "entries": PASSING["site"],
        },
        format="json",
    )
    assert response.status_code in (400, 403)
    if response.status_code == 400:
        assert "job" in response.json()
    assert away.sheets.count() == 0


def test_auditor_reads_but_never_writes(two_orgs, simple_checklists):
    home = two_orgs["home"]
    auditor = UserFactory(organisation=home.organisation, role="auditor")
    client = client_for(auditor)
    assert client.get(reverse("job-detail", args=[home.pk])).status_code == 200
    writes = [
        (reverse("job-start", args=[home.pk]), {}),
        (reverse("job-close", args=[home.pk]), {}),
        (
            reverse("job-list"),
            {"site": home.site_id, "date": "2026-12-02", "supervisor": home.supervisor_id},
        ),
        (
            reverse("sheet-list"),
            {"job": home.pk, "version": simple_checklists["site"].pk, "entries": PASSING["site"]},
        ),
        (reverse("equipment-list"), {"kind": "hose", "label": "H9", "ratings": {}}),
        (reverse("anchor-certifications", args=[two_orgs["drop"].anchor_id]), {}),
    ]
    for url, body in writes:
        assert client.post(url, body, format="json").status_code == 403, url
    assert home.sheets.count() == 0


def test_operator_cannot_record_certifications_or_publish(two_orgs):
    home = two_orgs["home"]
    operator = UserFactory(organisation=home.organisation, role="operator")
    client = client_for(operator)
    response = client.post(
        reverse("anchor-certifications", args=[two_orgs["drop"].anchor_id]),
        {
            "certifier": "x",
            "rated_capacity_kn": 30,
            "certified_on": "2026-01-01",
            "valid_until": "2027-01-01",
        },
        format="json",
    )
    assert response.status_code == 403
    response = client.post(
        reverse("checklist-list"),
        {"key": "own", "title": "Own", "applies_to": "site"},
        format="json",
    )
    assert response.status_code == 403


def test_anonymous_gets_nothing(two_orgs, api):
    for url in detail_urls(two_orgs["home"], two_orgs["drop"]):
        assert api.get(url).status_code in (401, 403)


def test_a_user_without_organisation_gets_nothing(two_orgs):
    loner = UserFactory(organisation=None, role="admin")
    client = client_for(loner)
    assert client.get(reverse("job-list")).status_code == 403
