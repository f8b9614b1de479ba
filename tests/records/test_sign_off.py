"""Sign-off: re-authentication, the right role, a meaning, and immutability afterwards."""

import json

import pytest
from django.contrib.admin.sites import site as admin_site
from django.db import connection
from django.test import RequestFactory
from django.urls import reverse

from checklists.services import record_sheet
from compliance import clock
from compliance.append_only import AppendOnlyViolation
from compliance.errors import InvalidTransition, NotPermitted
from compliance.models import DailyRecord
from compliance.records.sealing import seal_of
from compliance.records.services import MEANINGS, add_addendum, sign_daily_record
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import PASSWORD, UserFactory

pytestmark = pytest.mark.django_db


def test_signing_needs_the_password_again(closed_job, supervisor):
    with pytest.raises(NotPermitted, match="Re-enter your password"):
        sign_daily_record(job=closed_job, by=supervisor, password="wrong", meaning="reviewed_safe")
    with pytest.raises(NotPermitted):
        sign_daily_record(job=closed_job, by=supervisor, password="", meaning="reviewed_safe")
    assert not DailyRecord.objects.exists()


@pytest.mark.parametrize("role", ["operator", "auditor"])
def test_operators_and_auditors_cannot_sign(closed_job, role):
    person = UserFactory(organisation=closed_job.organisation, role=role)
    with pytest.raises(NotPermitted, match="supervisor"):
        sign_daily_record(job=closed_job, by=person, password=PASSWORD, meaning="reviewed_safe")
    response = client_for(person).post(
        reverse("job-sign", args=[closed_job.pk]),
        {"password": PASSWORD, "meaning": "reviewed_safe"},
        format="json",
    )
    assert response.status_code == 403
    assert not DailyRecord.objects.exists()


def test_signing_through_the_api(closed_job, supervisor):
    client = client_for(supervisor)
    url = reverse("job-sign", args=[closed_job.pk])
    assert (
        client.post(
            url, {"password": "nope", "meaning": "reviewed_safe"}, format="json"
        ).status_code
        == 403
    )
    bad = client.post(url, {"password": PASSWORD, "meaning": "looks fine"}, format="json")
    assert bad.status_code == 400 and "meaning" in bad.json()
    response = client.post(url, {"password": PASSWORD, "meaning": "reviewed_safe"}, format="json")
    assert response.status_code == 201, response.json()
    body = response.json()
    assert body["sequence"] == 1 and body["previous_seal"] == ""
    assert (
        body["signer_name"] == supervisor.display_name
        and body["meaning"] == MEANINGS["reviewed_safe"]
    )
    again = client.post(url, {"password": PASSWORD, "meaning": "reviewed_safe"}, format="json")
    assert again.status_code == 409


def test_the_signature_manifestation_is_inside_the_seal(signed, supervisor):
    document = json.loads(signed.canonical_json)
    assert seal_of(document) == signed.seal
    signature = document["signature"]
    assert signature["name"] == supervisor.display_name
    assert signature["meaning"] == MEANINGS["reviewed_safe"]
    assert signature["signed_at"].endswith("Z")
    assert "password re-entered" in signature["method"]
    # moving the signature to another record changes that record's seal
    other = dict(
        document, record={**document["record"], "job": {**document["record"]["job"], "id": 999}}
    )
    assert seal_of(other) != signed.seal


def test_a_working_job_cannot_be_signed(job, simple_checklists, operator, supervisor, credential):
    with pytest.raises(InvalidTransition, match="Close the job"):
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")


def test_a_held_job_is_signed_only_with_its_hold_shown(
    job, simple_checklists, operator, supervisor, credential
):
    with clock.replaying(job.date):
        record_sheet(
            job=job,
            version=simple_checklists["site"],
            by=operator,
            entries={**PASSING["site"], "zone_closed": {"value": "fail"}},
        )
    job.refresh_from_db()
    assert job.state == "held"
    with pytest.raises(InvalidTransition, match="open holds"):
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    record = sign_daily_record(
        job=job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped"
    )
    document = json.loads(record.canonical_json)
    assert document["open_holds"] == 1
    assert document["record"]["holds"][0]["cleared_at"] is None
    job.refresh_from_db()
    assert job.state == "closed"


def test_a_signed_record_cannot_change_through_the_orm(signed):
    signed.meaning = "edited"
    with pytest.raises(AppendOnlyViolation):
        signed.save()
    with pytest.raises(AppendOnlyViolation):
        signed.delete()
    with pytest.raises(AppendOnlyViolation):
        DailyRecord.objects.filter(pk=signed.pk).update(meaning="edited")
    with pytest.raises(AppendOnlyViolation):
        DailyRecord.objects.all().delete()


def test_a_signed_record_cannot_change_through_the_api_or_admin(signed, supervisor):
    client = client_for(supervisor)
    url = reverse("record-detail", args=[signed.pk])
    assert client.get(url).json()["document"]["signature"]["name"] == supervisor.display_name
    for method in ("put", "patch", "delete"):
        assert getattr(client, method)(url, {"meaning": "x"}, format="json").status_code == 405
    model_admin = admin_site._registry[DailyRecord]
    request = RequestFactory().get("/admin/")
    request.user = UserFactory(is_superuser=True, is_staff=True)
    assert not model_admin.has_change_permission(request, signed)
    assert not model_admin.has_delete_permission(request, signed)


def test_the_job_behind_a_signed_record_takes_no_more_sheets(signed, simple_checklists, operator):
    with pytest.raises(InvalidTransition):
        record_sheet(
            job=signed.job, version=simple_checklists["site"], by=operator, entries=PASSING["site"]
        )


def test_corrections_are_signed_addenda(signed, supervisor):
    with pytest.raises(NotPermitted):
        add_addendum(record=signed, by=supervisor, password="wrong", text="Drop 2 was half done.")
    addendum = add_addendum(
        record=signed, by=supervisor, password=PASSWORD, text="Drop 2 was half done, not whole."
    )
    assert addendum.kind == "addendum" and addendum.amends == signed
    assert addendum.sequence == 2 and addendum.previous_seal == signed.seal
    document = json.loads(addendum.canonical_json)
    assert document["amends"]["seal"] == signed.seal
    signed.refresh_from_db()
    assert seal_of(json.loads(signed.canonical_json)) == signed.seal
    response = client_for(supervisor).post(
        reverse("record-addenda", args=[signed.pk]),
        {"password": PASSWORD, "text": "Another note."},
        format="json",
    )
    assert response.status_code == 201


def test_a_resent_addendum_request_adds_one_addendum(signed, supervisor):
    """A phone or page that lost the answer sends the same request again with its id."""
    from compliance.models import DailyRecord

    client = client_for(supervisor)
    body = {
        "password": PASSWORD,
        "text": "The hose on drop 2 was the spare.",
        "client_uuid": "6f1c1f5e-3d0a-4c55-9a53-0d6f8f4b2a11",
    }
    url = reverse("record-addenda", args=[signed.pk])
    first = client.post(url, body, format="json")
    again = client.post(url, body, format="json")
    assert (first.status_code, again.status_code) == (201, 200)
    assert first.json()["id"] == again.json()["id"]
    assert DailyRecord.objects.filter(kind="addendum").count() == 1
    other_text = client.post(url, {**body, "text": "Something else."}, format="json")
    assert other_text.status_code == 409
    assert other_text.json() == {"detail": "This request id was already used for another addendum."}
    assert DailyRecord.objects.filter(kind="addendum").count() == 1


def test_records_are_invisible_to_other_organisations(signed):
    stranger = UserFactory(role="auditor")
    client = client_for(stranger)
    assert client.get(reverse("record-detail", args=[signed.pk])).status_code == 404
    assert client.get(reverse("record-pdf", args=[signed.pk])).status_code == 404
    assert client.get(reverse("record-list")).json()["results"] == []


def test_record_list_queries_are_constant(
    signed, supervisor, simple_checklists, operator, django_assert_num_queries
):
    from django.test.utils import CaptureQueriesContext

    from tests.records.conftest import next_day_job

    client = client_for(supervisor)
    with CaptureQueriesContext(connection) as small:
        client.get(reverse("record-list"))
    for days in (1, 2, 3):
        job = next_day_job(signed.job, simple_checklists, operator, days)
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    with django_assert_num_queries(len(small.captured_queries)):
        client.get(reverse("record-list"))


def test_a_wrong_phone_clock_is_stated_in_the_record(
    job, simple_checklists, operator, supervisor, credential
):
    import datetime as dt

    from django.utils import timezone

    from compliance.jobs.services import close_job, start_job

    ahead = timezone.now() + dt.timedelta(hours=5)
    sheets = []
    from compliance.jobs.selectors import job_requirements

    with clock.replaying(job.date):
        for req in job_requirements(job):
            entries = PASSING[req.subject.kind]
            sheet, _ = record_sheet(
                job=job,
                version=simple_checklists[req.subject.kind],
                by=operator,
                entries=entries,
                anchor=req.subject.anchor,
                equipment=req.subject.equipment,
                device_time=ahead if req.subject.kind == "site" else None,
            )
            sheets.append(sheet)
        start_job(job=job, by=operator)
        close_job(job=job, by=operator)
    record = sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    content = json.loads(record.canonical_json)["record"]
    site_sheet = next(s for s in content["sheets"] if s["subject_kind"] == "site")
    assert 5 * 3600 - 60 < site_sheet["clock_offset_s"] <= 5 * 3600
    assert site_sheet["device_time"] != site_sheet["received_at"]
    assert len(content["clock_notes"]) == 1
    assert "5 h 0 min ahead of the server's receipt" in content["clock_notes"][0]
    assert "the server's time is the one of record" in content["clock_notes"][0]


def test_a_day_signed_on_a_thread_of_a_threaded_server_gets_its_pdf(
    transactional_db, closed_job, supervisor, request
):
    """A threaded server signs in a thread of its own. The render used to be looked up on
    Celery's current app, which is per thread: on any thread but the one that made the app it
    was a bare default app, the task was "not registered", and the PDF waited for the sweep."""
    from concurrent.futures import ThreadPoolExecutor

    from django.db import connection as thread_connection

    from compliance.celery import app

    # In-process, as the demo runs tasks; with a broker the message would wait for a worker.
    eager = app.conf.task_always_eager
    app.conf.task_always_eager = True
    request.addfinalizer(lambda: setattr(app.conf, "task_always_eager", eager))

    def sign() -> int:
        try:
            return sign_daily_record(
                job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
            ).pk
        finally:
            thread_connection.close()

    with ThreadPoolExecutor(max_workers=1) as pool:
        record_id = pool.submit(sign).result()
    assert DailyRecord.objects.get(pk=record_id).pdf.size_bytes > 0


def test_the_job_list_says_which_days_are_signed(signed, supervisor, django_assert_num_queries):
    """The desk lists unsigned past days from the job list alone, in the list's own queries."""
    from tests.factories import JobFactory

    unsigned = JobFactory(site=signed.job.site, supervisor=supervisor)
    client = client_for(supervisor)
    client.get(reverse("me"))
    with django_assert_num_queries(2):  # the count, the page with its joins (token auth)
        answer = client.get(reverse("job-list"))
    shown = {j["id"]: j["record_signed"] for j in answer.json()["results"]}
    assert shown == {signed.job_id: True, unsigned.pk: False}
    detail = client.get(reverse("job-detail", args=[unsigned.pk]))
    assert detail.json()["record_signed"] is False


SIGN_OFF_QUERIES = 24
"""After the chain's first record: the job locked, the record and state checks, the profile's
revision found, the rows of the day (drops with their prefetches, sheets, entries, holds,
transitions, logs, photos, crew), the chain head locked, the record and the head written.
Signing "safe" also reads the job's requirements (five: the drops with their anchors'
certifications and log entries, the current checklist versions, the newest sheets), to refuse
a day whose check no longer counts with no hold standing for it (tests/records/
test_sign_off_lapsed.py): the day's document does not carry what a check was judged on, when
kit came back or when a drop was planned, and its builder keeps its own rows."""


def _day(job, simple_checklists, operator, days: int, drops: int):
    """A closed day at the same site ``days`` later, with ``drops`` drops."""
    import datetime as dt

    from compliance.jobs.services import close_job, start_job
    from tests.conftest import fill_all
    from tests.factories import JobFactory, make_drop

    day = JobFactory(
        site=job.site, supervisor=job.supervisor, date=job.date + dt.timedelta(days=days)
    )
    for n in range(drops):
        make_drop(day, label=f"D{n + 1}")
    with clock.replaying(day.date):
        fill_all(day, simple_checklists, operator)
        start_job(job=day, by=operator)
        close_job(job=day, by=operator)
    day.refresh_from_db()
    return day


def test_sign_off_costs_its_pinned_queries_whatever_the_day_holds(
    closed_job, simple_checklists, operator, supervisor, django_assert_num_queries
):
    """Sealing and signing a day reads its rows in a fixed number of queries: a day with three
    drops (three times the sheets and entries) costs what a day with one costs. The chain's
    first record also writes its head and the profile's revision, so it is signed first."""
    sign_daily_record(job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    small = _day(closed_job, simple_checklists, operator, days=1, drops=1)
    grown = _day(closed_job, simple_checklists, operator, days=2, drops=3)
    assert grown.sheets.count() > 2 * small.sheets.count()
    for day in (small, grown):
        with django_assert_num_queries(SIGN_OFF_QUERIES):
            sign_daily_record(job=day, by=supervisor, password=PASSWORD, meaning="reviewed_safe")


def _closed_before_work(job, supervisor, day=None):
    from compliance.jobs.services import close_job

    job.date = day or job.date
    job.save()
    return close_job(job=job, by=supervisor, reason="Rain all day; no work.")


def test_a_day_whose_checks_were_never_complete_cannot_be_signed_as_reviewed_safe(
    job, simple_checklists, supervisor, credential
):
    """The meaning sealed says 'the pre-start checks were complete and work was safe to
    proceed': a job closed before it was ever ready to start cannot say so."""
    job = _closed_before_work(job, supervisor)
    client = client_for(supervisor)
    url = reverse("job-sign", args=[job.pk])

    refused = client.post(url, {"password": PASSWORD, "meaning": "reviewed_safe"}, format="json")

    assert refused.status_code == 409, refused.json()
    assert "never complete" in refused.json()["detail"]
    assert not DailyRecord.objects.exists()
    bare = client.post(url, {"password": PASSWORD, "meaning": "reviewed_exceptions"}, format="json")
    assert bare.status_code == 400
    assert bare.json() == {"remarks": ["Say what the exceptions were."]}
    assert not DailyRecord.objects.exists()
    said = client.post(
        url,
        {"password": PASSWORD, "meaning": "reviewed_exceptions", "remarks": "No work: rain."},
        format="json",
    )
    assert said.status_code == 201, said.json()


def test_a_day_that_has_not_come_yet_cannot_be_signed(
    job, simple_checklists, supervisor, credential
):
    import datetime as dt

    from django.utils import timezone

    job = _closed_before_work(job, supervisor, timezone.localdate() + dt.timedelta(days=1))

    response = client_for(supervisor).post(
        reverse("job-sign", args=[job.pk]),
        {"password": PASSWORD, "meaning": "reviewed_exceptions", "remarks": "Cancelled."},
        format="json",
    )

    assert response.status_code == 409
    assert response.json()["detail"] == (
        f"This job is for {job.date.isoformat()}, a day that has not come yet: a day's record"
        " is signed on or after its day."
    )
    assert not DailyRecord.objects.exists()


def test_remarks_of_invisible_characters_are_no_remarks(
    job, simple_checklists, supervisor, credential
):
    job = _closed_before_work(job, supervisor)
    response = client_for(supervisor).post(
        reverse("job-sign", args=[job.pk]),
        {"password": PASSWORD, "meaning": "reviewed_exceptions", "remarks": "\u200b\u2060"},
        format="json",
    )
    assert response.status_code == 400
    assert response.json() == {"remarks": ["Say what the exceptions were."]}
    assert not DailyRecord.objects.exists()


def test_a_day_without_a_hold_is_not_signed_as_work_stopped(closed_job, supervisor):
    """The sealed meaning said "work was stopped; the open holds are shown in this record" for a
    day whose record showed no hold at all, and the auditor's check read VERIFIED."""
    from compliance.models import DailyRecord

    response = client_for(supervisor).post(
        reverse("job-sign", args=[closed_job.pk]),
        {"password": PASSWORD, "meaning": "reviewed_stopped"},
        format="json",
    )

    assert response.status_code == 409, response.json()
    assert response.json()["detail"].startswith("No hold is open on this day")
    assert not DailyRecord.objects.filter(job=closed_job).exists()


def test_the_refusal_to_sign_as_work_stopped_names_the_choices_as_the_page_shows_them(
    closed_job, supervisor
):
    """The refusal told the supervisor to choose 'checked and safe' or 'with exceptions', words
    the sign page never shows: it lists each meaning in full."""
    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(
            job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped"
        )

    detail = str(refused.value)
    for text in MEANINGS.values():
        assert f"“{text}”" in detail
    assert "checked and safe" not in detail


def test_a_day_never_ready_refused_as_work_stopped_is_not_sent_to_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """The refusal of "work was stopped" on a day never ready and never held told the signer to
    choose "safe", which is refused in turn as never ready."""
    from compliance.jobs.services import close_job

    with clock.replaying(job.date):
        close_job(job=job, by=supervisor, reason="Rain all day: no checks made.")

    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped")

    detail = str(refused.value)
    assert f"“{MEANINGS['reviewed_safe']}”" not in detail
    assert f"“{MEANINGS['reviewed_exceptions']}”" in detail


def test_a_day_whose_holds_were_all_cleared_is_not_signed_as_work_stopped(
    job, simple_checklists, operator, supervisor, credential
):
    """A hold opened and cleared before work, then a day worked and closed: the sealed meaning
    said "work was stopped; the open holds are shown" over "0 still open"."""
    from compliance.jobs.services import close_job, start_job
    from compliance.models import DailyRecord

    with clock.replaying(job.date):
        record_sheet(
            job=job,
            version=simple_checklists["site"],
            by=operator,
            entries={**PASSING["site"], "zone_closed": {"value": "fail"}},
        )
        fill_all(job, simple_checklists, operator)
        start_job(job=job, by=operator)
        close_job(job=job, by=operator)

    response = client_for(supervisor).post(
        reverse("job-sign", args=[job.pk]),
        {"password": PASSWORD, "meaning": "reviewed_stopped"},
        format="json",
    )

    assert response.status_code == 409, response.json()
    assert not DailyRecord.objects.filter(job=job).exists()


def _ready_then_left_behind(job, versions, operator, supervisor):
    """Every check passed (cleared), then the hose was re-rated below what its check read, and
    the job was closed without work: it was ready once, but not when it closed."""
    from compliance.jobs.services import close_job
    from compliance.models import JobState

    fill_all(job, versions, operator)
    hose = job.drops.get().hose
    with clock.replaying(job.date):
        response = client_for(supervisor).patch(
            reverse("equipment-detail", args=[hose.pk]),
            {"ratings": {**hose.ratings, "rating_kpa": 800.0}},
            format="json",
        )
        assert response.status_code == 200, response.json()
        job.refresh_from_db()
        assert job.state == JobState.PLANNED
        close_job(job=job, by=supervisor, reason="Hose re-rated; no time to check it again.")
    job.refresh_from_db()
    return job


def test_a_day_ready_then_left_behind_before_it_closed_is_not_signed_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """A job cleared in the morning, then left behind by a re-rated hose and closed without
    work, was signed "the pre-start checks were complete and work was safe to proceed": it had
    been ready once, and that was all the sign-off asked."""
    job = _ready_then_left_behind(job, simple_checklists, operator, supervisor)
    client = client_for(supervisor)

    detail = client.get(reverse("job-detail", args=[job.pk])).json()
    assert (detail["was_ready"], detail["ready_when_closed"]) == (True, False)
    response = client.post(
        reverse("job-sign", args=[job.pk]),
        {"password": PASSWORD, "meaning": "reviewed_safe"},
        format="json",
    )

    assert response.status_code == 409, response.json()
    assert response.json()["detail"] == (
        "The pre-start checks of this job were no longer complete when it closed (it had gone"
        " back from ready to start), so it cannot be signed as"
        f" “{MEANINGS['reviewed_safe']}” Choose “{MEANINGS['reviewed_exceptions']}” and say why"
        " in the remarks."
    )
    assert not DailyRecord.objects.filter(job=job).exists()


def test_a_day_ready_then_left_behind_refused_as_stopped_is_sent_to_exceptions_only(
    job, simple_checklists, operator, supervisor, credential
):
    job = _ready_then_left_behind(job, simple_checklists, operator, supervisor)

    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped")

    detail = str(refused.value)
    assert detail.startswith("No hold is open on this day")
    assert "no longer complete when it closed" in detail
    assert f"“{MEANINGS['reviewed_safe']}”" not in detail
    assert f"“{MEANINGS['reviewed_exceptions']}”" in detail
    record = sign_daily_record(
        job=job,
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="Hose re-rated at 09:10; the day ended before it was checked again.",
    )
    assert record.pk


def test_a_day_cleared_and_closed_without_work_is_still_signed_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """Ready to start, then rain: the checks were complete, so "safe" is true of the day."""
    from compliance.jobs.services import close_job

    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    with clock.replaying(job.date):
        close_job(job=job, by=supervisor, reason="Rain from nine; no drop made.")
    detail = client_for(supervisor).get(reverse("job-detail", args=[job.pk])).json()
    assert (detail["was_ready"], detail["ready_when_closed"]) == (True, True)

    record = sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")

    assert record.pk
