"""Nobody reads another organisation's data: each object-scoped GET naming another
organisation's object answers exactly as an id no row has (404, the same body) and changes
nothing, while the same GET naming the caller's own object succeeds. Lists and filters leave the
other's rows out; a caller that is not signed in, or belongs to no organisation, gets 403.

Reads are open to every role, the auditor included, so every role is checked.
"""

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import pytest
from django.core.cache import cache
from django.urls import reverse

from compliance.models import RecordPdf
from tests.api.tenants import (
    ABSENT,
    JOB_RELATIONS,
    MISSING,
    ROLES,
    SITE_RELATIONS,
    Side,
    Tenant,
    World,
    build_world,
    snapshot,
)
from tests.conftest import client_for
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db

NOT_SIGNED_IN = {
    "detail": "Authentication credentials were not provided.",
    "code": "not_authenticated",
}
NO_ORGANISATION = {"detail": "You need to sign in as a member of an organisation."}


@pytest.fixture
def world(simple_checklists, settings, tmp_path) -> World:
    settings.MEDIA_ROOT = tmp_path  # the caller's own record PDF renders on first read
    return build_world(simple_checklists)


class Once:
    """A side whose builders each build once: reads change nothing, so one object serves every
    read that names one of its kind (and the test builds half as much)."""

    def __init__(self, side: Side) -> None:
        self._side = side
        self._built: dict[tuple[str, tuple[Any, ...]], Any] = {}

    def __getattr__(self, name: str) -> Any:
        attribute = getattr(self._side, name)
        if not callable(attribute):
            return attribute

        def build(*args: Any) -> Any:
            key = (name, args)
            if key not in self._built:
                self._built[key] = attribute(*args)
            return self._built[key]

        return build


@dataclass(frozen=True)
class Read:
    """An object-scoped GET: the URL naming a side's object, and the answer on one's own."""

    name: str
    url: Callable[[Side, Tenant], str]
    ok: Callable[[Once], int] = lambda own: 200

    def __str__(self) -> str:
        return self.name


def _route(name: str, build: Callable[[Side], Any]) -> Callable[[Side, Tenant], str]:
    return lambda side, caller: reverse(name, args=[build(side).pk])


def _anchor_log_pdf(side: Side, caller: Tenant) -> str:
    caller.signing()  # the caller's organisation signs the book it downloads
    return reverse("anchor-log-pdf") + f"?site={side.site.pk}"


def _anchor_log_pdf_of_anchor(side: Side, caller: Tenant) -> str:
    """The caller's own building, one of the other organisation's anchors named."""
    caller.signing()
    return reverse("anchor-log-pdf") + f"?site={caller.site.pk}&anchor={side.anchor().pk}"


def _pdf_answer(own: Once) -> int:
    """202 while the caller's own PDF is not rendered (the first read queues it), then 200."""
    return 200 if RecordPdf.objects.filter(record=own.record()).exists() else 202


def _diff_against(side: Side, caller: Tenant) -> str:
    """The caller's own version compared with one of the other organisation's."""
    own = caller.published()
    return reverse("checklist-version-diff", args=[own.pk]) + f"?against={side.published().pk}"


JOB_READS = [
    Read("job-detail", _route("job-detail", lambda side: side.job())),
    Read("job-transitions", _route("job-transitions", lambda side: side.job())),
    Read("sheet-detail", _route("sheet-detail", lambda side: side.sheet())),
    Read("record-detail", _route("record-detail", lambda side: side.record())),
    Read("record-pdf", _route("record-pdf", lambda side: side.record()), ok=_pdf_answer),
    Read("record-verify", _route("record-verify", lambda side: side.record()), ok=_pdf_answer),
    Read("equipment-detail", _route("equipment-detail", lambda side: side.equipment())),
    Read("checklist-detail", _route("checklist-detail", lambda side: side.checklist())),
    Read(
        "checklist-version-detail",
        _route("checklist-version-detail", lambda side: side.published()),
    ),
    Read("checklist-version-diff", _route("checklist-version-diff", lambda side: side.draft())),
    Read("checklist-version-diff-against", _diff_against),
]
"""What an organisation keeps to itself, read by a crew at the same building, by the
building's owner and by a stranger."""

SITE_READS = [
    Read("site-detail", lambda side, caller: reverse("site-detail", args=[side.site.pk])),
    Read("anchor-detail", _route("anchor-detail", lambda side: side.anchor())),
    Read("anchor-log-detail", _route("anchor-log-detail", lambda side: side.log_entry())),
    Read("site-grants", lambda side, caller: reverse("site-grants", args=[side.site.pk])),
    Read("anchor-log-pdf", _anchor_log_pdf),
    Read("anchor-log-pdf-of-anchor", _anchor_log_pdf_of_anchor),
]
"""What belongs to a building, read by an organisation with no live grant there."""


@pytest.mark.parametrize(
    ("reads", "relation"),
    [pytest.param(JOB_READS, r, id=r) for r in JOB_RELATIONS]
    + [pytest.param(SITE_READS, r, id=r) for r in SITE_RELATIONS],
)
def test_a_read_of_another_organisations_object_answers_as_if_absent(world, reads, relation):
    """Every role: reads are open to all of them, the auditor included."""
    caller_name, target_name = (JOB_RELATIONS | SITE_RELATIONS)[relation]
    caller, target = Once(world[caller_name]), Once(world[target_name])
    for role in ROLES:
        client = client_for(caller.people[role])
        for read in reads:
            theirs_url, missing_url = read.url(target, caller), read.url(ABSENT, caller)
            ours_url = read.url(caller, caller)
            before = snapshot()
            theirs, missing = client.get(theirs_url), client.get(missing_url)
            assert theirs.status_code == 404, (role, read, theirs.content)
            assert missing.status_code == 404, (role, read, missing.content)
            assert theirs.json() == missing.json(), (role, read)
            assert snapshot() == before, (role, read)
            expected = read.ok(caller)
            ours = client.get(ours_url)
            assert ours.status_code == expected, (role, read, ours.content)


def test_reading_another_organisations_record_pdf_queues_no_render(world):
    """The PDF of a record not yet rendered is queued on first read; another organisation's
    read must not queue it (the queue mark lives in the cache, not in the database)."""
    caller, target = world["north"], world["far"]
    record = target.record()
    response = client_for(caller.people["supervisor"]).get(reverse("record-pdf", args=[record.pk]))
    assert response.status_code == 404
    assert cache.get(f"parapet:render-queued:{record.pk}") is None
    assert not RecordPdf.objects.filter(record=record).exists()


LISTS = {
    "job-list": lambda side: side.job().pk,
    "sheet-list": lambda side: side.sheet().pk,
    "record-list": lambda side: side.record().pk,
    "equipment-list": lambda side: side.equipment().pk,
    "checklist-list": lambda side: side.checklist().pk,
    "checklist-version-list": lambda side: side.published().pk,
}
SITE_LISTS = {
    "site-list": lambda side: side.site.pk,
    "anchor-list": lambda side: side.anchor().pk,
    "anchor-log-list": lambda side: side.log_entry().pk,
}


def _ids(client: Any, url: str, query: dict[str, Any] | None = None) -> list[int]:
    response = client.get(url, query or {})
    assert response.status_code == 200, (url, response.content)
    return [row["id"] for row in response.json()["results"]]


@pytest.mark.parametrize(
    ("lists", "relation"),
    [pytest.param(LISTS, r, id=r) for r in JOB_RELATIONS]
    + [pytest.param(SITE_LISTS, r, id=r) for r in SITE_RELATIONS],
)
def test_lists_leave_out_another_organisations_rows(world, lists, relation):
    """Each list answers 200 with the caller's own row and without the other's."""
    caller_name, target_name = (JOB_RELATIONS | SITE_RELATIONS)[relation]
    caller, target = world[caller_name], world[target_name]
    client = client_for(caller.people["auditor"])
    for name, build in lists.items():
        theirs, ours = build(target), build(caller)
        ids = _ids(client, reverse(name), {"limit": 1000})
        assert ours in ids and theirs not in ids, name


@pytest.mark.parametrize("relation", list(JOB_RELATIONS))
def test_filters_naming_another_organisations_objects_find_nothing(world, relation):
    """A filter by another organisation's job or site finds what one for an absent id finds."""
    caller_name, target_name = JOB_RELATIONS[relation]
    caller, target = world[caller_name], world[target_name]
    client = client_for(caller.people["supervisor"])
    sheet, record = target.sheet(), target.record()
    for url, query in (
        (reverse("sheet-list"), {"job": sheet.job_id}),
        (reverse("record-list"), {"job": record.job_id}),
        (reverse("record-list"), {"site": record.site_id}),
    ):
        assert _ids(client, url, query) == [], (url, query)
    own = caller.sheet()
    assert _ids(client, reverse("sheet-list"), {"job": own.job_id}) == [own.pk]


@pytest.mark.parametrize("relation", list(SITE_RELATIONS))
def test_site_filters_naming_another_organisations_objects_find_nothing(world, relation):
    caller_name, target_name = SITE_RELATIONS[relation]
    caller, target = world[caller_name], world[target_name]
    client = client_for(caller.people["supervisor"])
    entry = target.log_entry()
    assert _ids(client, reverse("anchor-list"), {"site": target.site.pk}) == []
    assert _ids(client, reverse("anchor-log-list"), {"anchor": entry.anchor_id}) == []
    assert _ids(client, reverse("anchor-log-list"), {"site": entry.site_id}) == []
    own = caller.log_entry()
    assert _ids(client, reverse("anchor-log-list"), {"anchor": own.anchor_id}) == [own.pk]


@pytest.mark.parametrize("relation", ["crew_to_owner", "owner_to_crew"])
def test_an_export_of_another_organisations_building_is_refused_as_absent(world, relation):
    """The export names its site in the query: another's answers 400 like an absent one. (A
    crew whose grant was ended still exports its own records of the building, by design.)"""
    caller_name, target_name = SITE_RELATIONS[relation]
    caller, target = world[caller_name], world[target_name]
    target.record()
    client = client_for(caller.people["auditor"])
    period = {"start": "2000-01-01", "end": "2000-12-31"}
    before = snapshot()
    theirs = client.get(reverse("record-export"), {"site": target.site.pk, **period})
    missing = client.get(reverse("record-export"), {"site": MISSING, **period})
    assert theirs.status_code == missing.status_code == 400
    assert theirs.json() == missing.json() == {"site": ["Unknown site."]}
    assert snapshot() == before
    caller.signing()  # the export's manifest is signed by the caller's organisation
    ours = client.get(reverse("record-export"), {"site": caller.site.pk, **period})
    assert ours.status_code == 200, ours.content


def _every_read_url(world: World) -> list[str]:
    """Each read naming a real object: the north crew's, and the owner's for the building's."""
    north, owner = world["north"], world["owner"]
    urls = [read.url(north, north) for read in JOB_READS]
    urls += [read.url(owner, owner) for read in SITE_READS]
    return urls + [reverse(name) for name in (*LISTS, *SITE_LISTS)]


def test_a_caller_not_signed_in_reads_nothing(world, api):
    """403, not 401: session sign-in comes first and asks for no WWW-Authenticate challenge;
    the code tells the phone to sign in again."""
    for url in _every_read_url(world):
        response = api.get(url)
        assert response.status_code == 403, url
        assert response.json() == NOT_SIGNED_IN, url


def test_a_person_of_no_organisation_reads_nothing(world):
    client = client_for(UserFactory(organisation=None, role="admin"))
    for url in _every_read_url(world):
        response = client.get(url)
        assert response.status_code == 403, url
        assert response.json() == NO_ORGANISATION, url
