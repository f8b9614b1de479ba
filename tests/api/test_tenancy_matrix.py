"""Every write that names another organisation's object is refused exactly as if the object did
not exist, and changes nothing.

Each request is sent three times with one body: to the other organisation's object, to an id no
row has, and to the caller's own object in the same state. The first two must give the same
answer (404 for an object in the URL; for an id in the body of a new record, the field's 400),
the database must be as it was, and the last must succeed: that proves the body good, so the
refusal is the tenancy check and not a validation error that happens to look like one.
"""

import datetime as dt
import uuid
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import pytest
from django.urls import reverse

from compliance.models import Job, JobState, Organisation
from tests.api.tenants import (
    ABSENT,
    JOB_RELATIONS,
    MISSING,
    SITE_RELATIONS,
    TODAY,
    Side,
    Tenant,
    World,
    build_world,
    png,
    row,
    send,
    snapshot,
)
from tests.conftest import PASSING, client_for
from tests.factories import PASSWORD, RATINGS, OrganisationFactory, UserFactory, tick

pytestmark = pytest.mark.django_db

WRITERS = ("operator", "supervisor", "admin", "property_manager")
KEEPERS = ("supervisor", "admin", "property_manager")
"""Who may change a register (SupervisorWrites): the anchors, checklists and grants."""
SIGNERS = ("supervisor", "admin")
PLANNERS = SIGNERS
"""Jobs and their drops are planned by a supervisor or an admin."""


@pytest.fixture
def world(simple_checklists) -> World:
    return build_world(simple_checklists)


def _certification() -> dict[str, Any]:
    return {
        "certifier": "Pat Engineer",
        "rated_capacity_kn": 30.0,
        "certified_on": str(TODAY() - dt.timedelta(days=1)),
        "valid_until": str(TODAY() + dt.timedelta(days=365)),
    }


def _kit(caller: Tenant) -> dict[str, Any]:
    """A drop planned with the caller's own equipment and anchors."""
    return {
        "label": "D9",
        "robot": caller.equipment("robot").pk,
        "tether": caller.equipment("tether").pk,
        "safety_line": caller.equipment("safety_line").pk,
        "hose": caller.equipment("hose").pk,
        "anchor": caller.anchor().pk,
        "safety_anchor": caller.anchor().pk,
        "length_m": 80.0,
    }


def _grant_body(caller: Tenant) -> dict[str, Any]:
    crew = OrganisationFactory(kind=Organisation.Kind.CONTRACTOR)
    return {
        "contractor": crew.pk,
        "starts_on": str(TODAY()),
        "ends_on": str(TODAY() + dt.timedelta(days=7)),
    }


def _sign_url(side: Side, caller: Tenant) -> str:
    side.signing()
    return reverse("job-sign", args=[side.job(JobState.CLOSED).pk])


def _grant_end_url(side: Side, caller: Tenant) -> str:
    return reverse("site-grant-end", args=[side.site.pk, side.grant().pk])


def _grant_under_own_site_url(side: Side, caller: Tenant) -> str:
    """The caller's own site in the URL, the other organisation's grant after it."""
    return reverse("site-grant-end", args=[caller.site.pk, side.grant().pk])


@dataclass(frozen=True)
class Action:
    """A write to one object named in the URL, with the body that succeeds on one's own."""

    name: str
    method: str
    url: Callable[[Side, Tenant], str]
    body: Callable[[Tenant], Any]
    ok: int
    roles: tuple[str, ...]
    register: bool = False
    """Guarded by SupervisorWrites, which refuses an operator before any lookup."""

    def __str__(self) -> str:
        return self.name


def _none(caller: Tenant) -> None:
    return None


JOB_ACTIONS = [
    Action(
        "job-start",
        "post",
        lambda side, caller: reverse("job-start", args=[side.job(JobState.CLEARED).pk]),
        _none,
        200,
        WRITERS,
    ),
    Action(
        "job-pause",
        "post",
        lambda side, caller: reverse("job-pause", args=[side.job(JobState.WORKING).pk]),
        lambda caller: {"reason": "Wind rising."},
        200,
        WRITERS,
    ),
    Action(
        "job-close",
        "post",
        lambda side, caller: reverse("job-close", args=[side.job(JobState.WORKING).pk]),
        lambda caller: {"reason": "Facade done."},
        200,
        WRITERS,
    ),
    Action(
        "job-drops",
        "post",
        lambda side, caller: reverse("job-drops", args=[side.job().pk]),
        _kit,
        201,
        PLANNERS,
    ),
    Action(
        "job-sign",
        "post",
        _sign_url,
        lambda caller: {"password": PASSWORD, "meaning": "reviewed_safe"},
        201,
        SIGNERS,
    ),
    Action(
        "record-addenda",
        "post",
        lambda side, caller: reverse("record-addenda", args=[side.record().pk]),
        lambda caller: {"password": PASSWORD, "text": "The barrier moved at noon."},
        201,
        SIGNERS,
    ),
    Action(
        "checklist-versions",
        "post",
        lambda side, caller: reverse("checklist-versions", args=[side.checklist().pk]),
        lambda caller: {"items": [tick("zone_closed"), tick("signage")], "notes": "Signage."},
        201,
        KEEPERS,
        register=True,
    ),
    Action(
        "checklist-version-patch",
        "patch",
        lambda side, caller: reverse("checklist-version-detail", args=[side.draft().pk]),
        lambda caller: {"items": [tick("zone_closed"), tick("barriers"), tick("signage")]},
        200,
        KEEPERS,
        register=True,
    ),
    Action(
        "checklist-version-publish",
        "post",
        lambda side, caller: reverse("checklist-version-publish", args=[side.draft().pk]),
        _none,
        200,
        SIGNERS,
        register=True,
    ),
]
"""Writes to what an organisation keeps to itself: its jobs, records and checklists."""

SITE_ACTIONS = [
    Action(
        "anchor-certifications",
        "post",
        lambda side, caller: reverse("anchor-certifications", args=[side.anchor().pk]),
        lambda caller: _certification(),
        201,
        KEEPERS,
        register=True,
    ),
    Action(
        "site-grants",
        "post",
        lambda side, caller: reverse("site-grants", args=[side.site.pk]),
        _grant_body,
        201,
        KEEPERS,
    ),
    Action(
        "site-grant-end",
        "post",
        _grant_end_url,
        lambda caller: {"reason": "Contract ended."},
        200,
        KEEPERS,
    ),
    Action(
        "site-grant-end-under-own-site",
        "post",
        _grant_under_own_site_url,
        lambda caller: {"reason": "Contract ended."},
        200,
        KEEPERS,
    ),
]
"""Writes to what belongs to a building: its anchors' certifications and its grants."""


def _spread(roles: tuple[str, ...], relations: dict[str, tuple[str, str]]) -> list[tuple[str, str]]:
    """(relation, role) pairs: every relation with the first role, every role with the first
    relation. Which organisation sees what does not depend on the role (the querysets scope by
    organisation alone), so the full product would only repeat the same checks."""
    first_relation, first_role = next(iter(relations)), roles[0]
    pairs = [(relation, first_role) for relation in relations]
    return pairs + [(first_relation, role) for role in roles[1:]]


def _cases(actions: list[Action], relations: dict[str, tuple[str, str]]) -> list[Any]:
    return [
        pytest.param(action, relation, role, id=f"{action}-{relation}-{role}")
        for action in actions
        for relation, role in _spread(action.roles, relations)
    ]


def _refused_as_absent(world: World, action: Action, relation: str, role: str) -> None:
    """The body to the other's object: 404 like an absent id, nothing changed; to one's own:
    the success that proves the body good."""
    caller_name, target_name = (JOB_RELATIONS | SITE_RELATIONS)[relation]
    caller, target = world[caller_name], world[target_name]
    body = action.body(caller)
    theirs_url = action.url(target, caller)
    missing_url = action.url(ABSENT, caller)
    ours_url = action.url(caller, caller)
    client = client_for(caller.people[role])
    before = snapshot()
    theirs = send(client, action.method, theirs_url, body)
    missing = send(client, action.method, missing_url, body)
    assert theirs.status_code == 404, (theirs_url, theirs.content)
    assert missing.status_code == 404, (missing_url, missing.content)
    assert theirs.json() == missing.json()
    assert snapshot() == before
    ours = send(client, action.method, ours_url, body)
    assert ours.status_code == action.ok, (ours_url, ours.content)


@pytest.mark.parametrize(("action", "relation", "role"), _cases(JOB_ACTIONS, JOB_RELATIONS))
def test_a_write_to_another_organisations_job_record_or_checklist_answers_404(
    world, action, relation, role
):
    _refused_as_absent(world, action, relation, role)


@pytest.mark.parametrize(("action", "relation", "role"), _cases(SITE_ACTIONS, SITE_RELATIONS))
def test_a_write_to_another_organisations_building_answers_404(world, action, relation, role):
    _refused_as_absent(world, action, relation, role)


REFUSED_BEFORE_LOOKUP = {
    "auditor": "Auditors have read-only access.",
    "operator": "Only a supervisor, an admin or a property manager can change this register.",
}


def _refused_roles() -> list[Any]:
    cases = []
    for actions, relations in ((JOB_ACTIONS, JOB_RELATIONS), (SITE_ACTIONS, SITE_RELATIONS)):
        relation = next(iter(relations))
        for action in actions:
            for role in ("operator", "supervisor", "auditor", "admin", "property_manager"):
                if role not in action.roles:
                    cases.append(pytest.param(action, relation, role, id=f"{action}-{role}"))
    return cases


@pytest.mark.parametrize(("action", "relation", "role"), _refused_roles())
def test_a_role_refused_on_its_own_object_learns_nothing_of_anothers(world, action, relation, role):
    """A role that may not make this change is refused on its own object (403). On another's
    it gets the answer an absent id gets: the same 403 where the permission class refuses the
    role before any lookup (an auditor anywhere, an operator on a register), else 404."""
    caller_name, target_name = (JOB_RELATIONS | SITE_RELATIONS)[relation]
    caller, target = world[caller_name], world[target_name]
    body = action.body(caller)
    theirs_url, missing_url = action.url(target, caller), action.url(ABSENT, caller)
    ours_url = action.url(caller, caller)
    client = client_for(caller.people[role])
    before = snapshot()
    theirs = send(client, action.method, theirs_url, body)
    missing = send(client, action.method, missing_url, body)
    early = role == "auditor" or (role == "operator" and action.register)
    if early:
        assert theirs.status_code == 403, theirs.content
        assert theirs.json() == {"detail": REFUSED_BEFORE_LOOKUP[role]}
    else:
        assert theirs.status_code == 404, theirs.content
    assert (missing.status_code, missing.json()) == (theirs.status_code, theirs.json())
    ours = send(client, action.method, ours_url, body)
    assert ours.status_code == 403, ours.content
    assert snapshot() == before


BAD_BODY = {"surprise": 1}
"""Refused by every input of these actions (each refuses fields it does not know)."""


def _bad_body_cases() -> list[Any]:
    cases = []
    for actions, relations in ((JOB_ACTIONS, JOB_RELATIONS), (SITE_ACTIONS, SITE_RELATIONS)):
        relation = next(iter(relations))
        for action in actions:
            if action.body is _none:
                continue
            cases.append(pytest.param(action, relation, id=str(action)))
    return cases


@pytest.mark.parametrize(("action", "relation"), _bad_body_cases())
def test_the_object_is_looked_up_before_the_body_is_read(world, action, relation):
    """Another organisation's object answers 404 whatever the body: an answer that depends on
    the body would tell a caller that probes with bad bodies how far the request got."""
    caller_name, target_name = (JOB_RELATIONS | SITE_RELATIONS)[relation]
    caller, target = world[caller_name], world[target_name]
    client = client_for(caller.people[action.roles[0]])
    url = action.url(target, caller)
    before = snapshot()
    response = send(client, action.method, url, BAD_BODY)
    assert response.status_code == 404, response.content
    assert (
        response.json() == send(client, action.method, action.url(ABSENT, caller), BAD_BODY).json()
    )
    assert snapshot() == before


INVALID_PK = 'Invalid pk "{id}" - object does not exist.'


@dataclass(frozen=True)
class Naming:
    """A new record whose body names an object by id: another organisation's is refused by that
    field, in the words an id no row has gets (400, the field's error), and nothing is stored."""

    name: str
    url: Callable[[Tenant], str]
    body: Callable[[Side, Tenant], dict[str, Any]]
    field: str
    refusal: str
    ok: int
    roles: tuple[str, ...]
    relations: dict[str, tuple[str, str]]
    fmt: str = "json"
    register: bool = False
    """Guarded by SupervisorWrites, which refuses an operator before any lookup."""

    def __str__(self) -> str:
        return self.name


def _log_body(side: Side, caller: Tenant) -> dict[str, Any]:
    caller.signing()
    return {
        "anchor": side.anchor().pk,
        "kind": "repair",
        "performed_on": str(TODAY()),
        "details": "Base resealed.",
        "password": PASSWORD,
    }


NAMINGS = [
    Naming(
        "sheet-naming-job",
        lambda caller: reverse("sheet-list"),
        lambda side, caller: {
            "job": side.job().pk,
            "version": caller.checklists["site"].pk,
            "entries": PASSING["site"],
        },
        "job",
        INVALID_PK,
        201,
        WRITERS,
        JOB_RELATIONS,
    ),
    Naming(
        "sheet-naming-version",
        lambda caller: reverse("sheet-list"),
        lambda side, caller: {
            "job": caller.job().pk,
            "version": side.published().pk,
            "entries": {"zone_closed": {"value": "pass"}},
        },
        "version",
        "Unknown checklist version.",
        201,
        WRITERS,
        JOB_RELATIONS,
    ),
    Naming(
        "photo-naming-job",
        lambda caller: reverse("photos"),
        lambda side, caller: {
            "client_uuid": str(uuid.uuid4()),
            "job": side.job().pk,
            "image": png(),
        },
        "job",
        "Unknown job.",
        201,
        WRITERS,
        JOB_RELATIONS,
        fmt="multipart",
    ),
    Naming(
        "drop-naming-robot",
        lambda caller: reverse("job-drops", args=[caller.job().pk]),
        lambda side, caller: {**_kit(caller), "robot": side.equipment("robot").pk},
        "robot",
        INVALID_PK,
        201,
        PLANNERS,
        JOB_RELATIONS,
    ),
    Naming(
        "job-naming-site",
        lambda caller: reverse("job-list"),
        lambda side, caller: {
            "site": side.site.pk,
            "date": str(TODAY()),
            "supervisor": caller.people["supervisor"].pk,
        },
        "site",
        INVALID_PK,
        201,
        PLANNERS,
        SITE_RELATIONS,
    ),
    Naming(
        "anchor-naming-site",
        lambda caller: reverse("anchor-list"),
        lambda side, caller: {"site": side.site.pk, "label": "N1"},
        "site",
        INVALID_PK,
        201,
        KEEPERS,
        SITE_RELATIONS,
        register=True,
    ),
    Naming(
        "anchor-log-naming-anchor",
        lambda caller: reverse("anchor-log-list"),
        _log_body,
        "anchor",
        INVALID_PK,
        201,
        KEEPERS,
        SITE_RELATIONS,
    ),
]


@pytest.mark.parametrize(
    ("naming", "relation", "role"),
    [
        pytest.param(naming, relation, role, id=f"{naming}-{relation}-{role}")
        for naming in NAMINGS
        for relation, role in _spread(naming.roles, naming.relations)
    ],
)
def test_a_new_record_naming_another_organisations_object_is_refused_as_absent(
    world, naming, relation, role, settings, tmp_path
):
    """Not a 404: the URL names a collection the caller may add to; the id in the body is the
    caller's error, worded as for an id that does not exist (and naming no one else)."""
    settings.MEDIA_ROOT = tmp_path
    caller_name, target_name = naming.relations[relation]
    caller, target = world[caller_name], world[target_name]
    url = naming.url(caller)
    theirs_body, missing_body = naming.body(target, caller), naming.body(ABSENT, caller)
    ours_body = naming.body(caller, caller)
    client = client_for(caller.people[role])
    before = snapshot()
    theirs = send(client, "post", url, theirs_body, naming.fmt)
    missing = send(client, "post", url, missing_body, naming.fmt)
    their_id = theirs_body[naming.field]
    assert theirs.status_code == 400, theirs.content
    assert theirs.json() == {naming.field: [naming.refusal.format(id=their_id)]}
    assert missing.status_code == 400, missing.content
    assert missing.json() == {naming.field: [naming.refusal.format(id=MISSING)]}
    assert snapshot() == before
    ours = send(client, "post", url, ours_body, naming.fmt)
    assert ours.status_code == naming.ok, ours.content


@pytest.mark.parametrize(
    ("naming", "role"),
    [
        pytest.param(naming, role, id=f"{naming}-{role}")
        for naming in NAMINGS
        for role in ("operator", "supervisor", "auditor", "admin", "property_manager")
        if role not in naming.roles
    ],
)
def test_a_role_refused_a_new_record_learns_nothing_of_anothers(
    world, naming, role, settings, tmp_path
):
    """Refused on its own objects (403); on another's, the answer an absent id gets: the 403
    where the permission class refuses the role first, else the field's 400."""
    settings.MEDIA_ROOT = tmp_path
    caller_name, target_name = next(iter(naming.relations.values()))
    caller, target = world[caller_name], world[target_name]
    url = naming.url(caller)
    theirs_body, missing_body = naming.body(target, caller), naming.body(ABSENT, caller)
    ours_body = naming.body(caller, caller)
    client = client_for(caller.people[role])
    before = snapshot()
    theirs = send(client, "post", url, theirs_body, naming.fmt)
    missing = send(client, "post", url, missing_body, naming.fmt)
    if role == "auditor" or (role == "operator" and naming.register):
        assert theirs.status_code == missing.status_code == 403, theirs.content
        assert theirs.json() == missing.json() == {"detail": REFUSED_BEFORE_LOOKUP[role]}
    else:
        their_id = theirs_body[naming.field]
        assert theirs.status_code == missing.status_code == 400, theirs.content
        assert theirs.json() == {naming.field: [naming.refusal.format(id=their_id)]}
        assert missing.json() == {naming.field: [naming.refusal.format(id=MISSING)]}
    ours = send(client, "post", url, ours_body, naming.fmt)
    assert ours.status_code == 403, ours.content
    assert snapshot() == before


@pytest.mark.parametrize(
    ("route", "body", "role", "refusal"),
    [
        pytest.param(
            "equipment-list",
            {"kind": "hose", "label": "H9", "ratings": RATINGS["hose"]},
            "auditor",
            REFUSED_BEFORE_LOOKUP["auditor"],
            id="equipment-auditor",
        ),
        pytest.param(
            "checklist-list",
            {"key": "own-walk", "title": "Own walk", "applies_to": "site"},
            "auditor",
            REFUSED_BEFORE_LOOKUP["auditor"],
            id="checklist-auditor",
        ),
        pytest.param(
            "checklist-list",
            {"key": "own-walk", "title": "Own walk", "applies_to": "site"},
            "operator",
            REFUSED_BEFORE_LOOKUP["operator"],
            id="checklist-operator",
        ),
    ],
)
def test_a_register_entry_that_names_nothing_is_refused_by_role(world, route, body, role, refusal):
    """The registers' own entries name no other object: only the role decides, and the same body
    from a supervisor is stored, so the 403 is the role's and not the body's."""
    caller = world["north"]
    before = snapshot()
    response = client_for(caller.people[role]).post(reverse(route), body, format="json")
    assert response.status_code == 403, response.content
    assert response.json() == {"detail": refusal}
    assert snapshot() == before
    stored = client_for(caller.people["supervisor"]).post(reverse(route), body, format="json")
    assert stored.status_code == 201, stored.content


def _sync_records(
    caller: Tenant, own: Job, job: Any, drop: Any, robot_id: int, version_id: int
) -> list[dict[str, Any]]:
    """One record of each kind naming a job, a drop, a robot or a checklist version: the job and
    drop records name them directly; the robot and version are named on the caller's own job."""
    site, robot = caller.checklists["site"].pk, caller.checklists["robot"].pk
    records = [
        ("sheet", {"job": job.pk, "version": site, "entries": PASSING["site"]}),
        (
            "sheet",
            {"job": own.pk, "version": robot, "equipment": robot_id, "entries": PASSING["robot"]},
        ),
        (
            "sheet",
            {"job": own.pk, "version": version_id, "entries": {"zone_closed": {"value": "pass"}}},
        ),
        ("job_action", {"job": job.pk, "action": "start"}),
        ("drop_log", {"drop": drop.pk, "note": "First pass."}),
        ("job_action", {"job": job.pk, "action": "pause", "reason": "Wind rising."}),
        ("job_action", {"job": job.pk, "action": "close", "reason": "Facade done."}),
    ]
    return [
        {"type": kind, "client_uuid": str(uuid.uuid4()), "data": data} for kind, data in records
    ]


def _sync_records_of(side: Side, caller: Tenant, own: Job) -> list[dict[str, Any]]:
    """The records naming the side's objects: the caller's own job itself for the caller."""
    job = own if side is caller else side.job(JobState.CLEARED)
    if isinstance(job, Job):
        drop = job.drops.get()
        return _sync_records(caller, own, job, drop, drop.robot_id, side.published().pk)
    return _sync_records(caller, own, job, job, MISSING, MISSING)


SYNC_REFUSALS = [
    {"job": ["Unknown job."]},
    {"equipment": ["Unknown equipment."]},
    {"version": ["Unknown checklist version."]},
    {"job": ["Unknown job."]},
    {"drop": ["Unknown drop."]},
    {"job": ["Unknown job."]},
    {"job": ["Unknown job."]},
]


def _job_rows(job: Job) -> dict[str, Any]:
    """What a sync record could add to a job besides its own row: sheets, transitions, holds,
    drop logs."""
    return {
        "sheets": list(job.sheets.values_list("pk", flat=True)),
        "transitions": list(job.transitions.values_list("pk", flat=True)),
        "holds": list(job.holds.values_list("pk", flat=True)),
        "drop_logs": [list(d.logs.values_list("pk", flat=True)) for d in job.drops.all()],
    }


@pytest.mark.parametrize(
    ("relation", "role"),
    [pytest.param(*pair, id="-".join(pair)) for pair in _spread(WRITERS, JOB_RELATIONS)],
)
def test_sync_records_naming_another_organisations_objects_are_refused_alone(world, relation, role):
    """The batch answers 200; each record naming another organisation's job, drop, equipment or
    checklist version is refused alone, in the words a missing id gets, and changes nothing;
    the same records naming the caller's own objects, in the same batch, are applied."""
    caller_name, target_name = JOB_RELATIONS[relation]
    caller, target = world[caller_name], world[target_name]
    own = caller.job(JobState.CLEARED)
    theirs_records = _sync_records_of(target, caller, own)
    missing_records = _sync_records_of(ABSENT, caller, own)
    ours_records = _sync_records_of(caller, caller, own)
    their_job = Job.objects.get(pk=theirs_records[0]["data"]["job"])
    client = client_for(caller.people[role])
    before = snapshot()

    theirs = client.post(reverse("sync"), {"records": theirs_records}, format="json")
    assert theirs.status_code == 200, theirs.content
    assert theirs.json()["results"] == [
        {"client_uuid": record["client_uuid"], "status": "rejected", "errors": errors}
        for record, errors in zip(theirs_records, SYNC_REFUSALS, strict=True)
    ]
    assert their_job.pk not in [j["id"] for j in theirs.json()["jobs"]]
    missing = client.post(reverse("sync"), {"records": missing_records}, format="json")
    assert missing.status_code == 200, missing.content
    assert missing.json()["results"] == [
        {"client_uuid": record["client_uuid"], "status": "rejected", "errors": errors}
        for record, errors in zip(missing_records, SYNC_REFUSALS, strict=True)
    ]
    assert snapshot() == before

    # The same refusals mixed with the caller's own records: only theirs are refused.
    for record in theirs_records:
        record["client_uuid"] = str(uuid.uuid4())
    mixed = [r for pair in zip(ours_records, theirs_records, strict=True) for r in pair]
    their_before = (row(their_job), _job_rows(their_job))
    response = client.post(reverse("sync"), {"records": mixed}, format="json")
    assert response.status_code == 200, response.content
    results = response.json()["results"]
    assert [r["status"] for r in results[0::2]] == ["applied"] * len(ours_records), results
    assert [{"status": r["status"], "errors": r["errors"]} for r in results[1::2]] == [
        {"status": "rejected", "errors": errors} for errors in SYNC_REFUSALS
    ]
    assert (row(their_job), _job_rows(their_job)) == their_before
    assert Job.objects.get(pk=own.pk).state == JobState.CLOSED


NOT_SIGNED_IN = {
    "detail": "Authentication credentials were not provided.",
    "code": "not_authenticated",
}
NO_ORGANISATION = {"detail": "You need to sign in as a member of an organisation."}


def _every_write(world: World) -> list[tuple[str, str, Any, str]]:
    """(method, url, body, format) of every write above, naming the far crew's objects (the
    tower's owner's for the building's) with bodies good for their own people."""
    far, owner = world["far"], world["owner"]
    writes = [(a.method, a.url(far, far), a.body(far), "json") for a in JOB_ACTIONS]
    writes += [(a.method, a.url(owner, owner), a.body(owner), "json") for a in SITE_ACTIONS]
    for naming in NAMINGS:
        tenant = far if naming.relations is JOB_RELATIONS else owner
        writes.append(("post", naming.url(tenant), naming.body(tenant, tenant), naming.fmt))
    records = _sync_records_of(far, far, far.job(JobState.CLEARED))
    return [*writes, ("post", reverse("sync"), {"records": records}, "json")]


@pytest.mark.parametrize(
    ("who", "answer"),
    [
        pytest.param("nobody", NOT_SIGNED_IN, id="not-signed-in"),
        pytest.param("no-organisation", NO_ORGANISATION, id="no-organisation"),
    ],
)
def test_a_caller_not_signed_in_or_of_no_organisation_writes_nothing(
    world, api, who, answer, settings, tmp_path
):
    """403 for each, whatever object is named: the permission class refuses before any lookup.
    Not 401: session sign-in comes first and asks for no WWW-Authenticate challenge; the code
    tells the phone to sign in again."""
    settings.MEDIA_ROOT = tmp_path
    client = api if who == "nobody" else client_for(UserFactory(organisation=None, role="admin"))
    writes = _every_write(world)
    before = snapshot()
    for method, url, body, fmt in writes:
        response = send(client, method, url, body, fmt)
        assert response.status_code == 403, (url, response.content)
        assert response.json() == answer, url
    assert snapshot() == before
