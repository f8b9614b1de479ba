"""The offline queue's endpoint: every record applied once, however often the batch is sent."""

import io
import json
import uuid

import pytest
from django.urls import reverse
from django.utils import timezone
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from PIL import Image

from checklists.models import CheckSheet, Photo
from compliance.jobs.selectors import job_requirements
from compliance.jobs.sync import REUSED_ID
from compliance.models import DropLog, JobTransition, SyncReceipt
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import make_drop, published_checklist

pytestmark = pytest.mark.django_db


def sheet_record(job, version, entries, subject=None, key=None):
    data = {
        "job": job.pk,
        "version": version.pk,
        "entries": entries,
        # Filled in the morning of the job's day, on a phone an hour ahead of UTC.
        "device_time": f"{job.date.isoformat()}T07:05:00+01:00",
    }
    if subject is not None and subject.anchor is not None:
        data["anchor"] = subject.anchor.pk
    if subject is not None and subject.equipment is not None:
        data["equipment"] = subject.equipment.pk
    return {"type": "sheet", "client_uuid": key or str(uuid.uuid4()), "data": data}


def site_record(job, versions, entries=None, key=None):
    return sheet_record(job, versions["site"], entries or PASSING["site"], key=key)


def sync(client, records):
    response = client.post(reverse("sync"), {"records": records}, format="json")
    assert response.status_code == 200, response.json()
    return response.json()


def test_a_batch_applies_and_reports_per_record(job, simple_checklists, operator):
    client = client_for(operator)
    good = site_record(job, simple_checklists)
    bad = site_record(job, simple_checklists, {"zone_closed": {"value": "perhaps"}})
    body = sync(client, [good, bad])
    first, second = body["results"]
    assert first["status"] == "applied" and first["verdict"] == "pass"
    assert second["status"] == "rejected"
    assert "entries.zone_closed.value" in second["errors"]
    assert {"id": job.pk, "state": "planned", "date": job.date.isoformat()} in body["jobs"]
    assert body["server_time"]
    sheet = CheckSheet.objects.get(client_uuid=good["client_uuid"])
    assert sheet.device_time.isoformat() == f"{job.date.isoformat()}T06:05:00+00:00"


def test_a_retried_batch_changes_nothing(job, simple_checklists, operator):
    client = client_for(operator)
    records = [site_record(job, simple_checklists) for _ in range(3)]
    first = sync(client, records)
    counts = (CheckSheet.objects.count(), SyncReceipt.objects.count())
    again = sync(client, records)
    assert (CheckSheet.objects.count(), SyncReceipt.objects.count()) == counts == (3, 3)
    assert [r["sheet"] for r in first["results"]] == [r["sheet"] for r in again["results"]]
    assert all(r.get("duplicate") for r in again["results"])


def test_a_batch_cut_off_half_way_then_resent_whole(job, simple_checklists, operator):
    """The phone sent records 1-2 of 4, lost the answer, then sent all 4."""
    client = client_for(operator)
    records = [site_record(job, simple_checklists) for _ in range(4)]
    sync(client, records[:2])
    body = sync(client, records)
    assert [r.get("duplicate", False) for r in body["results"]] == [True, True, False, False]
    assert CheckSheet.objects.count() == 4


def test_failing_then_passing_records_hold_and_clear(job, simple_checklists, operator):
    client = client_for(operator)
    fill_all(job, simple_checklists, operator)
    start = {
        "type": "job_action",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "action": "start"},
    }
    failing = site_record(
        job, simple_checklists, {**PASSING["site"], "zone_closed": {"value": "fail"}}
    )
    passing = site_record(job, simple_checklists)
    body = sync(client, [start, failing])
    assert body["results"][0]["state"] == "working"
    assert next(j for j in body["jobs"] if j["id"] == job.pk)["state"] == "held"
    body = sync(client, [start, failing, passing])
    assert next(j for j in body["jobs"] if j["id"] == job.pk)["state"] == "cleared"
    # the start was applied once only
    assert JobTransition.objects.filter(job=job, to_state="working").count() == 1


def test_blocked_start_is_rejected_with_reasons(job, simple_checklists, operator):
    body = sync(
        client_for(operator),
        [
            {
                "type": "job_action",
                "client_uuid": str(uuid.uuid4()),
                "data": {"job": job.pk, "action": "start"},
            }
        ],
    )
    result = body["results"][0]
    assert result["status"] == "rejected"
    assert result["reasons"][0]["code"] == "sheet_missing"


def test_drop_log_while_working(job, simple_checklists, operator):
    client = client_for(operator)
    drop = job.drops.first()
    log = {
        "type": "drop_log",
        "client_uuid": str(uuid.uuid4()),
        "data": {"drop": drop.pk, "note": "done"},
    }
    assert sync(client, [log])["results"][0]["status"] == "rejected"
    fill_all(job, simple_checklists, operator)
    client.post(reverse("job-start", args=[job.pk]))
    log["client_uuid"] = str(uuid.uuid4())
    assert sync(client, [log, log])["results"][1]["duplicate"] is True
    assert DropLog.objects.filter(drop=drop).count() == 1


@pytest.mark.parametrize(
    ("record", "field"),
    [
        ("not an object", "record"),
        ({"type": "sheet", "data": {}}, "client_uuid"),
        ({"type": "sheet", "client_uuid": "nope", "data": {}}, "client_uuid"),
        ({"type": "teleport", "client_uuid": str(uuid.uuid4()), "data": {}}, "type"),
        ({"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": []}, "data"),
        ({"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": {"job": "x"}}, "job"),
        ({"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": {"job": 99999}}, "job"),
        ({"type": "drop_log", "client_uuid": str(uuid.uuid4()), "data": {"drop": 99999}}, "drop"),
        ({"type": "job_action", "client_uuid": str(uuid.uuid4()), "data": {"job": None}}, "job"),
    ],
)
def test_malformed_records_are_rejected_by_field(job, operator, record, field):
    body = sync(client_for(operator), [record])
    assert body["results"][0]["status"] == "rejected"
    assert field in body["results"][0]["errors"]


def test_bad_device_time_is_rejected(job, simple_checklists, operator):
    record = site_record(job, simple_checklists)
    record["data"]["device_time"] = "yesterday"
    result = sync(client_for(operator), [record])["results"][0]
    assert result["status"] == "rejected" and "device_time" in result["errors"]


def test_another_organisations_job_is_unknown(simple_checklists, job):
    from tests.factories import JobFactory, UserFactory, make_drop

    other = JobFactory()
    make_drop(other)
    stranger = UserFactory(organisation=other.organisation)
    result = sync(client_for(stranger), [site_record(job, simple_checklists)])["results"][0]
    assert result["status"] == "rejected" and result["errors"] == {"job": ["Unknown job."]}
    assert job.sheets.count() == 0


def test_sync_queries_grow_per_record_not_per_row(
    job, simple_checklists, operator, django_assert_max_num_queries
):
    client = client_for(operator)
    fill_all(job, simple_checklists, operator)
    with django_assert_max_num_queries(60):
        sync(client, [site_record(job, simple_checklists)])


@settings(
    max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(order=st.permutations(list(range(5))), repeats=st.lists(st.integers(0, 4), max_size=6))
def test_any_order_and_repetition_of_records_stores_each_once(
    job, simple_checklists, operator, order, repeats
):
    """Property: whatever order and repetition the phone sends, each record lands once."""
    client = client_for(operator)
    records = [site_record(job, simple_checklists) for _ in range(5)]
    sent = [records[i] for i in order] + [records[i] for i in repeats]
    sync(client, sent)
    sync(client, list(reversed(sent)))
    for record in records:
        assert CheckSheet.objects.filter(client_uuid=record["client_uuid"]).count() == 1


def _png(size=(64, 48)) -> io.BytesIO:
    data = io.BytesIO()
    Image.new("RGB", size, (200, 30, 30)).save(data, format="PNG")
    data.seek(0)
    data.name = "defect.png"
    return data


def test_photo_upload_is_reencoded_and_idempotent(job, operator, tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    photo = {"key": "anchor_photo", "kind": "photo", "label": "Anchor", "reason": "test"}
    published_checklist("anchor-photos", "anchor", [photo])  # the item a loose photo names
    client = client_for(operator)
    key = str(uuid.uuid4())
    body = {"client_uuid": key, "job": job.pk, "item_key": "anchor_photo", "image": _png()}
    first = client.post(reverse("photos"), body, format="multipart")
    assert first.status_code == 201, first.json()
    body["image"] = _png()
    again = client.post(reverse("photos"), body, format="multipart")
    assert again.status_code == 200
    photo = Photo.objects.get(client_uuid=key)
    assert (photo.width, photo.height) == (64, 48)
    with Image.open(photo.image.path) as stored:
        assert stored.format == "JPEG"
    assert Photo.objects.count() == 1


def test_a_file_that_is_not_an_image_is_refused(job, operator, tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    fake = io.BytesIO(b"#!/bin/sh\necho not a photo\n")
    fake.name = "photo.jpg"
    response = client_for(operator).post(
        reverse("photos"),
        {"client_uuid": str(uuid.uuid4()), "job": job.pk, "image": fake},
        format="multipart",
    )
    assert response.status_code == 400 and "image" in response.json()
    assert Photo.objects.count() == 0


def test_requirements_of_default_subjects(job, simple_checklists):
    kinds = sorted(r.subject.kind for r in job_requirements(job))
    assert kinds == ["anchor", "anchor", "hose", "robot", "safety_line", "site", "tether"]


def test_a_small_file_declaring_too_many_pixels_is_refused_before_decoding(
    job, operator, tmp_path, settings
):
    """A blank 1-bit PNG of 9,200 × 9,200 (85 megapixels) is a few KB on the wire; decoded to
    RGB it took some 250 MB of server memory. Refused from its header, nothing stored."""
    settings.MEDIA_ROOT = tmp_path
    bomb = io.BytesIO()
    Image.new("1", (9200, 9200)).save(bomb, format="PNG", optimize=True)
    assert bomb.tell() < 100_000
    bomb.seek(0)
    bomb.name = "bomb.png"
    body = {"client_uuid": str(uuid.uuid4()), "job": job.pk, "image": bomb}
    response = client_for(operator).post(reverse("photos"), body, format="multipart")
    assert response.status_code == 400
    assert response.json() == {"image": ["A photo is at most 50 megapixels."]}
    assert Photo.objects.count() == 0


def test_an_action_sent_twice_in_one_batch_is_applied_once(job, simple_checklists, operator):
    """The batch reads its receipts once at the start; a record repeated later in the same
    batch still finds the receipt its first copy left (a second start would be refused)."""
    fill_all(job, simple_checklists, operator)
    start = {
        "type": "job_action",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "action": "start"},
    }
    results = sync(client_for(operator), [start, start])["results"]
    assert [r["status"] for r in results] == ["applied", "applied"]
    assert results[1]["duplicate"] is True
    assert JobTransition.objects.filter(job=job, to_state="working").count() == 1


def test_a_uuid_another_person_used_is_refused_in_a_batch(job, simple_checklists, operator):
    from tests.factories import UserFactory

    record = site_record(job, simple_checklists)
    assert sync(client_for(operator), [record])["results"][0]["status"] == "applied"
    colleague = UserFactory(organisation=job.organisation, role="operator")
    result = sync(client_for(colleague), [record])["results"][0]
    assert result == {
        "client_uuid": record["client_uuid"],
        "status": "rejected",
        "errors": {"client_uuid": ["Already used."]},
    }
    assert SyncReceipt.objects.filter(client_uuid=record["client_uuid"]).count() == 1


def morning_batch(job, versions, failing_kind: str | None = None) -> list[dict]:
    """Every requirement's sheet for the job, as a phone queues them before work (one of a
    kind failing first and re-checked at the end, when asked), then the start."""
    records, recheck = [], None
    for req in job_requirements(job):
        entries = dict(PASSING[req.subject.kind])
        if req.subject.kind == failing_kind and recheck is None:
            key = next(iter(entries))
            records.append(
                sheet_record(
                    job,
                    versions[req.subject.kind],
                    {**entries, key: {"value": "fail"}},
                    req.subject,
                )
            )
            recheck = sheet_record(job, versions[req.subject.kind], entries, req.subject)
        else:
            records.append(sheet_record(job, versions[req.subject.kind], entries, req.subject))
    if recheck is not None:
        records.append(recheck)
    start = {
        "type": "job_action",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "action": "start"},
    }
    return [*records, start]


def test_a_whole_morning_in_one_batch_holds_clears_and_starts(job, simple_checklists, operator):
    """One transaction for the job's records: the robot's failed check holds the job at once,
    the re-check later in the same batch clears the hold, readiness is settled before the
    start, and the start finds the job cleared."""
    body = sync(client_for(operator), morning_batch(job, simple_checklists, "robot"))
    assert [r["status"] for r in body["results"]] == ["applied"] * len(body["results"])
    assert body["results"][-1]["state"] == "working"
    states = list(
        JobTransition.objects.filter(job=job).order_by("pk").values_list("to_state", flat=True)
    )
    assert states == ["held", "cleared", "working"]
    hold = job.holds.get()
    assert hold.clearance.sheet.verdict == "pass"
    assert SyncReceipt.objects.count() == len(body["results"])


def test_records_of_two_jobs_interleaved_each_land_once(job, simple_checklists, operator):
    from tests.factories import JobFactory

    other = JobFactory(site=job.site, organisation=job.organisation)
    make_drop(other)
    records = [
        site_record(job, simple_checklists),
        site_record(other, simple_checklists),
        site_record(
            job,
            simple_checklists,
            {"zone_closed": {"value": "fail"}, "roof_wind": {"value": 6.5, "unit": "m/s"}},
        ),
    ]
    client = client_for(operator)
    first = sync(client, records)
    assert [r["job"] for r in first["results"]] == [job.pk, other.pk, job.pk]
    assert [r["verdict"] for r in first["results"]] == ["pass", "pass", "fail"]
    again = sync(client, list(reversed(records)))
    assert all(r["duplicate"] for r in again["results"])
    assert CheckSheet.objects.filter(job=job).count() == 2
    assert CheckSheet.objects.filter(job=other).count() == 1
    assert job.holds.count() == 1 and other.holds.count() == 0


def test_a_receipt_written_by_another_request_meanwhile_rolls_the_run_back_and_answers_once(
    job, simple_checklists, operator
):
    """Two requests with the same records: the second normally waits on the job's lock and
    then reads the first's receipts. Here it does not see them (the batch's reads of receipts
    and used uuids find nothing), so the run's receipts collide with the other's at the end:
    the run rolls back and each record is applied on its own, the other's answered from its
    receipt. Each sheet is stored once."""
    from unittest import mock

    client = client_for(operator)
    records = [site_record(job, simple_checklists) for _ in range(3)]
    sync(client, records[1:2])  # "the other request" applied the second record
    with mock.patch("compliance.jobs.sync._uuids", return_value=[]):
        body = sync(client, records)
    assert [r["status"] for r in body["results"]] == ["applied"] * 3
    assert [r.get("duplicate", False) for r in body["results"]] == [False, True, False]
    for record in records:
        assert CheckSheet.objects.filter(client_uuid=record["client_uuid"]).count() == 1
        assert SyncReceipt.objects.filter(client_uuid=record["client_uuid"]).count() == 1


def test_a_uuid_a_sheet_was_made_with_another_way_is_answered_with_that_sheet(
    job, simple_checklists, operator
):
    """The run takes a uuid with no receipt as unused; a sheet made with it outside sync (the
    sheets endpoint) clashes on insert, the run is rolled back and applied record by record,
    and the record is answered with the sheet that exists. Nothing is stored twice."""
    from checklists.services import record_sheet

    client = client_for(operator)
    first, second = site_record(job, simple_checklists), site_record(job, simple_checklists)
    made, _ = record_sheet(
        job=job,
        version=simple_checklists["site"],
        by=operator,
        entries=PASSING["site"],
        client_uuid=uuid.UUID(second["client_uuid"]),
    )
    body = sync(client, [first, second])
    assert [r["status"] for r in body["results"]] == ["applied", "applied"]
    assert body["results"][1]["sheet"] == made.pk
    assert CheckSheet.objects.filter(client_uuid=second["client_uuid"]).count() == 1
    assert CheckSheet.objects.filter(client_uuid=first["client_uuid"]).count() == 1
    assert SyncReceipt.objects.count() == 2


def test_the_same_item_failing_again_keeps_one_hold_and_says_why_once(
    job, simple_checklists, operator
):
    """A check failed twice for the same reason opened two identical holds ('3 stop-work holds'
    for 2 problems), and the start refusal read 'Stop work: X: Marked failed: X.'"""
    from compliance.models import Hold

    client = client_for(operator)
    failed = {**PASSING["site"], "zone_closed": {"value": "fail"}}
    sync(client, [site_record(job, simple_checklists, failed)])
    sync(client, [site_record(job, simple_checklists, failed)])

    open_holds = Hold.objects.filter(job=job, clearance__isnull=True)
    assert open_holds.count() == 1
    label = simple_checklists["site"].items[0]["label"]
    assert open_holds.get().reason == f"{label}: marked failed on the check."
    refused = client.post(reverse("job-start", args=[job.pk]))
    reasons = [r["message"] for r in refused.json()["reasons"] if r["code"] == "open_hold"]
    assert reasons == [f"Stop work: {label}: marked failed on the check."]
    assert CheckSheet.objects.filter(job=job, verdict="fail").count() == 2
    sync(client, [site_record(job, simple_checklists)])
    assert not Hold.objects.filter(job=job, clearance__isnull=True).exists()


@pytest.mark.parametrize(
    ("reason", "words"),
    [
        ({"why": "rain"}, "A reason is a text."),
        (["rain"], "A reason is a text."),
        ("r" * 2001, "At most 2000 characters."),
    ],
)
def test_a_job_action_s_reason_is_a_text_or_refused(
    job, simple_checklists, operator, reason, words
):
    """An object was written into the job's log as its Python repr, and a long reason was cut
    short without a word."""
    from compliance.models import JobTransition

    before = JobTransition.objects.filter(job=job).count()
    record = {
        "type": "job_action",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "action": "pause", "reason": reason},
    }

    result = sync(client_for(operator), [record])["results"][0]

    assert result["status"] == "rejected", result
    assert result["errors"] == {"reason": [words]}
    assert JobTransition.objects.filter(job=job).count() == before


def test_a_record_id_sent_again_with_other_content_is_refused_alone(
    job, simple_checklists, operator
):
    """A failure sent under the client uuid of a pass already applied was answered 'applied,
    duplicate, verdict: pass' (the pass's stored answer), and the failure was lost."""
    from compliance.models import Hold

    client = client_for(operator)
    passing = site_record(job, simple_checklists)
    sync(client, [passing])
    failing = site_record(
        job,
        simple_checklists,
        {**PASSING["site"], "zone_closed": {"value": "fail"}},
        key=passing["client_uuid"],
    )
    other = site_record(job, simple_checklists)

    results = sync(client, [other, failing])["results"]

    assert results[0]["status"] == "applied" and "duplicate" not in results[0]
    assert results[1] == {
        "client_uuid": passing["client_uuid"],
        "status": "rejected",
        "errors": {"client_uuid": [REUSED_ID]},
    }
    assert CheckSheet.objects.filter(client_uuid=passing["client_uuid"]).get().verdict == "pass"
    assert not Hold.objects.filter(job=job).exists()


def test_a_record_id_used_twice_in_one_batch_for_two_records_refuses_the_second(
    job, simple_checklists, operator
):
    first = site_record(job, simple_checklists)
    second = site_record(
        job,
        simple_checklists,
        {**PASSING["site"], "roof_wind": {"value": 7.0, "unit": "m/s"}},
        key=first["client_uuid"],
    )

    results = sync(client_for(operator), [first, second])["results"]

    assert [r["status"] for r in results] == ["applied", "rejected"]
    assert results[1]["errors"] == {"client_uuid": [REUSED_ID]}


def test_the_same_record_resent_in_a_later_batch_is_a_duplicate_whatever_its_batch_says(
    job, simple_checklists, operator
):
    """The record's own data is what must match, not the batch's (sent_at differs on every
    send); a number written 7 or 7.0, or keys in another order, are the same record."""
    client = client_for(operator)
    record = site_record(job, simple_checklists)
    record["data"]["entries"] = {
        "zone_closed": {"value": "pass"},
        "roof_wind": {"value": 7, "unit": "m/s"},
    }
    first = sync(client, [record])["results"][0]
    again = json.loads(json.dumps(record))
    again["data"] = dict(reversed(list(again["data"].items())))
    again["data"]["entries"]["roof_wind"]["value"] = 7.0
    body = {"records": [again], "sent_at": timezone.now().isoformat()}

    line = client.post(reverse("sync"), body, format="json").json()["results"][0]

    assert line == {**first, "duplicate": True}
    assert CheckSheet.objects.filter(client_uuid=record["client_uuid"]).count() == 1


def _drop_done(drop, at, key=None) -> dict:
    return {
        "type": "drop_log",
        "client_uuid": key or str(uuid.uuid4()),
        "data": {"drop": drop.pk, "note": "Whole drop done.", "device_time": at.isoformat()},
    }


def test_a_drop_done_at_work_and_sent_after_the_hold_is_kept(
    job, simple_checklists, operator, supervisor
):
    """The crew finished a drop, offline on the facade, and the job was held before the phone
    found signal: the drop done was refused ("Drops are logged while the job is working"), and
    the day's record lost work that was done. A drop the phone says was done while the job was
    at work, its clock set right by the batch's, is kept until the day is signed; one done
    after the hold is not."""
    import datetime as dt

    from django.utils import timezone

    from compliance.jobs.services import close_job, start_job

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    done_at_work = timezone.now()
    client = client_for(operator)
    failed = {**PASSING["site"], "zone_closed": {"value": "fail"}}
    sync(client, [site_record(job, simple_checklists, failed)])  # stop work
    job.refresh_from_db()
    assert job.state == "held"
    after_hold = timezone.now()
    drop = job.drops.get()
    sent_at = timezone.now().isoformat()  # the phone's clock is right

    body = client.post(
        reverse("sync"),
        {
            "records": [_drop_done(drop, done_at_work), _drop_done(drop, after_hold)],
            "sent_at": sent_at,
        },
        format="json",
    ).json()
    kept, refused = body["results"]
    assert kept["status"] == "applied", kept
    assert refused["status"] == "rejected"
    assert "drop" in refused["errors"]
    assert DropLog.objects.filter(drop=drop).count() == 1

    # Without the batch's clock the phone's time alone is not taken.
    alone = client.post(
        reverse("sync"), {"records": [_drop_done(drop, done_at_work)]}, format="json"
    ).json()["results"][0]
    assert alone["status"] == "rejected"

    # Once the day is signed, nothing joins it.
    close_job(job=job, by=supervisor, reason="Wind too strong to resume.")
    from compliance.records.services import sign_daily_record
    from compliance.records.signing import create_self_signed
    from tests.factories import PASSWORD

    create_self_signed(organisation=job.organisation)
    sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped")
    late = client.post(
        reverse("sync"),
        {"records": [_drop_done(drop, done_at_work)], "sent_at": timezone.now().isoformat()},
        format="json",
    ).json()["results"][0]
    assert late["status"] == "rejected"
    assert DropLog.objects.filter(drop=drop).count() == 1
    assert dt.timedelta(0) <= after_hold - done_at_work


def test_a_drop_is_kept_only_for_a_time_the_job_was_at_work_and_the_drop_was_planned(
    job, simple_checklists, operator, supervisor
):
    """The time test applied only once the job had stopped: at work, a drop the phone said was
    done ten hours before the start was kept, and the signed record said so. And a drop planned
    during a pause took a time from before it was planned (re-attack round)."""
    import datetime as dt
    from unittest import mock

    from django.utils import timezone

    from compliance.jobs.services import add_drop, pause_job, start_job

    fill_all(job, simple_checklists, operator)
    before_start = timezone.now() - dt.timedelta(hours=10)
    started = timezone.now() - dt.timedelta(minutes=1)
    job.drops.update(added_at=started - dt.timedelta(hours=1))  # planned before the start
    with mock.patch("django.utils.timezone.now", return_value=started):
        start_job(job=job, by=operator)  # a minute ago
    at_work = started + dt.timedelta(seconds=30)
    client = client_for(operator)
    drop = job.drops.get()
    sent_at = timezone.now().isoformat()

    def send(d, at):
        return client.post(
            reverse("sync"), {"records": [_drop_done(d, at)], "sent_at": sent_at}, format="json"
        ).json()["results"][0]

    assert send(drop, before_start)["status"] == "rejected"
    kept = send(drop, at_work)
    assert kept["status"] == "applied", kept

    pause_job(job=job, by=operator, reason="Lunch.")
    later = add_drop(
        job=job,
        by=supervisor,
        robot=drop.robot,
        anchor=drop.anchor,
        safety_anchor=drop.safety_anchor,
        tether=drop.tether,
        safety_line=drop.safety_line,
        hose=drop.hose,
        label="North 2",
        length_m=drop.length_m,
    )
    refused = send(later, at_work)
    assert refused["status"] == "rejected"
    assert "drop" in refused["errors"]
    assert DropLog.objects.count() == 1
