"""The building's anchor log book: sharing between owner and contractors, holds, signed entries."""

import datetime as dt
import io
import json

import pytest
from django.core.exceptions import ValidationError
from django.db import connection
from django.urls import reverse
from django.utils import timezone
from pypdf import PdfReader

from checklists.models import CheckSheet
from checklists.services import record_sheet
from compliance.anchor_log.document import signed_anchor_log
from compliance.anchor_log.services import record_entry, verify_log_chain
from compliance.append_only import AppendOnlyViolation
from compliance.errors import JobBlocked, NotPermitted
from compliance.jobs.services import start_job
from compliance.models import AnchorLogEntry, JobState, SiteGrant
from compliance.records.checks import verify_pdf
from compliance.records.sealing import seal_of
from compliance.records.signatures import verify_seal_signature
from compliance.records.signing import create_self_signed
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import (
    PASSWORD,
    AnchorFactory,
    CertificationFactory,
    JobFactory,
    OrganisationFactory,
    SiteFactory,
    UserFactory,
    make_drop,
)

pytestmark = pytest.mark.django_db
TODAY = timezone.localdate


@pytest.fixture
def building(simple_checklists):
    """An owner's tower, a contractor working there under a grant, and a planned job."""
    owner = OrganisationFactory(name="Tower owners", kind="owner")
    manager = UserFactory(organisation=owner, role="property_manager")
    create_self_signed(organisation=owner)
    site = SiteFactory(organisation=owner)
    contractor = OrganisationFactory(name="Facade crew")
    create_self_signed(organisation=contractor)
    SiteGrant.objects.create(
        site=site,
        contractor=contractor,
        granted_by=manager,
        starts_on=TODAY() - dt.timedelta(days=10),
        ends_on=TODAY() + dt.timedelta(days=30),
    )
    supervisor = UserFactory(organisation=contractor, role="supervisor")
    operator = UserFactory(organisation=contractor, role="operator")
    job = JobFactory(site=site, organisation=contractor, supervisor=supervisor)
    drop = make_drop(job)
    return {
        "owner": owner,
        "manager": manager,
        "site": site,
        "contractor": contractor,
        "supervisor": supervisor,
        "operator": operator,
        "job": job,
        "drop": drop,
    }


def sign(b, kind="repair", anchor=None, **extra):
    return record_entry(
        anchor=anchor or b["drop"].anchor,
        by=b["manager"],
        password=PASSWORD,
        kind=kind,
        details=extra.pop("details", "Bolt replaced and torqued."),
        performed_on=extra.pop("performed_on", TODAY()),
        **extra,
    )


def later_job(b, days):
    """Another job of the contractor's at the building, `days` after today, with a drop of its
    own."""
    job = JobFactory(
        site=b["site"],
        organisation=b["contractor"],
        supervisor=b["supervisor"],
        date=TODAY() + dt.timedelta(days=days),
    )
    return job, make_drop(job)


def refused_start_on_the_anchor(b, versions):
    """Another job today from the same anchor, every check passed, refuses to start: the
    anchor is out of service."""
    other, drop = later_job(b, days=0)
    drop.anchor = b["drop"].anchor
    drop.save()
    fill_all(other, versions, b["operator"])
    with pytest.raises(JobBlocked) as caught:
        start_job(job=other, by=b["operator"])
    assert "anchor_out_of_service" in [r.code for r in caught.value.reasons]


def urls(b):
    site = b["site"]
    return [
        reverse("site-detail", args=[site.pk]),
        reverse("anchor-detail", args=[b["drop"].anchor_id]),
        reverse("anchor-log-list") + f"?site={site.pk}",
    ]


def test_owner_sees_site_anchors_and_log_but_nothing_else_of_the_contractor(building):
    b = building
    sign(b)
    client = client_for(b["manager"])
    for url in urls(b)[:2]:
        assert client.get(url).status_code == 200, url
    assert len(client.get(urls(b)[2]).json()["results"]) == 1
    assert client.get(reverse("job-detail", args=[b["job"].pk])).status_code == 404
    assert client.get(reverse("equipment-detail", args=[b["drop"].robot_id])).status_code == 404
    assert client.get(reverse("sheet-list")).json()["results"] == []


def test_contractor_with_a_current_grant_works_and_sees_the_log(building):
    b = building
    sign(b)
    client = client_for(b["supervisor"])
    for url in urls(b):
        assert client.get(url).status_code == 200, url
    assert len(client.get(urls(b)[2]).json()["results"]) == 1
    response = client.post(
        reverse("job-list"),
        {"site": b["site"].pk, "date": str(TODAY()), "supervisor": b["supervisor"].pk},
        format="json",
    )
    assert response.status_code == 201, response.json()


def test_contractor_whose_grant_expired_sees_nothing_and_cannot_start(building, simple_checklists):
    b = building
    fill_all(b["job"], simple_checklists, b["operator"])
    SiteGrant.objects.create(
        site=b["site"],
        contractor=b["contractor"],
        granted_by=b["manager"],
        starts_on=TODAY() - dt.timedelta(days=60),
        ends_on=TODAY() - dt.timedelta(days=31),
    )
    with connection.cursor() as cursor:  # the current grant ends yesterday (grants are append-only)
        cursor.execute(
            "UPDATE compliance_sitegrant SET ends_on = %s WHERE ends_on > %s",
            [TODAY() - dt.timedelta(days=1), TODAY()],
        )
    client = client_for(b["supervisor"])
    assert client.get(urls(b)[0]).status_code == 404
    assert client.get(urls(b)[1]).status_code == 404
    assert client.get(urls(b)[2]).json()["results"] == []
    response = client.post(
        reverse("job-list"),
        {"site": b["site"].pk, "date": str(TODAY()), "supervisor": b["supervisor"].pk},
        format="json",
    )
    assert response.status_code == 400 and "site" in response.json()
    with pytest.raises(JobBlocked) as caught:
        start_job(job=b["job"], by=b["operator"])
    assert "no_grant_for_day" in [r.code for r in caught.value.reasons]


def test_a_third_party_sees_nothing(building):
    b = building
    sign(b)
    stranger = UserFactory(organisation=OrganisationFactory(), role="supervisor")
    client = client_for(stranger)
    for url in urls(b)[:2]:
        assert client.get(url).status_code == 404
    assert client.get(urls(b)[2]).json()["results"] == []
    assert client.get(reverse("anchor-log-pdf") + f"?site={b['site'].pk}").status_code == 404
    with pytest.raises(NotPermitted):
        record_entry(
            anchor=b["drop"].anchor,
            by=stranger,
            password=PASSWORD,
            kind="repair",
            details="x",
            performed_on=TODAY(),
        )


def test_only_the_owner_grants_access(building):
    b = building
    body = {"contractor": b["contractor"].pk, "starts_on": str(TODAY()), "ends_on": str(TODAY())}
    url = reverse("site-grants", args=[b["site"].pk])
    assert client_for(b["supervisor"]).post(url, body, format="json").status_code == 403
    assert client_for(b["manager"]).post(url, body, format="json").status_code == 201
    bad = client_for(b["manager"]).post(url, {**body, "ends_on": "2000-01-01"}, format="json")
    assert bad.status_code == 400 and "ends_on" in bad.json()


def test_removing_an_anchor_from_service_holds_jobs_that_use_it(building, simple_checklists):
    b = building
    fill_all(b["job"], simple_checklists, b["operator"])
    start_job(job=b["job"], by=b["operator"])
    entry = sign(b, kind="removed_from_service", details="Base cracked; do not use.")
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.HELD
    hold = b["job"].holds.get(log_entry=entry)
    assert f"Anchor {b['drop'].anchor.label} was removed from service" in hold.reason
    # a passing pre-use sheet does not clear it; the return to service does
    fill_all(b["job"], simple_checklists, b["operator"])
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.HELD
    sign(b, kind="returned_to_service", result="pass", details="New base, proof loaded.")
    b["job"].refresh_from_db()
    assert hold.clearance.log_entry.kind == "returned_to_service"
    # The anchor's check made before its return was of the anchor as it was: check it again.
    assert b["job"].state == JobState.PLANNED
    fill_all(b["job"], simple_checklists, b["operator"])
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.CLEARED


@pytest.mark.parametrize("kind", ["load_test", "periodic_inspection"])
def test_an_anchor_failing_its_load_test_or_inspection_stops_work_on_it(
    building, simple_checklists, kind
):
    """The owner signed a failed load test ("base plate cracked under the proof load"): it was
    stored, and the crew went on working from the anchor, then signed the day safe. Only a
    separate removal from service held anything."""
    b = building
    fill_all(b["job"], simple_checklists, b["operator"])
    start_job(job=b["job"], by=b["operator"])
    entry = sign(b, kind=kind, result="fail", details="Base plate cracked under the proof load.")

    b["job"].refresh_from_db()
    assert b["job"].state == JobState.HELD
    hold = b["job"].holds.get(log_entry=entry)
    label = b["drop"].anchor.label
    word = "load test" if kind == "load_test" else "periodic inspection"
    assert hold.reason == (
        f"Anchor {label} failed its {word} on {TODAY():%Y-%m-%d}:"
        " Base plate cracked under the proof load."
    )
    # A new job on the anchor cannot start, and a crew's passing pre-use check clears nothing.
    refused_start_on_the_anchor(b, simple_checklists)
    fill_all(b["job"], simple_checklists, b["operator"])
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.HELD
    # The owner's return to service (after a repair and a passing test) clears it.
    sign(b, kind="repair", details="New base plate fitted.")
    sign(b, kind=kind, result="pass", details="Proof loaded after the repair; holds.")
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.HELD
    sign(b, kind="returned_to_service", result="pass", details="Repaired and proof loaded.")
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.PLANNED
    fill_all(b["job"], simple_checklists, b["operator"])
    b["job"].refresh_from_db()
    assert b["job"].state == JobState.CLEARED


def test_a_night_shift_begun_before_midnight_is_stopped_by_a_failed_load_test(
    building, simple_checklists
):
    """A job started yesterday evening and still at work after midnight was not held by a
    failed load test on its anchor (only jobs dated today or later were read), and its day
    was then signed safe."""
    from compliance.models import Job

    b = building
    fill_all(b["job"], simple_checklists, b["operator"])
    start_job(job=b["job"], by=b["operator"])
    Job.objects.filter(pk=b["job"].pk).update(date=TODAY() - dt.timedelta(days=1))

    sign(b, kind="load_test", result="fail", details="Base plate cracked under the proof load.")

    b["job"].refresh_from_db()
    assert b["job"].state == JobState.HELD


def test_a_return_to_service_needs_an_anchor_out_of_service_and_a_date_after_it_went_out(
    building, simple_checklists
):
    """A return dated the day before the removal it ends let the check made while the anchor
    was out count (the job started on it); a return for an anchor in service was taken too."""
    from compliance.errors import InvalidTransition

    b = building
    label = b["drop"].anchor.label
    with pytest.raises(InvalidTransition) as in_service:
        sign(b, kind="returned_to_service", details="Nothing was wrong.")
    assert str(in_service.value) == (
        f"Anchor {label} is in service: there is no removal for a return to end."
    )
    sign(b, kind="removed_from_service", details="Base cracked.")
    with pytest.raises(InvalidTransition) as early:
        sign(
            b,
            kind="returned_to_service",
            details="New base.",
            performed_on=TODAY() - dt.timedelta(days=1),
        )
    assert str(early.value) == (
        f"Anchor {label} went out of service on {TODAY():%Y-%m-%d}: its return is dated on or"
        " after that day."
    )
    assert AnchorLogEntry.objects.filter(kind="returned_to_service").count() == 0


def test_the_return_to_service_leaves_the_holds_of_closed_days_as_they_were_signed(
    building, simple_checklists
):
    """The anchor's return cleared the hold of every job it had held, closed and signed days
    included: the genuine record signed "work was stopped" then failed its verification (a
    row behind it changed after sealing)."""
    from compliance.jobs.services import close_job
    from compliance.models import HoldClearance
    from compliance.records.files import render_signed_pdf
    from compliance.records.services import sign_daily_record

    b = building
    fill_all(b["job"], simple_checklists, b["operator"])
    start_job(job=b["job"], by=b["operator"])
    sign(b, kind="removed_from_service", details="Base cracked; do not use.")
    b["job"].refresh_from_db()
    close_job(job=b["job"], by=b["supervisor"], reason="Anchor removed; day ended.")
    record = sign_daily_record(
        job=b["job"], by=b["supervisor"], password=PASSWORD, meaning="reviewed_stopped"
    )
    pdf = render_signed_pdf(record)
    assert verify_pdf(pdf).ok

    sign(b, kind="returned_to_service", result="pass", details="New base, proof loaded.")

    assert not HoldClearance.objects.filter(hold__job=b["job"]).exists()
    report = verify_pdf(pdf)
    assert report.ok, report.as_dict()


def test_a_job_planning_an_out_of_service_anchor_cannot_start(building, simple_checklists):
    b = building
    sign(b, kind="removed_from_service", details="Corroded.")
    fill_all(b["job"], simple_checklists, b["operator"])
    refused_start_on_the_anchor(b, simple_checklists)


def test_an_overdue_periodic_inspection_blocks_start(building, simple_checklists):
    b = building
    anchor = AnchorFactory(site=b["site"])
    long_ago = TODAY() - dt.timedelta(days=500)
    CertificationFactory(
        anchor=anchor, certified_on=long_ago, valid_until=TODAY() + dt.timedelta(days=100)
    )
    b["drop"].safety_anchor = anchor
    b["drop"].save()
    fill_all(b["job"], simple_checklists, b["operator"])
    with pytest.raises(JobBlocked) as caught:
        start_job(job=b["job"], by=b["operator"])
    reasons = {r.code: r.message for r in caught.value.reasons}
    assert "anchor_inspection_overdue" in reasons
    sign(b, anchor=anchor, kind="periodic_inspection", result="pass", details="Inspected.")
    start_job(job=b["job"], by=b["operator"])


def test_entries_need_the_password_and_the_right_role(building):
    b = building
    with pytest.raises(NotPermitted):
        record_entry(
            anchor=b["drop"].anchor,
            by=b["manager"],
            password="wrong",
            kind="repair",
            details="x",
            performed_on=TODAY(),
        )
    with pytest.raises(NotPermitted):
        record_entry(
            anchor=b["drop"].anchor,
            by=b["operator"],
            password=PASSWORD,
            kind="repair",
            details="x",
            performed_on=TODAY(),
        )
    client = client_for(b["manager"])
    body = {
        "anchor": b["drop"].anchor_id,
        "kind": "load_test",
        "result": "pass",
        "performed_on": str(TODAY()),
        "details": "Proof load 15 kN held 3 min.",
        "password": PASSWORD,
    }
    assert client.post(reverse("anchor-log-list"), body, format="json").status_code == 201
    for field, value in (("kind", "teleport"), ("performed_on", "1900-01-01"), ("anchor", 99999)):
        response = client.post(reverse("anchor-log-list"), {**body, field: value}, format="json")
        assert response.status_code == 400 and field in response.json(), field
    assert (
        client.post(
            reverse("anchor-log-list"), {**body, "kind": "pre_use_check"}, format="json"
        ).status_code
        == 400
    )


def test_entries_are_append_only_signed_and_chained(building):
    b = building
    first, second = sign(b), sign(b, kind="modification", details="Added a second eye.")
    assert (first.sequence, second.sequence) == (1, 2) and second.previous_seal == first.seal
    assert seal_of(json.loads(second.canonical_json)) == second.seal
    assert verify_seal_signature(
        second.seal, second.seal_signature, second.credential.certificate_pem
    )
    document = json.loads(second.canonical_json)
    assert document["signature"]["name"] == b["manager"].display_name
    assert "password re-entered" in document["signature"]["method"]
    second.details = "rewritten"
    with pytest.raises(AppendOnlyViolation):
        second.save()
    with pytest.raises(AppendOnlyViolation):
        AnchorLogEntry.objects.filter(pk=first.pk).delete()
    assert verify_log_chain(b["site"].pk) == []


def test_a_contractors_pre_use_check_flows_into_the_log(building, simple_checklists):
    b = building
    anchor = b["drop"].anchor
    record_sheet(
        job=b["job"],
        version=simple_checklists["anchor"],
        by=b["operator"],
        anchor=anchor,
        entries={
            **PASSING["anchor"],
            "sound": {"value": "fail"},
            "tag_capacity": {"value": 5, "unit": "kN"},
        },
    )
    entry = AnchorLogEntry.objects.get(kind="pre_use_check")
    assert entry.anchor == anchor and entry.result == "fail"
    # The checklist's words for the owner, not its keys ("Failed: tag_capacity (...)").
    assert entry.details == ("Failed: sound; tag capacity: 5 kN is below the minimum of 12 kN.")
    assert entry.performed_by_company == b["contractor"].name
    owner_view = (
        client_for(b["manager"])
        .get(reverse("anchor-log-list"), {"anchor": anchor.pk})
        .json()["results"]
    )
    assert [e["kind"] for e in owner_view] == ["pre_use_check"]


def test_the_log_book_pdf_carries_every_entry_and_verifies(building, simple_checklists):
    b = building
    sign(b)
    sign(b, kind="periodic_inspection", result="pass", details="Yearly inspection.")
    record_sheet(
        job=b["job"],
        version=simple_checklists["anchor"],
        by=b["operator"],
        anchor=b["drop"].anchor,
        entries=PASSING["anchor"],
    )
    response = client_for(b["manager"]).get(reverse("anchor-log-pdf") + f"?site={b['site'].pk}")
    assert response.status_code == 200
    pdf = response.content
    report = verify_pdf(pdf)
    assert report.ok, report.as_dict()
    reader = PdfReader(io.BytesIO(pdf))
    text = " ".join(" ".join(page.extract_text() for page in reader.pages).split())
    assert "Anchor log book" in text and "licensed professional engineer" in text
    document = json.loads(reader.attachments["daily-record.json"][0])
    seals = {e.seal for e in AnchorLogEntry.objects.filter(site=b["site"])}
    assert {item["seal"] for item in document["entries"]} == seals and len(seals) == 3
    assert {a["label"] for a in document["anchors"]} == set(
        b["site"].anchors.values_list("label", flat=True)
    )
    with connection.cursor() as cursor:
        cursor.execute(
            "UPDATE compliance_anchorlogentry SET canonical_json = "
            "REPLACE(canonical_json, 'Yearly', 'Monthly')"
        )
    assert verify_pdf(pdf).first_failure.name == "entries_stored"


def test_the_log_book_prints_its_times_in_the_sites_zone_not_as_stored(building, settings):
    """The owner's log book printed "generated 2026-12-05T10:29:49.729967Z" and each signature
    at such a time: the stored form, in UTC, to the microsecond. The pages now print the time
    in the deployment's zone to the minute, and name the zone; the sealed document keeps the
    stored time and the zone it printed in."""
    import datetime as dt
    from zoneinfo import ZoneInfo

    settings.TIME_ZONE = "Pacific/Auckland"
    b = building
    sign(b)
    pdf, _ = signed_anchor_log(b["site"], b["manager"])
    reader = PdfReader(io.BytesIO(pdf))
    text = " ".join(" ".join(page.extract_text() for page in reader.pages).split())
    document = json.loads(reader.attachments["daily-record.json"][0])

    assert document["format"] == "parapet.anchor-log-book/3"
    assert document["time_zone"] == "Pacific/Auckland"
    zone = ZoneInfo("Pacific/Auckland")
    for stamp in (
        document["generated_at"],
        document["entries"][0]["entry"]["signature"]["signed_at"],
    ):
        moment = dt.datetime.fromisoformat(stamp).astimezone(zone)
        assert f"{moment:%Y-%m-%d %H:%M} (Pacific/Auckland)" in text
        assert stamp not in text
    assert verify_pdf(pdf).ok


def test_one_anchors_log_book(building):
    b = building
    sign(b)
    sign(b, anchor=b["drop"].safety_anchor)
    pdf, _ = signed_anchor_log(b["site"], b["manager"], anchor=b["drop"].anchor)
    document = json.loads(PdfReader(io.BytesIO(pdf)).attachments["daily-record.json"][0])
    assert [item["entry"]["anchor"]["id"] for item in document["entries"]] == [b["drop"].anchor_id]
    assert verify_pdf(pdf).ok


@pytest.mark.parametrize(
    "query,answer",
    [
        ("", {"site": ["A site id is required."]}),
        ("?site=", {"site": ["A site id is required."]}),
        ("?site=%C2%B2", None),  # a superscript two is not a plain digit
        ("?site=1" + "0" * 30, None),
    ],
    ids=["no-site", "empty", "superscript", "too-long"],
)
def test_the_log_book_pdf_without_a_usable_site_is_a_400_naming_it(building, query, answer):
    response = client_for(building["manager"]).get(reverse("anchor-log-pdf") + query)
    assert response.status_code == 400
    assert list(response.json()) == ["site"]
    if answer is not None:
        assert response.json() == answer


def test_a_pre_use_check_of_an_anchor_the_job_does_not_hang_from_is_refused(
    building, simple_checklists
):
    # A contractor could write failed entries into the owner's log book for any anchor of the
    # building, and the book is append-only.
    b = building
    elsewhere = AnchorFactory(site=b["site"], label="R9")
    CertificationFactory(anchor=elsewhere)
    with pytest.raises(ValidationError) as refused:
        record_sheet(
            job=b["job"],
            version=simple_checklists["anchor"],
            by=b["operator"],
            anchor=elsewhere,
            entries={**PASSING["anchor"], "sound": {"value": "fail"}},
        )
    assert list(refused.value.message_dict) == ["anchor"]
    assert not AnchorLogEntry.objects.filter(anchor=elsewhere).exists()
    assert not CheckSheet.objects.filter(anchor=elsewhere).exists()


def test_a_pre_use_check_sent_for_a_later_days_job_writes_nothing_in_the_log_book(
    building, simple_checklists
):
    # The owner may not record work for a future date; a contractor's sheet for a job planned
    # months ahead wrote a log-book entry dated then. A later day's job now takes no sheet.
    b = building
    later, drop = later_job(b, days=20)
    with pytest.raises(ValidationError) as refused:
        record_sheet(
            job=later,
            version=simple_checklists["anchor"],
            by=b["operator"],
            anchor=drop.anchor,
            entries=PASSING["anchor"],
        )
    assert list(refused.value.message_dict) == ["job"]
    assert not AnchorLogEntry.objects.filter(kind="pre_use_check").exists()
