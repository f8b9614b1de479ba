"""Every endpoint × every role × another organisation's data: nothing read, nothing written."""

import io
import uuid

import pytest
from django.urls import reverse
from PIL import Image

from checklists.models import CheckSheet, Photo
from compliance.daily_records import sign_daily_record
from compliance.models import AnchorLogEntry, DailyRecord, SiteAccess
from compliance.services import close_job, start_job
from compliance.signing import create_self_signed
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import PASSWORD, JobFactory, UserFactory, make_drop

pytestmark = pytest.mark.django_db
ROLES = ["operator", "supervisor", "auditor", "admin", "property_manager"]


@pytest.fixture
def away(simple_checklists):
    """Another organisation's full day: sheets, a signed record, a log entry, a photo."""
    job = JobFactory()
    make_drop(job)
    create_self_signed(organisation=job.organisation)
    operator = UserFactory(organisation=job.organisation)
    sheets = fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    close_job(job=job, by=operator)
    record = sign_daily_record(
        job=job, by=job.supervisor, password=PASSWORD, meaning="reviewed_safe"
    )
    from compliance.anchor_log import record_entry

    entry = record_entry(
        anchor=job.drops.first().anchor,
        by=job.supervisor,
        password=PASSWORD,
        kind="repair",
        details="x",
        performed_on=job.date,
    )
    return {"job": job, "sheet": sheets[0], "record": record, "entry": entry}


def reads(a):
    job = a["job"]
    drop = job.drops.first()
    return [
        reverse("job-detail", args=[job.pk]),
        reverse("job-transitions", args=[job.pk]),
        reverse("site-detail", args=[job.site_id]),
        reverse("anchor-detail", args=[drop.anchor_id]),
        reverse("equipment-detail", args=[drop.robot_id]),
        reverse("sheet-detail", args=[a["sheet"].pk]),
        reverse("record-detail", args=[a["record"].pk]),
        reverse("record-pdf", args=[a["record"].pk]),
        reverse("anchor-log-detail", args=[a["entry"].pk]),
        reverse("site-log-book", args=[job.site_id]),
        reverse("site-grants", args=[job.site_id]),
    ]


def lists(a):
    job = a["job"]
    return {
        reverse("job-list"): job.pk,
        reverse("sheet-list"): a["sheet"].pk,
        reverse("record-list"): a["record"].pk,
        reverse("anchor-log-list"): a["entry"].pk,
        reverse("site-list"): job.site_id,
        reverse("equipment-list"): job.drops.first().robot_id,
        reverse("anchor-list"): job.drops.first().anchor_id,
    }


def _png():
    data = io.BytesIO()
    Image.new("RGB", (8, 8)).save(data, format="PNG")
    data.seek(0)
    data.name = "p.png"
    return data


@pytest.mark.parametrize("role", ROLES)
def test_no_read_of_another_organisation(away, role, job):
    user = UserFactory(organisation=job.organisation, role=role)
    client = client_for(user)
    for url in reads(away):
        assert client.get(url).status_code in (403, 404), url
    for url, their_id in lists(away).items():
        ids = [row["id"] for row in client.get(url).json()["results"]]
        assert their_id not in ids, url
    export = client.get(
        reverse("record-export"),
        {"site": away["job"].site_id, "start": "2000-01-01", "end": "2000-12-31"},
    )
    assert export.status_code == 400 and "site" in export.json()


@pytest.mark.parametrize("role", ROLES)
def test_no_write_to_another_organisation(away, role, job, simple_checklists, tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    user = UserFactory(organisation=job.organisation, role=role)
    client = client_for(user)
    theirs = away["job"]
    drop = theirs.drops.first()
    before = (
        CheckSheet.objects.count(),
        DailyRecord.objects.count(),
        AnchorLogEntry.objects.count(),
        Photo.objects.count(),
        SiteAccess.objects.count(),
    )
    attempts = [
        ("post", reverse("job-start", args=[theirs.pk]), {}),
        ("post", reverse("job-close", args=[theirs.pk]), {"reason": "x"}),
        (
            "post",
            reverse("job-sign", args=[theirs.pk]),
            {"password": PASSWORD, "meaning": "reviewed_safe"},
        ),
        ("post", reverse("job-drops", args=[theirs.pk]), {}),
        (
            "post",
            reverse("record-addenda", args=[away["record"].pk]),
            {"password": PASSWORD, "text": "x"},
        ),
        (
            "post",
            reverse("anchor-certifications", args=[drop.anchor_id]),
            {
                "certifier": "x",
                "rated_capacity_kn": 30,
                "certified_on": "2026-01-01",
                "valid_until": "2027-01-01",
            },
        ),
        (
            "post",
            reverse("anchor-log-list"),
            {
                "anchor": drop.anchor_id,
                "kind": "repair",
                "performed_on": "2026-01-01",
                "details": "x",
                "password": PASSWORD,
            },
        ),
        (
            "post",
            reverse("site-grants", args=[theirs.site_id]),
            {"contractor": job.organisation_id, "starts_on": "2026-01-01", "ends_on": "2030-01-01"},
        ),
        (
            "post",
            reverse("sheet-list"),
            {"job": theirs.pk, "version": simple_checklists["site"].pk, "entries": PASSING["site"]},
        ),
        (
            "post",
            reverse("job-list"),
            {"site": theirs.site_id, "date": "2026-12-02", "supervisor": theirs.supervisor_id},
        ),
    ]
    for method, url, body in attempts:
        response = getattr(client, method)(url, body, format="json")
        assert response.status_code in (400, 403, 404), (url, response.status_code)
    photo = client.post(
        reverse("photos"),
        {"client_uuid": str(uuid.uuid4()), "job": theirs.pk, "image": _png()},
        format="multipart",
    )
    assert photo.status_code in (400, 403)
    synced = client.post(
        reverse("sync"),
        {
            "records": [
                {
                    "type": "sheet",
                    "client_uuid": str(uuid.uuid4()),
                    "data": {
                        "job": theirs.pk,
                        "version": simple_checklists["site"].pk,
                        "entries": PASSING["site"],
                    },
                },
                {
                    "type": "job_action",
                    "client_uuid": str(uuid.uuid4()),
                    "data": {"job": theirs.pk, "action": "start"},
                },
                {"type": "drop_log", "client_uuid": str(uuid.uuid4()), "data": {"drop": drop.pk}},
            ]
        },
        format="json",
    )
    if synced.status_code == 200:
        assert {r["status"] for r in synced.json()["results"]} == {"rejected"}
    else:
        assert synced.status_code == 403
    after = (
        CheckSheet.objects.count(),
        DailyRecord.objects.count(),
        AnchorLogEntry.objects.count(),
        Photo.objects.count(),
        SiteAccess.objects.count(),
    )
    assert after == before
