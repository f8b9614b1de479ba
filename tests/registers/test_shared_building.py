"""One owner's building shared by two contractors: who may change the owner's anchors, whose jobs
an action may hold or clear, grants, and what one tenant's checklist versions reveal to another."""

import datetime as dt
import uuid

import pytest
from django.core.exceptions import ValidationError
from django.urls import reverse
from django.utils import timezone

from checklists.models import ChecklistVersion, CheckSheet
from checklists.services import record_sheet
from compliance.anchor_log.services import SIGNED_KINDS, record_entry
from compliance.errors import NotPermitted
from compliance.models import (
    AnchorCertification,
    AnchorLogEntry,
    Hold,
    HoldClearance,
    Job,
    JobState,
    JobTransition,
    SiteGrant,
)
from compliance.records.signing import create_self_signed
from compliance.registers.services import record_certification
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import (
    PASSWORD,
    JobFactory,
    OrganisationFactory,
    SiteFactory,
    UserFactory,
    make_drop,
    published_checklist,
    tick,
)

pytestmark = pytest.mark.django_db
TODAY = timezone.localdate


def _grant(site, contractor, by) -> SiteGrant:
    return SiteGrant.objects.create(
        site=site,
        contractor=contractor,
        granted_by=by,
        starts_on=TODAY() - dt.timedelta(days=10),
        ends_on=TODAY() + dt.timedelta(days=30),
    )


@pytest.fixture
def shared(simple_checklists):
    """The owner's tower; the north and south crews each hold a grant and plan a job today whose
    drop hangs from the same anchor pair."""
    owner = OrganisationFactory(name="Quayside Tower owners", kind="owner")
    manager = UserFactory(organisation=owner, role="property_manager")
    create_self_signed(organisation=owner)
    site = SiteFactory(organisation=owner)
    crews = {}
    for name in ("north", "south"):
        org = OrganisationFactory(name=f"{name.title()} facade crew", kind="contractor")
        _grant(site, org, manager)
        supervisor = UserFactory(organisation=org, role="supervisor")
        crews[name] = {
            "org": org,
            "supervisor": supervisor,
            "admin": UserFactory(organisation=org, role="admin"),
            "operator": UserFactory(organisation=org, role="operator"),
            "job": JobFactory(site=site, organisation=org, supervisor=supervisor),
        }
    north_drop = make_drop(crews["north"]["job"])
    south_drop = make_drop(crews["south"]["job"])
    south_drop.anchor, south_drop.safety_anchor = north_drop.anchor, north_drop.safety_anchor
    south_drop.save()
    for crew in crews.values():
        fill_all(crew["job"], simple_checklists, crew["operator"])
        crew["job"].refresh_from_db()
        assert crew["job"].state == JobState.CLEARED
    return {
        "owner": owner,
        "manager": manager,
        "site": site,
        "anchor": north_drop.anchor,
        "checklists": simple_checklists,
        **crews,
    }


def snapshot() -> tuple:
    """Every row an anchor action could add, and every job's state."""
    return (
        AnchorCertification.objects.count(),
        AnchorLogEntry.objects.count(),
        Hold.objects.count(),
        HoldClearance.objects.count(),
        JobTransition.objects.count(),
        tuple(Job.objects.order_by("pk").values_list("state", flat=True)),
    )


def owner_signs(b, kind: str, details: str, result: str = "none") -> AnchorLogEntry:
    return record_entry(
        anchor=b["anchor"],
        by=b["manager"],
        password=PASSWORD,
        kind=kind,
        details=details,
        performed_on=TODAY(),
        result=result,
    )


def log_body(anchor, kind: str) -> dict:
    return {
        "anchor": anchor.pk,
        "kind": kind,
        "result": "pass",
        "performed_on": str(TODAY()),
        "details": "Looked fine to us.",
        "password": PASSWORD,
    }


CERTIFICATION = {
    "certifier": "Crew's own engineer",
    "rated_capacity_kn": 30.0,
    "certified_on": str(TODAY()),
    "valid_until": str(TODAY() + dt.timedelta(days=365)),
}


def state(job: Job) -> str:
    return Job.objects.get(pk=job.pk).state


def open_holds(job: Job) -> list[str]:
    return list(
        Hold.objects.filter(job=job, clearance__isnull=True).values_list("requirement", flat=True)
    )


@pytest.mark.parametrize("crew", ["north", "south"])
@pytest.mark.parametrize("role", ["supervisor", "admin"])
def test_a_contractor_cannot_certify_or_sign_the_owners_anchor_log(shared, crew, role):
    b = shared
    user = b[crew][role]
    client = client_for(user)
    before = snapshot()
    response = client.post(
        reverse("anchor-certifications", args=[b["anchor"].pk]), CERTIFICATION, format="json"
    )
    assert response.status_code == 403, response.json()
    assert "owner" in response.json()["detail"]
    for kind in SIGNED_KINDS:
        response = client.post(
            reverse("anchor-log-list"), log_body(b["anchor"], kind), format="json"
        )
        assert response.status_code == 403, (kind, response.json())
        assert "owner" in response.json()["detail"], kind
    assert snapshot() == before
    with pytest.raises(NotPermitted):
        record_certification(anchor=b["anchor"], by=user, **CERTIFICATION)
    with pytest.raises(NotPermitted):
        record_entry(
            anchor=b["anchor"],
            by=user,
            password=PASSWORD,
            kind="removed_from_service",
            details="We think it is loose.",
            performed_on=TODAY(),
        )
    assert snapshot() == before


def test_a_contractor_cannot_return_an_anchor_the_owner_removed(shared):
    b = shared
    owner_signs(b, "removed_from_service", "Base cracked; do not use.")
    before = snapshot()
    for crew in ("north", "south"):
        response = client_for(b[crew]["supervisor"]).post(
            reverse("anchor-log-list"), log_body(b["anchor"], "returned_to_service"), format="json"
        )
        assert response.status_code == 403, response.json()
    assert snapshot() == before
    assert state(b["north"]["job"]) == state(b["south"]["job"]) == JobState.HELD


def test_the_owner_certifies_its_anchor(shared):
    b = shared
    response = client_for(b["manager"]).post(
        reverse("anchor-certifications", args=[b["anchor"].pk]), CERTIFICATION, format="json"
    )
    assert response.status_code == 201, response.json()


def test_the_owner_removing_the_anchor_holds_both_contractors_jobs_and_returning_clears_them(
    shared,
):
    b = shared
    north, south = b["north"]["job"], b["south"]["job"]
    removal = owner_signs(b, "removed_from_service", "Base cracked; do not use.")
    assert state(north) == state(south) == JobState.HELD
    for job in (north, south):
        assert Hold.objects.get(job=job, clearance__isnull=True).log_entry == removal
    owner_signs(b, "returned_to_service", "New base, proof loaded.", result="pass")
    assert open_holds(north) == open_holds(south) == []
    # Each crew checks the anchor again: their checks were of the anchor before the damage.
    assert state(north) == state(south) == JobState.PLANNED


def test_a_contractors_own_checks_never_hold_or_clear_the_other_contractors_job(shared):
    b = shared
    north, south = b["north"]["job"], b["south"]["job"]
    south_transitions = JobTransition.objects.filter(job=south).count()
    failing = {**PASSING["anchor"], "sound": {"value": "fail"}}
    record_sheet(
        job=north,
        version=b["checklists"]["anchor"],
        by=b["north"]["operator"],
        anchor=b["anchor"],
        entries=failing,
    )
    assert state(north) == JobState.HELD
    assert state(south) == JobState.CLEARED and open_holds(south) == []
    # the failed pre-use check is in the building's log book, and still holds no one else
    entry = AnchorLogEntry.objects.filter(kind="pre_use_check").latest("sequence")
    assert entry.result == "fail" and entry.performed_by_company == b["north"]["org"].name
    record_sheet(
        job=north,
        version=b["checklists"]["anchor"],
        by=b["north"]["operator"],
        anchor=b["anchor"],
        entries=PASSING["anchor"],
    )
    assert state(north) == JobState.CLEARED
    client = client_for(b["north"]["operator"])
    assert client.post(reverse("job-start", args=[north.pk])).status_code == 200
    assert client.post(reverse("job-close", args=[north.pk]), {}, format="json").status_code == 200
    assert state(south) == JobState.CLEARED
    assert JobTransition.objects.filter(job=south).count() == south_transitions


def test_a_contractors_passing_sheet_never_clears_the_owners_stop_work(shared):
    """A crew's own checklist may share its key with the hold the owner's removal opens
    ('anchor-status'); its passing sheet clears only holds that a sheet opened."""
    b = shared
    north, south = b["north"]["job"], b["south"]["job"]
    owner_signs(b, "removed_from_service", "Base cracked; do not use.")
    lookalike = published_checklist(
        "anchor-status", "anchor", [tick("sound")], organisation=b["north"]["org"]
    )
    before = (open_holds(north), open_holds(south), HoldClearance.objects.count())
    record_sheet(
        job=north,
        version=lookalike,
        by=b["north"]["operator"],
        anchor=b["anchor"],
        entries={"sound": {"value": "pass"}},
    )
    assert (open_holds(north), open_holds(south), HoldClearance.objects.count()) == before
    assert state(north) == state(south) == JobState.HELD


def grant_url(b) -> str:
    return reverse("site-grants", args=[b["site"].pk])


def grant_body(contractor_id: int) -> dict:
    return {
        "contractor": contractor_id,
        "starts_on": str(TODAY()),
        "ends_on": str(TODAY() + dt.timedelta(days=7)),
    }


def test_a_grant_goes_only_to_a_contractor_organisation(shared):
    b = shared
    other_owner = OrganisationFactory(name="Riverside Estates owners", kind="owner")
    client = client_for(b["manager"])
    before = SiteGrant.objects.count()
    missing = max(other_owner.pk, b["owner"].pk) + 1000
    answers = []
    for contractor_id in (other_owner.pk, b["owner"].pk, missing):
        response = client.post(grant_url(b), grant_body(contractor_id), format="json")
        assert response.status_code == 400, response.json()
        assert list(response.json()) == ["contractor"]
        assert other_owner.name not in response.content.decode()
        answers.append(response.json())
    assert answers[0] == answers[1] == answers[2]
    assert SiteGrant.objects.count() == before
    new_crew = OrganisationFactory(name="East facade crew", kind="contractor")
    response = client.post(grant_url(b), grant_body(new_crew.pk), format="json")
    assert response.status_code == 201, response.json()
    assert response.json()["contractor_name"] == new_crew.name


def test_the_owner_ends_a_grant_and_the_contractor_loses_access_at_once(shared):
    b = shared
    north, south = b["north"], b["south"]
    grant = SiteGrant.objects.get(site=b["site"], contractor=north["org"])
    end_url = reverse("site-grant-end", args=[b["site"].pk, grant.pk])
    reads = [
        reverse("site-detail", args=[b["site"].pk]),
        reverse("anchor-detail", args=[b["anchor"].pk]),
    ]
    for crew in (north, south):  # a contractor ends no grant, its own or another's
        response = client_for(crew["supervisor"]).post(end_url, {}, format="json")
        assert response.status_code == 403, response.json()
    grants_before = SiteGrant.objects.count()
    response = client_for(b["manager"]).post(end_url, {"reason": "Contract ended."}, format="json")
    assert response.status_code == 200, response.json()
    assert response.json()["ended_at"] is not None
    assert SiteGrant.objects.count() == grants_before  # the grant keeps its dates
    assert client_for(b["manager"]).post(end_url, {}, format="json").status_code == 409
    client = client_for(north["supervisor"])
    for url in [*reads, reverse("anchor-log-pdf") + f"?site={b['site'].pk}", end_url]:
        response = client.get(url) if url != end_url else client.post(url, {}, format="json")
        assert response.status_code == 404, url
    assert client.get(reverse("anchor-log-list")).json()["results"] == []
    response = client.post(
        reverse("job-list"),
        {"site": b["site"].pk, "date": str(TODAY()), "supervisor": north["supervisor"].pk},
        format="json",
    )
    assert response.status_code == 400 and list(response.json()) == ["site"]
    started = client_for(north["operator"]).post(reverse("job-start", args=[north["job"].pk]))
    assert started.status_code == 409
    assert "no_grant_for_day" in [r["code"] for r in started.json()["reasons"]]
    before = snapshot()
    response = client.post(
        reverse("anchor-log-list"), log_body(b["anchor"], "repair"), format="json"
    )
    assert response.status_code == 400 and "anchor" in response.json()
    assert snapshot() == before
    other = client_for(south["supervisor"])
    for url in reads:
        assert other.get(url).status_code == 200, url
    listed = client_for(b["manager"]).get(grant_url(b)).json()
    ended = {g["contractor"]: g["ended_at"] is not None for g in listed}
    assert ended == {north["org"].pk: True, south["org"].pk: False}


def test_answers_never_name_another_owner(shared):
    """The north crew also works at a second owner's building; neither owner sees the other."""
    b = shared
    other_owner = OrganisationFactory(name="Riverside Estates owners", kind="owner")
    other_manager = UserFactory(organisation=other_owner, role="property_manager")
    create_self_signed(organisation=other_owner)
    other_site = SiteFactory(organisation=other_owner, name="Riverside House")
    _grant(other_site, b["north"]["org"], other_manager)
    other_job = JobFactory(
        site=other_site, organisation=b["north"]["org"], supervisor=b["north"]["supervisor"]
    )
    other_anchor = make_drop(other_job).anchor
    record_entry(
        anchor=other_anchor,
        by=other_manager,
        password=PASSWORD,
        kind="periodic_inspection",
        details="Yearly inspection.",
        performed_on=TODAY(),
        result="pass",
    )
    owner_signs(b, "periodic_inspection", "Yearly inspection.", result="pass")
    client = client_for(b["manager"])
    urls = [
        reverse("site-list"),
        reverse("anchor-list"),
        reverse("anchor-log-list"),
        reverse("anchor-log-list") + f"?anchor={other_anchor.pk}",
        grant_url(b),
        reverse("me"),
    ]
    for url in urls:
        response = client.get(url)
        assert response.status_code == 200, url
        text = response.content.decode()
        assert other_owner.name not in text and other_site.name not in text, url
    for url in (
        reverse("site-detail", args=[other_site.pk]),
        reverse("anchor-detail", args=[other_anchor.pk]),
        reverse("site-grants", args=[other_site.pk]),
    ):
        response = client.get(url)
        assert response.status_code == 404, url
        assert other_owner.name not in response.content.decode()
    response = client.post(
        reverse("site-grants", args=[other_site.pk]),
        grant_body(b["south"]["org"].pk),
        format="json",
    )
    assert response.status_code == 404
    # the crew working at both buildings sees both, as it should
    sites = client_for(b["north"]["supervisor"]).get(reverse("site-list")).json()["results"]
    assert {s["id"] for s in sites} == {b["site"].pk, other_site.pk}


@pytest.fixture
def foreign_versions(shared):
    """The south crew's own checklist: one published version and one draft."""
    south = shared["south"]["org"]
    published = published_checklist("south-site-walk", "site", [tick("zone_closed")], south)
    draft = ChecklistVersion.objects.create(
        checklist=published.checklist, number=2, items=[tick("zone_closed"), tick("barriers")]
    )
    missing = max(published.pk, draft.pk) + 1000
    return {"published": published, "draft": draft, "missing": missing}


def _pk(version) -> int:
    return version if isinstance(version, int) else version.pk


def test_another_tenants_checklist_versions_answer_as_if_absent_over_the_api(
    shared, foreign_versions
):
    b = shared
    client = client_for(b["north"]["supervisor"])
    ids = [_pk(v) for v in foreign_versions.values()]
    own = b["checklists"]["site"].pk
    for path in ("checklist-version-detail", "checklist-version-diff"):
        answers = [client.get(reverse(path, args=[pk])) for pk in ids]
        assert [a.status_code for a in answers] == [404, 404, 404], path
        assert answers[0].json() == answers[1].json() == answers[2].json(), path
    against = [
        client.get(reverse("checklist-version-diff", args=[own]), {"against": pk}) for pk in ids
    ]
    assert [a.status_code for a in against] == [404, 404, 404]
    assert against[0].json() == against[1].json() == against[2].json()
    for answers in (
        [client.post(reverse("checklist-version-publish", args=[pk])) for pk in ids],
        [
            client.patch(
                reverse("checklist-version-detail", args=[pk]), {"notes": "x"}, format="json"
            )
            for pk in ids
        ],
    ):
        assert [a.status_code for a in answers] == [404, 404, 404]
        assert answers[0].json() == answers[1].json() == answers[2].json()
    sheets = [
        client.post(
            reverse("sheet-list"),
            {"job": b["north"]["job"].pk, "version": pk, "entries": {"zone_closed": "pass"}},
            format="json",
        )
        for pk in ids
    ]
    assert [a.status_code for a in sheets] == [400, 400, 400]
    assert (
        sheets[0].json()
        == sheets[1].json()
        == sheets[2].json()
        == {"version": ["Unknown checklist version."]}
    )
    assert ChecklistVersion.objects.get(pk=foreign_versions["draft"].pk).status == "draft"
    assert (
        CheckSheet.objects.filter(version__checklist__organisation=b["south"]["org"]).count() == 0
    )


def test_recording_a_sheet_on_another_tenants_version_answers_alike(shared, foreign_versions):
    """The service checks the version's tenant before anything else, so a draft and a published
    version of another organisation are refused in the same words."""
    b = shared
    errors = []
    for name in ("published", "draft"):
        with pytest.raises(ValidationError) as caught:
            record_sheet(
                job=b["north"]["job"],
                version=foreign_versions[name],
                by=b["north"]["operator"],
                entries={"zone_closed": {"value": "pass"}},
            )
        errors.append(caught.value.message_dict)
    assert errors[0] == errors[1] == {"version": ["Unknown checklist version."]}


def test_a_synced_sheet_on_another_tenants_version_answers_alike(shared, foreign_versions):
    b = shared
    records = [
        {
            "type": "sheet",
            "client_uuid": str(uuid.uuid4()),
            "data": {
                "job": b["north"]["job"].pk,
                "version": _pk(version),
                "entries": {"zone_closed": {"value": "pass"}},
            },
        }
        for version in foreign_versions.values()
    ]
    response = client_for(b["north"]["operator"]).post(
        reverse("sync"), {"records": records}, format="json"
    )
    assert response.status_code == 200
    errors = [r.get("errors") for r in response.json()["results"]]
    assert errors == [{"version": ["Unknown checklist version."]}] * 3


def test_a_crew_at_work_stops_when_the_owner_ends_its_grant_and_a_new_grant_clears_it(shared):
    """The owner withdrew access while the north crew's robot was on the facade: its job was
    refused a start from then on, but the robot at work went on. The other crew at work under
    its own grant goes on."""
    from compliance.jobs.services import start_job
    from compliance.registers.services import end_grant, give_grant

    b = shared
    north, south = b["north"], b["south"]
    for crew in (north, south):
        start_job(job=crew["job"], by=crew["operator"])
    grant = SiteGrant.objects.get(site=b["site"], contractor=north["org"])

    end_grant(grant=grant, by=b["manager"], reason="Facade works suspended by the owner.")

    north["job"].refresh_from_db()
    south["job"].refresh_from_db()
    assert north["job"].state == JobState.HELD
    assert south["job"].state == JobState.WORKING
    hold = north["job"].holds.get()
    assert (hold.requirement, hold.item_key) == ("access-grant@site", "no_grant")
    # Who ended it, when and why, as the day's record keeps it.
    ended = SiteGrant.objects.get(pk=grant.pk).end
    at = timezone.localtime(ended.ended_at)
    assert hold.reason == (
        f"The building's owner ended access to the site on {at:%Y-%m-%d} at {at:%H:%M}"
        f" ({b['manager'].display_name}): Facade works suspended by the owner."
    )
    assert north["job"].transitions.last().reason == (
        "Stop work: the building's owner ended access to the site."
    )
    detail = client_for(north["supervisor"]).get(reverse("job-detail", args=[north["job"].pk]))
    assert detail.status_code == 200
    assert [h["requirement"] for h in detail.json()["holds"]] == [hold.requirement]

    give_grant(
        site=b["site"],
        contractor=north["org"],
        starts_on=TODAY(),
        ends_on=TODAY() + dt.timedelta(days=3),
        by=b["manager"],
    )

    north["job"].refresh_from_db()
    assert HoldClearance.objects.filter(hold=hold).exists()
    assert north["job"].state == JobState.CLEARED
    assert north["job"].transitions.last().reason == (
        "The building's owner granted access to the site."
    )


def test_an_ended_grant_sends_a_cleared_job_back_to_planned(shared):
    from compliance.registers.services import end_grant

    b = shared
    north = b["north"]
    grant = SiteGrant.objects.get(site=b["site"], contractor=north["org"])

    end_grant(grant=grant, by=b["manager"])

    north["job"].refresh_from_db()
    assert north["job"].state == JobState.PLANNED
    assert not north["job"].holds.exists()
    assert b["south"]["job"].state == JobState.CLEARED
    # The job log says why (it said "A required check is no longer satisfied.", and on the
    # next grant "Every required pre-start check passed.", though no check had changed).
    assert north["job"].transitions.last().reason == (
        "The building's owner ended access to the site."
    )
    from compliance.registers.services import give_grant

    give_grant(
        site=b["site"],
        contractor=north["org"],
        starts_on=TODAY(),
        ends_on=TODAY(),
        by=b["manager"],
    )
    north["job"].refresh_from_db()
    assert north["job"].state == JobState.CLEARED
    assert north["job"].transitions.last().reason == (
        "The building's owner granted access to the site."
    )


def _anchor_failure(job, anchor, versions, when) -> dict:
    return {
        "job": job.pk,
        "version": versions["anchor"].pk,
        "anchor": anchor.pk,
        "entries": {"sound": {"value": "fail"}, "tag_capacity": {"value": 22.2, "unit": "kN"}},
        "device_time": when.isoformat(),
    }


@pytest.mark.parametrize("way", ["sync", "sheets"])
def test_an_anchor_failure_found_before_the_grant_ended_is_kept(shared, way):
    """The crew found a cracked anchor and sent it once back in signal, after the owner had
    ended its access: 'Unknown anchor.', and the failure, its hold and the owner's log book
    entry were lost. An anchor its own job's drops hang from is the crew's to report."""
    from compliance.jobs.services import start_job
    from compliance.registers.services import end_grant

    b = shared
    north = b["north"]
    start_job(job=north["job"], by=north["operator"])
    found = timezone.now() - dt.timedelta(minutes=20)
    end_grant(grant=SiteGrant.objects.get(site=b["site"], contractor=north["org"]), by=b["manager"])
    body = _anchor_failure(north["job"], b["anchor"], b["checklists"], found)
    client = client_for(north["operator"])
    if way == "sync":
        key = str(uuid.uuid4())
        response = client.post(
            reverse("sync"),
            {"records": [{"type": "sheet", "client_uuid": key, "data": body}]},
            format="json",
        )
        assert response.status_code == 200
        assert response.json()["results"][0]["status"] == "applied", response.json()
    else:
        key = str(uuid.uuid4())
        response = client.post(reverse("sheet-list"), {**body, "client_uuid": key}, format="json")
        assert response.status_code == 201, response.json()

    sheet = CheckSheet.objects.get(client_uuid=key)
    assert sheet.verdict == "fail"
    held = north["job"].holds.filter(sheet=sheet)
    assert held.count() == 1
    assert AnchorLogEntry.objects.filter(
        anchor=b["anchor"], kind="pre_use_check", result="fail"
    ).exists()


def test_an_anchor_of_no_drop_of_the_crew_stays_unknown_once_access_ends(shared):
    """Only the anchors its own drops hang from: another anchor of the building is as unknown
    as before, in the same words as an id that does not exist."""
    from compliance.registers.services import end_grant
    from tests.factories import AnchorFactory

    b = shared
    north = b["north"]
    other = AnchorFactory(site=b["site"])
    end_grant(grant=SiteGrant.objects.get(site=b["site"], contractor=north["org"]), by=b["manager"])
    for anchor_id in (other.pk, 10**9):
        body = _anchor_failure(north["job"], other, b["checklists"], timezone.now())
        response = client_for(north["operator"]).post(
            reverse("sheet-list"), {**body, "anchor": anchor_id}, format="json"
        )
        assert response.status_code == 400
        assert list(response.json()) == ["anchor"]
    assert not CheckSheet.objects.filter(anchor=other).exists()


def test_the_owner_is_told_what_ending_access_stopped_and_the_reason_stays_on_the_grant(shared):
    """The owner ended access with a reason: the answer said only "Ended". Nothing told the
    owner a robot of that crew had been stopped on the building, and the reason showed nowhere
    (user trial). The answer counts the crew's jobs at work there that stopped; the grant keeps
    the reason. No more than a count: the owner reads none of the crew's jobs."""
    from compliance.jobs.services import start_job

    b = shared
    north, south = b["north"], b["south"]
    start_job(job=north["job"], by=north["operator"])
    start_job(job=south["job"], by=south["operator"])
    owner = client_for(b["manager"])
    grants = {g.contractor_id: g for g in SiteGrant.objects.filter(site=b["site"])}

    response = owner.post(
        reverse("site-grant-end", args=[b["site"].pk, grants[north["org"].pk].pk]),
        {"reason": "Lift maintenance from noon."},
        format="json",
    )

    assert response.status_code == 200, response.json()
    assert response.json()["work_stopped"] == 1
    assert response.json()["ended_reason"] == "Lift maintenance from noon."
    listed = owner.get(reverse("site-grants", args=[b["site"].pk])).json()
    reasons = {g["contractor"]: g["ended_reason"] for g in listed}
    assert reasons == {north["org"].pk: "Lift maintenance from noon.", south["org"].pk: None}

    # The other crew's grant, its job paused first: nothing at work there stopped.
    from compliance.jobs.services import pause_job

    pause_job(job=south["job"], by=south["operator"], reason="Lunch.")
    response = owner.post(
        reverse("site-grant-end", args=[b["site"].pk, grants[south["org"].pk].pk]),
        {},
        format="json",
    )
    assert response.status_code == 200, response.json()
    assert response.json()["work_stopped"] == 0
    assert response.json()["ended_reason"] == ""
