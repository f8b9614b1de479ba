"""Published versions are immutable and hashed; sheets pin the version they were filled against."""

import pytest
from django.core.exceptions import ValidationError
from django.core.management import call_command
from django.urls import reverse

from checklists.models import Checklist, ChecklistVersion
from checklists.schema import content_hash
from checklists.services import create_draft, diff_versions, publish_version, record_sheet
from compliance.append_only import AppendOnlyViolation
from compliance.errors import InvalidTransition, NotPermitted
from tests.conftest import PASSING, client_for
from tests.factories import UserFactory, reading, tick

pytestmark = pytest.mark.django_db


@pytest.fixture
def own_checklist(job):
    return Checklist.objects.create(
        key="own-site", title="Own site check", applies_to="site", organisation=job.organisation
    )


def test_publishing_seals_the_content_hash(own_checklist, supervisor):
    draft = create_draft(checklist=own_checklist, items=[tick("zone_closed")], by=supervisor)
    assert draft.status == "draft" and draft.content_hash == ""
    version = publish_version(version=draft, by=supervisor)
    assert version.status == "published"
    assert version.content_hash == content_hash(version.hashed_content())
    assert len(version.content_hash) == 64


def test_a_published_version_cannot_be_edited_or_deleted(own_checklist, supervisor):
    version = publish_version(
        version=create_draft(checklist=own_checklist, items=[tick("a")], by=supervisor),
        by=supervisor,
    )
    version.items = [tick("b")]
    with pytest.raises(AppendOnlyViolation):
        version.save()
    with pytest.raises(AppendOnlyViolation):
        version.delete()
    version.refresh_from_db()
    assert [i["key"] for i in version.items] == ["a"]
    with pytest.raises(InvalidTransition):
        publish_version(version=version, by=supervisor)


def test_editing_a_published_version_through_the_api_is_refused(own_checklist, supervisor):
    version = publish_version(
        version=create_draft(checklist=own_checklist, items=[tick("a")], by=supervisor),
        by=supervisor,
    )
    client = client_for(supervisor)
    url = reverse("checklist-version-detail", args=[version.pk])
    response = client.patch(url, {"items": [tick("b")]}, format="json")
    assert response.status_code == 409
    version.refresh_from_db()
    assert version.items == [tick("a")]


def test_operators_cannot_publish(own_checklist, operator):
    draft = create_draft(checklist=own_checklist, items=[tick("a")], by=None)
    with pytest.raises(NotPermitted):
        publish_version(version=draft, by=operator)
    response = client_for(operator).post(reverse("checklist-version-publish", args=[draft.pk]))
    assert response.status_code == 403


def test_draft_then_publish_then_new_version_through_the_api(own_checklist, supervisor):
    client = client_for(supervisor)
    response = client.post(
        reverse("checklist-versions", args=[own_checklist.pk]),
        {"items": [tick("zone_closed")]},
        format="json",
    )
    assert response.status_code == 201, response.json()
    v1 = response.json()["id"]
    response = client.patch(
        reverse("checklist-version-detail", args=[v1]),
        {"items": [tick("zone_closed"), tick("signs")]},
        format="json",
    )
    assert response.status_code == 200
    assert (
        client.post(reverse("checklist-version-publish", args=[v1])).json()["status"] == "published"
    )
    response = client.post(
        reverse("checklist-versions", args=[own_checklist.pk]),
        {"items": [tick("zone_closed", blocking=False), tick("radios")]},
        format="json",
    )
    v2 = response.json()["id"]
    assert response.json()["number"] == 2
    client.post(reverse("checklist-version-publish", args=[v2]))
    diff = client.get(reverse("checklist-version-diff", args=[v2])).json()
    assert [i["key"] for i in diff["added"]] == ["radios"]
    assert [i["key"] for i in diff["removed"]] == ["signs"]
    assert diff["changed"] == [
        {
            "key": "zone_closed",
            "fields": ["blocking"],
            "before": {"blocking": True},
            "after": {"blocking": False},
        }
    ]
    assert '-    "blocking": true' in diff["unified"]


def test_malformed_items_are_refused_with_the_field(own_checklist, supervisor):
    bad = [tick("ok"), {"key": "Bad Key", "kind": "dial", "label": "", "blocking": "yes"}]
    with pytest.raises(ValidationError) as caught:
        create_draft(checklist=own_checklist, items=bad, by=supervisor)
    fields = caught.value.message_dict
    assert {
        "items[1].key",
        "items[1].kind",
        "items[1].label",
        "items[1].reason",
        "items[1].blocking",
    } <= set(fields)
    assert not own_checklist.versions.exists()


def test_unknown_calculation_cannot_be_published(own_checklist, supervisor):
    item = {
        "key": "c",
        "kind": "calc",
        "label": "c",
        "reason": "r",
        "blocking": True,
        "calc": "no-such-calc",
        "inputs": {},
    }
    draft = create_draft(checklist=own_checklist, items=[item], by=supervisor)
    with pytest.raises(ValidationError) as caught:
        publish_version(version=draft, by=supervisor)
    assert "items[0].calc" in caught.value.message_dict


def test_sheet_stays_pinned_to_its_version(job, own_checklist, supervisor, operator):
    v1 = publish_version(
        version=create_draft(checklist=own_checklist, items=[tick("zone_closed")], by=supervisor),
        by=supervisor,
    )
    sheet, _ = record_sheet(
        job=job, version=v1, by=operator, entries={"zone_closed": {"value": "pass"}}
    )
    v2 = publish_version(
        version=create_draft(
            checklist=own_checklist, items=[tick("zone_closed"), tick("signs")], by=supervisor
        ),
        by=supervisor,
    )
    sheet.refresh_from_db()
    assert sheet.version == v1 and sheet.version_hash == v1.content_hash != v2.content_hash
    body = client_for(operator).get(reverse("sheet-detail", args=[sheet.pk])).json()
    assert body["version"] == v1.pk and body["version_number"] == 1


def test_sheet_against_a_draft_is_refused(job, own_checklist, operator):
    draft = create_draft(checklist=own_checklist, items=[tick("zone_closed")], by=None)
    response = client_for(operator).post(
        reverse("sheet-list"),
        {
            "job": job.pk,
            "version": draft.pk,
            "entries": {"zone_closed": {"value": "pass"}},
        },
        format="json",
    )
    assert response.status_code == 400
    assert "version" in response.json()
    assert job.sheets.count() == 0


def test_newest_own_version_replaces_the_default_with_the_same_key(job, simple_checklists):
    from checklists.selectors import current_versions

    own = Checklist.objects.create(
        key="site-check", title="Our site check", applies_to="site", organisation=job.organisation
    )
    items = [*simple_checklists["site"].items, tick("x")]
    mine = publish_version(version=create_draft(checklist=own, items=items, by=None), by=None)
    site_versions = current_versions(job.organisation_id)["site"]
    assert site_versions == [mine]
    assert current_versions(None)["site"] == [simple_checklists["site"]]


def test_default_checklists_load_and_reload_without_new_versions(db):
    call_command("load_defaults")
    first = set(ChecklistVersion.objects.values_list("pk", "content_hash"))
    assert len(first) == 9
    call_command("load_defaults")
    assert set(ChecklistVersion.objects.values_list("pk", "content_hash")) == first
    keys = set(Checklist.objects.values_list("key", flat=True))
    assert keys == {
        "anchor-pre-use",
        "tether-pre-use",
        "safety-line-pre-use",
        "emergency-stops",
        "vacuum-hold",
        "water-line",
        "weather",
        "exclusion-zone",
        "rescue-comms",
    }
    for version in ChecklistVersion.objects.all():
        assert all(item["reason"].strip() for item in version.items)


def test_diff_lists_changed_fields():
    a = ChecklistVersion(number=1, items=[tick("x"), reading("p", "kPa")])
    b = ChecklistVersion(number=2, items=[tick("x"), reading("p", "bar")])
    diff = diff_versions(a, b)
    assert diff["changed"][0]["fields"] == ["unit"]
    assert diff["added"] == diff["removed"] == []


def test_passing_entries_fixture_is_complete(simple_checklists, job):
    operator = UserFactory(organisation=job.organisation)
    sheet, created = record_sheet(
        job=job, version=simple_checklists["site"], by=operator, entries=PASSING["site"]
    )
    assert created and sheet.verdict == "pass"


def test_versions_of_two_checklists_do_not_compare(own_checklist, supervisor, simple_checklists):
    """The diff compares two versions of one checklist; another checklist's is refused by name."""
    mine = publish_version(
        version=create_draft(checklist=own_checklist, items=[tick("a")], by=supervisor),
        by=supervisor,
    )
    other = simple_checklists["site"]
    assert other.checklist_id != mine.checklist_id
    answer = client_for(supervisor).get(
        reverse("checklist-version-diff", args=[mine.pk]), {"against": other.pk}
    )
    assert answer.status_code == 400
    assert answer.json() == {"against": ["A version of the same checklist."]}
    same = client_for(supervisor).get(
        reverse("checklist-version-diff", args=[mine.pk]), {"against": mine.pk}
    )
    assert same.status_code == 200
    assert (
        same.json()["from"]
        == same.json()["to"]
        == {
            "id": mine.pk,
            "number": mine.number,
            "content_hash": mine.content_hash,
        }
    )


def _own_of_default(supervisor, key="anchor-check", applies_to="anchor"):
    client = client_for(supervisor)
    response = client.post(
        reverse("checklist-list"),
        {"key": key, "title": "Our own", "applies_to": applies_to},
        format="json",
    )
    return client, response


def _publish(client, checklist_id, items):
    draft = client.post(
        reverse("checklist-versions", args=[checklist_id]), {"items": items}, format="json"
    )
    assert draft.status_code == 201, draft.json()
    return client.post(reverse("checklist-version-publish", args=[draft.json()["id"]]))


@pytest.mark.parametrize(
    ("items", "says"),
    [
        (
            [tick("looks_fine", blocking=False)],
            "sound, tag_capacity",
        ),
        (
            [
                tick("sound", blocking=False),
                reading("tag_capacity", "kN", {"min": {"profile": "min_anchor_capacity_kn"}}),
            ],
            "sound",
        ),
        (
            [tick("sound"), tick("tag_capacity")],
            "tag_capacity",
        ),
    ],
    ids=["all replaced by one tick", "a blocking item made not blocking", "a reading made a tick"],
)
def test_an_own_checklist_replacing_a_default_keeps_every_blocking_item_of_it(
    job, simple_checklists, supervisor, items, says
):
    """A supervisor's own anchor check replaces Parapet's of the same key for the whole
    organisation: it may add and tighten, but a blocking item of the default stays, blocking and
    of its kind, or the default's stop-work checks would silently vanish from every job."""
    client, created = _own_of_default(supervisor)
    assert created.status_code == 201, created.json()

    response = _publish(client, created.json()["id"], items)

    assert response.status_code == 400, response.json()
    assert list(response.json()) == ["items"]
    assert says in response.json()["items"][0]
    assert not ChecklistVersion.objects.filter(
        checklist_id=created.json()["id"], status="published"
    ).exists()
    from checklists.selectors import current_versions

    assert current_versions(job.organisation_id)["anchor"] == [simple_checklists["anchor"]]


def test_an_own_checklist_keeping_the_default_s_blocking_items_replaces_it(
    job, simple_checklists, supervisor
):
    client, created = _own_of_default(supervisor)
    items = [
        tick("sound"),
        reading("tag_capacity", "kN", {"min": {"value": 30}}),
        tick("tag_legible"),
    ]

    response = _publish(client, created.json()["id"], items)

    assert response.status_code == 200, response.json()
    from checklists.selectors import current_versions

    [current] = current_versions(job.organisation_id)["anchor"]
    assert current.checklist_id == created.json()["id"]


def test_an_own_checklist_cannot_take_a_default_s_key_for_another_kind_of_subject(
    job, simple_checklists, supervisor
):
    """Replacement goes by key: a robot checklist keyed as the anchors' default would leave
    every anchor without its pre-use check."""
    _, response = _own_of_default(supervisor, key="anchor-check", applies_to="robot")

    assert response.status_code == 400
    assert list(response.json()) == ["applies_to"]
    assert not Checklist.objects.filter(key="anchor-check", organisation__isnull=False).exists()


def test_an_own_checklist_cannot_let_a_kept_blocking_item_be_skipped(
    job, simple_checklists, supervisor
):
    """Kept by key, kind and blocking, a stop-work tick could still be made skippable with
    allow_na: every anchor check then passed on 'not applicable'. Only the words and the
    limits of a kept item may change."""
    client, created = _own_of_default(supervisor)
    items = [
        {**tick("sound"), "allow_na": True},
        reading("tag_capacity", "kN", {"min": {"profile": "min_anchor_capacity_kn"}}),
    ]

    response = _publish(client, created.json()["id"], items)

    assert response.status_code == 400, response.json()
    assert "sound" in response.json()["items"][0]


def test_a_default_replaced_by_an_own_checklist_takes_no_more_sheets(
    job, simple_checklists, supervisor, operator
):
    """Readiness goes by checklist key: a sheet against Parapet's default, once the
    organisation's own checklist replaced it, satisfied the requirement and cleared its hold,
    skipping the organisation's extra blocking items."""
    from compliance.jobs.selectors import job_requirements

    client, created = _own_of_default(supervisor)
    items = [*simple_checklists["anchor"].items, tick("sling_tagged")]
    assert _publish(client, created.json()["id"], items).status_code == 200
    anchor = job.drops.get().anchor

    response = client_for(operator).post(
        reverse("sheet-list"),
        {
            "job": job.pk,
            "version": simple_checklists["anchor"].pk,
            "anchor": anchor.pk,
            "entries": PASSING["anchor"],
        },
        format="json",
    )

    assert response.status_code == 400, response.json()
    assert list(response.json()) == ["version"]
    requirement = next(r for r in job_requirements(job) if r.subject.anchor == anchor)
    assert not requirement.satisfied


def test_a_sheet_against_an_older_version_neither_satisfies_nor_clears_a_hold(
    job, simple_checklists, supervisor, operator
):
    """Version 2 of an own checklist adds a blocking item and its failure holds the job; a
    passing sheet against version 1, which lacks the item, satisfied the requirement and
    cleared the hold, and the job started."""
    from compliance.jobs.selectors import job_blockers, job_requirements
    from compliance.models import Hold

    client, created = _own_of_default(supervisor)
    first = [*simple_checklists["anchor"].items]
    assert _publish(client, created.json()["id"], first).status_code == 200
    second = _publish(client, created.json()["id"], [*first, tick("sling_tagged")])
    assert second.status_code == 200, second.json()
    v1, v2 = ChecklistVersion.objects.filter(checklist_id=created.json()["id"]).order_by("number")
    anchor = job.drops.get().anchor

    def sheet(version, entries):
        return client_for(operator).post(
            reverse("sheet-list"),
            {"job": job.pk, "version": version.pk, "anchor": anchor.pk, "entries": entries},
            format="json",
        )

    failed = sheet(v2, {**PASSING["anchor"], "sling_tagged": {"value": "fail"}})
    assert failed.status_code == 201, failed.json()
    assert failed.json()["verdict"] == "fail", failed.json()
    assert Hold.objects.filter(job=job, clearance__isnull=True).count() == 1

    older = sheet(v1, PASSING["anchor"])

    assert older.status_code == 201, older.json()
    assert older.json()["verdict"] == "pass"
    assert Hold.objects.filter(job=job, clearance__isnull=True).count() == 1
    requirement = next(r for r in job_requirements(job) if r.subject.anchor == anchor)
    assert not requirement.satisfied
    assert any(
        r.code == "sheet_old_version" and "an older version" in r.message for r in job_blockers(job)
    )

    current = sheet(v2, {**PASSING["anchor"], "sling_tagged": {"value": "pass"}})

    assert current.status_code == 201, current.json()
    assert not Hold.objects.filter(job=job, clearance__isnull=True).exists()
    requirement = next(r for r in job_requirements(job) if r.subject.anchor == anchor)
    assert requirement.satisfied
