"""Faults in the middle of a sync: whole records or nothing, and a clean retry applies each once."""

import uuid
from unittest import mock

import pytest
from django.db import OperationalError, connection
from django.urls import reverse
from rest_framework.test import APIClient

from checklists.models import CheckSheet, ItemEntry
from compliance.jobs import sync as sync_module
from compliance.jobs.selectors import job_requirements
from compliance.models import SyncReceipt
from tests.conftest import PASSING, client_for
from tests.factories import JobFactory, make_drop


def sheet_records(job, versions, size):
    """``size`` passing sheet records for the job's first requirements, in a fixed order."""
    records = []
    for req in job_requirements(job)[:size]:
        data = {
            "job": job.pk,
            "version": versions[req.subject.kind].pk,
            "entries": PASSING[req.subject.kind],
            "device_time": "2026-12-02T07:05:00+01:00",
        }
        if req.subject.anchor is not None:
            data["anchor"] = req.subject.anchor.pk
        if req.subject.equipment is not None:
            data["equipment"] = req.subject.equipment.pk
        records.append(
            {"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": data, "kind": req}
        )
    assert len(records) == size
    return records


def batch_for(job, versions):
    """Three records: the first for a second job at the site, the next two for ``job``.

    A batch's records for one job go in one transaction, committed when the job's records
    end; so a fault on the second record leaves the first (another job's, committed) whole
    and the second and third (this job's run, rolled back) without a trace."""
    other = JobFactory(site=job.site, organisation=job.organisation, supervisor=job.supervisor)
    make_drop(other)
    return sheet_records(other, versions, 1) + sheet_records(job, versions, 2)


def entries_per_record(versions, records):
    """How many entries each record's sheet holds, by client uuid (and strip the helper key)."""
    expected = {r["client_uuid"]: len(versions[r.pop("kind").subject.kind].items) for r in records}
    return expected


def assert_whole(records, expected_entries, applied):
    """Records in ``applied`` are whole (sheet, all entries, receipt); the rest left no trace."""
    for record in records:
        key = record["client_uuid"]
        sheets = CheckSheet.objects.filter(client_uuid=key)
        receipts = SyncReceipt.objects.filter(client_uuid=key)
        if key in applied:
            assert sheets.count() == 1 and receipts.count() == 1, key
            assert (
                ItemEntry.objects.filter(sheet__client_uuid=key).count() == (expected_entries[key])
            )
        else:
            assert sheets.count() == 0 and receipts.count() == 0, key
    # no sheet anywhere without its entries, no receipt without its sheet
    assert not CheckSheet.objects.filter(entries__isnull=True).exists()
    assert set(SyncReceipt.objects.values_list("client_uuid", flat=True)) == set(
        CheckSheet.objects.values_list("client_uuid", flat=True)
    )


def fail_on_call(n, target):
    """A side effect that lets calls through and raises OperationalError on the n-th one."""
    calls = {"count": 0}

    def side_effect(*args, **kwargs):
        calls["count"] += 1
        if calls["count"] == n:
            raise OperationalError("server closed the connection unexpectedly")
        return target(*args, **kwargs)

    return side_effect


def post(client, records):
    return client.post(reverse("sync"), {"records": records}, format="json")


FAULT_POINTS = {
    # before the record touches the database
    "apply": ("compliance.jobs.sync.APPLY", "sheet"),
    # after the sheet and its entries are written, before holds and readiness
    "outcome": ("checklists.services.apply_sheet_outcome", None),
    # after every record of the second job's run is applied, while writing their receipts
    "receipt": ("compliance.models.SyncReceipt.objects.bulk_create", None),
}


def patch_fault(point):
    target, key = FAULT_POINTS[point]
    if key is not None:
        original = sync_module.APPLY[key]
        return mock.patch.dict(target, {key: fail_on_call(2, original)})
    if point == "outcome":
        from checklists import services

        return mock.patch(target, side_effect=fail_on_call(2, services.apply_sheet_outcome))
    return mock.patch.object(
        SyncReceipt.objects,
        "bulk_create",
        side_effect=fail_on_call(2, SyncReceipt.objects.bulk_create),
    )


@pytest.mark.django_db
@pytest.mark.parametrize("point", sorted(FAULT_POINTS))
def test_connection_lost_on_the_second_record(job, simple_checklists, operator, point):
    records = batch_for(job, simple_checklists)
    expected = entries_per_record(simple_checklists, records)
    client = client_for(operator)
    with patch_fault(point), pytest.raises(OperationalError):
        post(client, records)
    # the first record is whole, the second and third left no trace
    assert_whole(records, expected, applied={records[0]["client_uuid"]})

    response = post(client, records)
    assert response.status_code == 200, response.json()
    results = response.json()["results"]
    assert [r["status"] for r in results] == ["applied"] * 3
    assert [r.get("duplicate", False) for r in results] == [True, False, False]
    assert_whole(records, expected, applied={r["client_uuid"] for r in records})
    # and once more: nothing changes
    again = post(client, records).json()["results"]
    assert [r["sheet"] for r in again] == [r["sheet"] for r in results]
    assert CheckSheet.objects.count() == SyncReceipt.objects.count() == 3


@pytest.mark.django_db
def test_the_phone_sees_a_server_error_not_a_partial_answer(job, simple_checklists, operator):
    """Over HTTP the cut-off batch is a 5xx, so the phone keeps every record queued."""
    records = batch_for(job, simple_checklists)
    entries_per_record(simple_checklists, records)
    client = APIClient(raise_request_exception=False)
    client.force_authenticate(operator)
    with patch_fault("outcome"):
        response = post(client, records)
    assert response.status_code == 500
    assert b"Traceback" not in response.content


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_backend_killed_mid_batch_on_postgresql(job, simple_checklists, operator):
    """A real dropped connection: the server process of our session is terminated mid-record."""
    import psycopg
    from django.conf import settings

    from checklists import services

    records = batch_for(job, simple_checklists)
    expected = entries_per_record(simple_checklists, records)
    db = settings.DATABASES["default"]
    dsn = f"host={db['HOST']} port={db['PORT'] or 5432} user={db['USER']} dbname={db['NAME']}"
    calls = {"count": 0}
    original = services.apply_sheet_outcome

    def kill_then_continue(*args, **kwargs):
        calls["count"] += 1
        if calls["count"] == 2:
            pid = connection.connection.info.backend_pid
            with psycopg.connect(dsn, autocommit=True) as admin:
                admin.execute("SELECT pg_terminate_backend(%s)", [pid])
        return original(*args, **kwargs)

    client = client_for(operator)
    with (
        mock.patch("checklists.services.apply_sheet_outcome", side_effect=kill_then_continue),
        pytest.raises(OperationalError),
    ):
        post(client, records)
    connection.close()  # the next query opens a fresh connection, as the next request would
    assert_whole(records, expected, applied={records[0]["client_uuid"]})

    results = post(client, records).json()["results"]
    assert [r.get("duplicate", False) for r in results] == [True, False, False]
    assert_whole(records, expected, applied={r["client_uuid"] for r in records})


@pytest.mark.django_db
def test_a_fault_in_a_jobs_run_leaves_none_of_its_records(job, simple_checklists, operator):
    """Every record of one job: a fault on the second rolls back the first too (they share the
    job's transaction), so the phone, which got a 5xx, resends all three and each lands once."""
    records = sheet_records(job, simple_checklists, 3)
    expected = entries_per_record(simple_checklists, records)
    client = client_for(operator)
    with patch_fault("outcome"), pytest.raises(OperationalError):
        post(client, records)
    assert_whole(records, expected, applied=set())
    results = post(client, records).json()["results"]
    assert [r["status"] for r in results] == ["applied"] * 3
    assert not any(r.get("duplicate") for r in results)
    assert_whole(records, expected, applied={r["client_uuid"] for r in records})


@pytest.mark.django_db
def test_a_refused_record_that_had_appended_to_the_log_book_leaves_the_chain_whole(
    job, simple_checklists, operator
):
    """Within a job's run, the log chain is locked and read once, then followed from the last
    entry the run wrote. A record whose savepoint rolls back after it appended an entry (here,
    refused after the append) takes that entry with it: the next anchor sheet of the run must
    not chain to it."""
    from checklists import services as sheet_services
    from compliance.anchor_log.services import log_pre_use_check, verify_log_chain
    from compliance.models import AnchorLogEntry

    drop = job.drops.get()
    records = []
    for anchor in (drop.anchor, drop.safety_anchor, drop.anchor):
        records.append(
            {
                "type": "sheet",
                "client_uuid": str(uuid.uuid4()),
                "data": {
                    "job": job.pk,
                    "version": simple_checklists["anchor"].pk,
                    "anchor": anchor.pk,
                    "entries": PASSING["anchor"],
                },
            }
        )
    refused = records[1]["client_uuid"]

    def append_then_refuse(sheet, *args, **kwargs):
        entry = log_pre_use_check(sheet, *args, **kwargs)
        if str(sheet.client_uuid) == refused:
            raise sheet_services.ValidationError({"entries": "Refused after the append."})
        return entry

    with mock.patch.object(sheet_services, "log_pre_use_check", side_effect=append_then_refuse):
        results = post(client_for(operator), records).json()["results"]

    assert [r["status"] for r in results] == ["applied", "rejected", "applied"]
    assert AnchorLogEntry.objects.filter(site=job.site).count() == 2
    assert verify_log_chain(job.site_id) == []
