"""Every API read costs an exact, pinned number of queries, whatever the size of the tables.

A relative check ("the large data set costs what the small one costs") passes when both sizes
gain the same extra query, and a bound ("at most 8") lets a new query slip in under it. So each
endpoint's count is pinned in ``EXPECTED`` and asserted against two data sets: a small one and a
grown one with more jobs, drops, sheets, records, log entries, grants, chains, versions and
revisions, and more child rows under the very object each detail endpoint shows. A test that
fails on the grown data set only is an N+1; one that fails on both is a query added or removed,
on purpose (change the number, and say why in the commit) or by accident (find it).

The counts are those of the endpoint itself: the client is force-authenticated, so the session
or token lookup every request makes is left out (tests/api/test_tokens.py covers tokens). They
are the same on SQLite and PostgreSQL: no read path branches on the database, and the savepoint
each sync record opens is a statement on both.
"""

import datetime as dt
import uuid
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import Any
from unittest import mock

import pytest
from django.core.files.base import ContentFile
from django.db import transaction
from django.test import override_settings
from django.urls import URLResolver, get_resolver, reverse
from django.utils import timezone
from rest_framework.test import APIClient

from checklists.models import Checklist, ChecklistVersion, CheckSheet
from checklists.services import create_draft, record_sheet
from compliance import clock
from compliance.anchor_log.services import record_entry, verify_log_chain
from compliance.jobs.services import close_job, pause_job, start_job
from compliance.models import (
    Anchor,
    AnchorCertification,
    AnchorLogEntry,
    DailyRecord,
    Equipment,
    Job,
    JurisdictionProfile,
    Organisation,
    ProfileRevision,
    Site,
    User,
)
from compliance.records.files import ensure_pdf
from compliance.records.services import add_addendum, sign_daily_record
from compliance.records.signing import create_self_signed
from compliance.registers.services import end_grant, give_grant
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import (
    PASSWORD,
    AnchorFactory,
    CertificationFactory,
    JobFactory,
    OrganisationFactory,
    ProfileFactory,
    SiteFactory,
    UserFactory,
    make_drop,
    published_checklist,
    reading,
    tick,
)

pytestmark = pytest.mark.django_db

EXPECTED: dict[str, int] = {
    "api-root": 0,
    "me": 1,
    "due": 3,  # anchors with their newest certificate, equipment, unsigned days
    "profile-list": 2,
    "profile-detail": 1,
    "profile-revisions": 2,
    "site-list": 2,
    "site-detail": 1,
    "site-grants": 2,
    "anchor-log-pdf": 7,
    "anchor-list": 3,
    "anchor-detail": 2,
    "anchor-certifications": 2,  # the anchor, its certifications
    "anchor-certificate-file": 2,  # the anchor, the certification
    "my-calendar": 1,  # the person's live feed, if any
    "anchor-log-list": 2,
    "anchor-log-detail": 1,
    "equipment-list": 2,
    "equipment-detail": 1,
    "equipment-kinds": 0,
    "job-list": 2,
    "job-detail": 9,  # with whether work ever started (one EXISTS on its transitions)
    "job-transitions": 2,
    "checklist-list": 3,
    "checklist-detail": 2,
    "checklist-version-list": 2,
    "checklist-version-detail": 1,
    "checklist-version-diff": 2,
    "sheet-list": 3,
    "sheet-detail": 2,
    "record-list": 2,
    "record-detail": 1,
    "record-pdf": 2,
    "record-verify": 2,  # the record, its PDF: the stand-in PDF stops the verifier at once
    # organisations, ranges, heads, records, certificates, the note of the export, the rest
    "record-export": 10,
    # One batch of passing site sheets for one job, applied in one transaction with the job
    # locked: the batch reads its versions once; the job's run reads its lock, receipts, open
    # holds and drops once, writes the receipts together and settles readiness once. Each
    # record costs SYNC_PER_RECORD: the sheet's two inserts (the sheet, its entries); a run
    # whose records all apply needs no savepoint per record.
    "sync-1-record": 16,
    "sync-20-records": 54,
}
SYNC_PER_RECORD = 2
SYNC_ANCHOR_SHEETS = {1: 23, 3: 29}
"""A batch of passing anchor sheets for one site: each also appends a pre-use entry to the
site's log book. The first reads the organisation's signing credential, locks the site's chain
and reads its last entry; the run then knows where its next entry goes and holds the lock, so
each later one costs SYNC_PER_RECORD and its entry's insert."""

KNOWN_N_PLUS_1: dict[str, str] = {}
"""Reads whose count grows with the tables, each with its cause: the grown data set is an
expected failure (strict, so the fix shows up as a pass to be removed from here)."""

SIZES = {"small": 1, "large": 5}
STAND_IN_PDF = b"%PDF-1.7\n% stand-in for a rendered daily record\n%%EOF\n"


@dataclass(frozen=True)
class World:
    """One contractor's data at one size, and the objects the detail endpoints show."""

    size: int
    operator: User
    job: Job
    site: Site
    anchor: Anchor
    equipment: Equipment
    sheet: CheckSheet
    site_check: ChecklistVersion
    anchor_check: ChecklistVersion
    checklist: Checklist
    version: ChecklistVersion
    log_entry: AnchorLogEntry
    certificate: AnchorCertification
    record: DailyRecord
    profile: JurisdictionProfile


def crew_checklists() -> dict[str, ChecklistVersion]:
    """A published checklist per subject kind whose items are PASSING's, so fill_all fills it.

    conftest's simple_checklists fixture is function-scoped and a data set here is built once
    for the module, so the versions are made from PASSING, which fill_all reads anyway.
    """
    return {
        kind: published_checklist(
            f"{kind}-check",
            kind,
            [reading(key, e["unit"]) if "unit" in e else tick(key) for key, e in entries.items()],
        )
        for kind, entries in PASSING.items()
    }


def finished_day(
    site: Site, supervisor: User, operator: User, versions: dict[str, ChecklistVersion], n: int
) -> Job:
    """A closed day's job on the site: two drops and passing sheets, started and closed."""
    day = JobFactory(
        site=site,
        organisation=supervisor.organisation,
        supervisor=supervisor,
        date=timezone.localdate() - dt.timedelta(days=n + 1),
    )
    make_drop(day, label=f"D{n}")
    make_drop(day, label=f"E{n}")
    with clock.replaying(day.date):
        fill_all(day, versions, operator)
        start_job(job=day, by=operator)
        close_job(job=day, by=operator)
    return day


def build_world(size: int) -> World:
    """A contractor's registered site with `size` of everything a read could loop over.

    Each step runs the same way at both sizes, so the two data sets differ in row counts only,
    never in the path a read takes: the shown job ends cleared with its holds cleared, every
    sheet passes, every record has its PDF.
    """
    versions = crew_checklists()
    job = JobFactory()
    org: Organisation = job.organisation
    site, supervisor = job.site, job.supervisor
    operator = UserFactory(organisation=org, role="operator")
    today = timezone.localdate()

    # The job the detail endpoints show: more drops, sheets, cleared holds and transitions.
    for n in range(size + 1):
        make_drop(job, label=f"X{n}")
    fill_all(job, versions, operator)
    for _ in range(size):
        record_sheet(
            job=job,
            version=versions["site"],
            by=operator,
            entries={**PASSING["site"], "zone_closed": {"value": "fail"}},
        )
    record_sheet(job=job, version=versions["site"], by=operator, entries=PASSING["site"])
    for _ in range(size):
        start_job(job=job, by=operator)
        pause_job(job=job, by=operator, reason="Lunch.")
    drop = job.drops.order_by("id").first()
    anchor, equipment = drop.anchor, drop.robot

    # Finished days of our own, and of contractors working at our site under grants (a chain
    # each); one grant ended. Other owners' sites granted to us, and more sites of our own.
    days: list[tuple[Job, User]] = []
    for n in range(size):
        days.append((finished_day(site, supervisor, operator, versions, n), supervisor))
        crew = OrganisationFactory()
        give_grant(
            site=site,
            contractor=crew,
            starts_on=today - dt.timedelta(days=60),
            ends_on=today + dt.timedelta(days=30),
            by=supervisor,
        )
        boss = UserFactory(organisation=crew, role="supervisor")
        crew_operator = UserFactory(organisation=crew, role="operator")
        days.append((finished_day(site, boss, crew_operator, versions, n), boss))
        owner = OrganisationFactory(kind="owner")
        theirs = SiteFactory(organisation=owner)
        AnchorFactory(site=theirs)
        give_grant(
            site=theirs,
            contractor=org,
            starts_on=today,
            ends_on=today + dt.timedelta(days=30),
            by=UserFactory(organisation=owner, role="property_manager"),
        )
        SiteFactory(organisation=org)
    ended = give_grant(
        site=site, contractor=OrganisationFactory(), starts_on=today, ends_on=today, by=supervisor
    )
    end_grant(grant=ended, by=supervisor, reason="Contract ended.")

    # Signing keys only now: the pre-use checks above went into the log book unsigned, as a
    # contractor's do before it has a key (no read checks a signature), which spares the build
    # unlocking a key for each of them. Then the days are signed and amended, and the anchor
    # gets more certifications and signed log entries.
    for organisation in [org, *{boss.organisation for _, boss in days} - {org}]:
        create_self_signed(organisation=organisation)
    for n, (day, boss) in enumerate(days):
        record = sign_daily_record(job=day, by=boss, password=PASSWORD, meaning="reviewed_safe")
        add_addendum(record=record, by=boss, password=PASSWORD, text=f"Drop E{n} was wet.")
    for n in range(size):
        CertificationFactory(anchor=anchor, certified_on=today - dt.timedelta(days=200 + n))
        record_entry(
            anchor=anchor,
            by=supervisor,
            password=PASSWORD,
            kind="repair",
            details=f"Bolt {n} torqued.",
            performed_on=today,
        )

    certificate = CertificationFactory(
        anchor=anchor,
        certified_on=today - dt.timedelta(days=100),
        document=ContentFile(b"%PDF-1.7\n%%EOF\n", name="certificate.pdf"),
    )

    # Every record's PDF, stored as the background render stores it. The reads only open and
    # hash the file; drawing and signing each one would cost a third of a second.
    with mock.patch("compliance.records.files.render_signed_pdf", return_value=STAND_IN_PDF):
        for record in DailyRecord.objects.filter(site=site):
            ensure_pdf(record)

    # Our own checklists: drafts, the shown one's with more items each, none shared with the
    # draft before it (so its diff lists them all).
    checklists = [
        Checklist.objects.create(organisation=org, key=f"crew-notes-{n}", applies_to="site")
        for n in range(size)
    ]
    for n in range(size + 1):
        create_draft(
            checklist=checklists[0],
            items=[tick(f"v{n}_note_{i}") for i in range(n + 1)],
            by=supervisor,
        )

    # More profiles, and revisions of the site's profile.
    profile = site.profile
    for n in range(size):
        ProfileFactory(key=f"extra-{n}", name=f"Extra {n}")
        ProfileRevision.objects.create(
            profile=profile,
            number=profile.revisions.count() + 1,
            name=profile.name,
            thresholds={**profile.thresholds, "max_wind_ms": {"value": 10 + n, "unit": "m/s"}},
            cautions=profile.cautions,
            content_hash=f"{n + 1:064x}",
        )

    # A sheet with more entries: a long site checklist published last, so no other job needs it.
    long = published_checklist("long-check", "site", [tick(f"item_{i}") for i in range(3 * size)])
    sheet, _ = record_sheet(
        job=job,
        version=long,
        by=operator,
        entries={f"item_{i}": {"value": "pass"} for i in range(3 * size)},
    )
    job.refresh_from_db()
    assert job.state == "cleared", job.state
    return World(
        size=size,
        operator=operator,
        job=job,
        site=site,
        anchor=anchor,
        equipment=equipment,
        sheet=sheet,
        site_check=versions["site"],
        anchor_check=versions["anchor"],
        checklist=checklists[0],
        version=checklists[0].versions.order_by("-number").first(),
        log_entry=AnchorLogEntry.objects.filter(anchor=anchor).order_by("-sequence").first(),
        certificate=certificate,
        record=DailyRecord.objects.filter(site=site, organisation=org).order_by("sequence")[0],
        profile=profile,
    )


@pytest.fixture(scope="module", params=list(SIZES.values()), ids=list(SIZES))
def world(request, django_db_setup, django_db_blocker, tmp_path_factory) -> Iterator[World]:
    """Each data set is built once for the module and rolled back after its last test.

    Built per test, the two data sets cost minutes for this module; built once, seconds. Each
    test still runs in its own savepoint (pytest-django keeps an enclosing transaction open for
    this), so a sync test's writes are gone before the next test. Fast password hashing as in
    conftest, whose fixture for it is per test.
    """
    with (
        django_db_blocker.unblock(),
        override_settings(
            PASSWORD_HASHERS=["django.contrib.auth.hashers.MD5PasswordHasher"],
            MEDIA_ROOT=tmp_path_factory.mktemp("media"),
        ),
        transaction.atomic(),
    ):
        yield build_world(request.param)
        transaction.set_rollback(True)


def reader(world: World) -> APIClient:
    """The operator as a request sees them: a fresh row, nothing cached from building the data."""
    return client_for(User.objects.get(pk=world.operator.pk))


def export_url(w: World) -> str:
    """The site's records of the last 30 days: every day the data set signed."""
    end = timezone.localdate()
    start = end - dt.timedelta(days=30)
    return f"{reverse('record-export')}?site={w.site.pk}&start={start}&end={end}"


READS: dict[str, Callable[[World], str]] = {
    "api-root": lambda w: reverse("api-root"),
    "me": lambda w: reverse("me"),
    "due": lambda w: f"{reverse('due')}?within=366",
    "profile-list": lambda w: reverse("profile-list"),
    "profile-detail": lambda w: reverse("profile-detail", args=[w.profile.key]),
    "profile-revisions": lambda w: reverse("profile-revisions", args=[w.profile.key]),
    "site-list": lambda w: reverse("site-list"),
    "site-detail": lambda w: reverse("site-detail", args=[w.site.pk]),
    "site-grants": lambda w: reverse("site-grants", args=[w.site.pk]),
    "anchor-log-pdf": lambda w: reverse("anchor-log-pdf") + f"?site={w.site.pk}",
    "anchor-list": lambda w: reverse("anchor-list"),
    "anchor-detail": lambda w: reverse("anchor-detail", args=[w.anchor.pk]),
    "anchor-certifications": lambda w: reverse("anchor-certifications", args=[w.anchor.pk]),
    "anchor-certificate-file": lambda w: reverse(
        "anchor-certificate-file", args=[w.anchor.pk, w.certificate.pk]
    ),
    "my-calendar": lambda w: reverse("my-calendar"),
    "anchor-log-list": lambda w: reverse("anchor-log-list"),
    "anchor-log-detail": lambda w: reverse("anchor-log-detail", args=[w.log_entry.pk]),
    "equipment-list": lambda w: reverse("equipment-list"),
    "equipment-detail": lambda w: reverse("equipment-detail", args=[w.equipment.pk]),
    "equipment-kinds": lambda w: reverse("equipment-kinds"),
    "job-list": lambda w: reverse("job-list"),
    "job-detail": lambda w: reverse("job-detail", args=[w.job.pk]),
    "job-transitions": lambda w: reverse("job-transitions", args=[w.job.pk]),
    "checklist-list": lambda w: reverse("checklist-list"),
    "checklist-detail": lambda w: reverse("checklist-detail", args=[w.checklist.pk]),
    "checklist-version-list": lambda w: reverse("checklist-version-list"),
    "checklist-version-detail": lambda w: reverse("checklist-version-detail", args=[w.version.pk]),
    "checklist-version-diff": lambda w: reverse("checklist-version-diff", args=[w.version.pk]),
    "sheet-list": lambda w: reverse("sheet-list"),
    "sheet-detail": lambda w: reverse("sheet-detail", args=[w.sheet.pk]),
    "record-list": lambda w: reverse("record-list"),
    "record-detail": lambda w: reverse("record-detail", args=[w.record.pk]),
    "record-pdf": lambda w: reverse("record-pdf", args=[w.record.pk]),
    "record-verify": lambda w: reverse("record-verify", args=[w.record.pk]),
    "record-export": export_url,
}

FILES = {"anchor-log-pdf", "record-pdf", "record-export", "anchor-certificate-file"}
"""Reads that answer a file (PDF or zip), not JSON."""
ONE_ROW = {
    "api-root",
    "me",
    "equipment-kinds",
    "profile-detail",
    "site-detail",
    "anchor-detail",
    "anchor-certifications",
    "anchor-certificate-file",
    "my-calendar",
    "anchor-log-detail",
    "equipment-detail",
    "record-detail",
    "record-verify",
}
"""Reads whose JSON lists no grown rows: a fixed answer, or one row out of a grown table."""


def api_reads(patterns: list[Any] | None = None) -> set[str]:
    """The name of every route of the API that answers GET (a viewset action or a view)."""
    names: set[str] = set()
    for pattern in (
        get_resolver("compliance.api.urls").url_patterns if patterns is None else patterns
    ):
        if isinstance(pattern, URLResolver):
            names |= api_reads(pattern.url_patterns)
            continue
        view = pattern.callback
        actions = getattr(view, "actions", None)
        methods = actions if actions is not None else getattr(view.cls, "http_method_names", [])
        if "get" in methods:
            names.add(pattern.name)
    return names


def test_every_read_of_the_api_has_a_pinned_count() -> None:
    """A GET route added to the API fails here until its count is pinned (and one removed
    until its entry goes)."""
    assert api_reads() == set(READS) == set(EXPECTED) - {"sync-1-record", "sync-20-records"}


def rows_shown(body: Any) -> int:
    """How many rows a JSON answer lists: a page's results, a bare list, or a detail's longest
    list (a job's requirements, a sheet's entries), to show the grown rows reached the read."""
    if isinstance(body, list):
        return len(body)
    if isinstance(body, dict) and isinstance(body.get("results"), list):
        return len(body["results"])
    if isinstance(body, dict):
        return max((len(v) for v in body.values() if isinstance(v, list)), default=0)
    return 0


def expect_n_plus_1(request: pytest.FixtureRequest, name: str, world: World) -> None:
    """Mark a known N+1 on the grown data set only: the small one still pins the count."""
    if name in KNOWN_N_PLUS_1 and world.size == SIZES["large"]:
        request.applymarker(pytest.mark.xfail(strict=True, reason=f"N+1: {KNOWN_N_PLUS_1[name]}"))


@pytest.mark.parametrize("name", list(READS))
def test_a_read_costs_its_pinned_queries(
    world: World, name: str, request: pytest.FixtureRequest, django_assert_num_queries
) -> None:
    expect_n_plus_1(request, name, world)
    client, url = reader(world), READS[name](world)
    with django_assert_num_queries(EXPECTED[name]):
        response = client.get(url)
    assert response.status_code == 200, (url, response.content[:500])
    if name not in FILES | ONE_ROW:
        assert rows_shown(response.json()) >= world.size, "the grown rows are not in the answer"


def site_sheet(world: World) -> dict[str, Any]:
    """One offline record as the phone queues it: a passing site check of the shown job."""
    return {
        "type": "sheet",
        "client_uuid": str(uuid.uuid4()),
        "data": {
            "job": world.job.pk,
            "version": world.site_check.pk,
            "entries": PASSING["site"],
            "device_time": timezone.now().isoformat(),
        },
    }


@pytest.mark.parametrize(
    ("name", "count"), [("sync-1-record", 1), ("sync-20-records", 20)], ids=["1", "20"]
)
def test_a_sync_batch_costs_its_pinned_queries(
    world: World, name: str, count: int, django_assert_num_queries
) -> None:
    records = [site_sheet(world) for _ in range(count)]
    client = reader(world)
    with django_assert_num_queries(EXPECTED[name]):
        response = client.post(reverse("sync"), {"records": records}, format="json")
    assert response.status_code == 200, response.content[:500]
    assert [r["status"] for r in response.json()["results"]] == ["applied"] * count
    assert EXPECTED[name] == EXPECTED["sync-1-record"] + (count - 1) * SYNC_PER_RECORD


@pytest.mark.parametrize("count", sorted(SYNC_ANCHOR_SHEETS))
def test_a_sync_batch_of_anchor_sheets_locks_and_reads_the_log_chain_once(
    world: World, count: int, django_assert_num_queries
) -> None:
    drop = world.job.drops.order_by("id").first()
    anchors = [drop.anchor, drop.safety_anchor]
    records = [
        {
            "type": "sheet",
            "client_uuid": str(uuid.uuid4()),
            "data": {
                "job": world.job.pk,
                "version": world.anchor_check.pk,
                "anchor": anchors[n % 2].pk,
                "entries": PASSING["anchor"],
                "device_time": timezone.now().isoformat(),
            },
        }
        for n in range(count)
    ]
    before = AnchorLogEntry.objects.filter(site=world.site).count()
    with django_assert_num_queries(SYNC_ANCHOR_SHEETS[count]):
        response = reader(world).post(reverse("sync"), {"records": records}, format="json")
    assert response.status_code == 200, response.content[:500]
    assert [r["status"] for r in response.json()["results"]] == ["applied"] * count
    assert AnchorLogEntry.objects.filter(site=world.site).count() == before + count
    assert verify_log_chain(world.site.pk) == []
    assert SYNC_ANCHOR_SHEETS[3] == SYNC_ANCHOR_SHEETS[1] + 2 * (SYNC_PER_RECORD + 1)
