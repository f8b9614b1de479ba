"""Organisations side by side, for the tenancy tests.

A building owner whose tower two contractor crews work under grants, and a contractor far
away at its own depot. Each organisation builds, on demand, the object a request names in the
state where that request would succeed (a cleared job to start, a closed one to sign...), so a
test sends one body to another organisation's object, to an id that does not exist and to the
caller's own object: the first two must answer alike, the last must succeed, and the refused
requests must change nothing anywhere in the database.
"""

import datetime as dt
import io
from dataclasses import dataclass, field
from typing import Any

from django.apps import apps
from django.db.models import Model
from django.utils import timezone
from PIL import Image
from rest_framework.response import Response
from rest_framework.test import APIClient

from checklists.models import Checklist, ChecklistVersion, CheckSheet
from checklists.services import record_sheet
from compliance.anchor_log.services import record_entry
from compliance.jobs.selectors import job_requirements
from compliance.jobs.services import close_job, start_job
from compliance.models import (
    Anchor,
    AnchorLogEntry,
    DailyRecord,
    Equipment,
    Job,
    JobState,
    Organisation,
    Site,
    SiteGrant,
)
from compliance.records.services import sign_daily_record
from compliance.records.signing import create_self_signed
from compliance.registers.services import end_grant
from tests.conftest import PASSING, fill_all
from tests.factories import (
    PASSWORD,
    AnchorFactory,
    CertificationFactory,
    EquipmentFactory,
    JobFactory,
    OrganisationFactory,
    SiteFactory,
    UserFactory,
    make_drop,
    published_checklist,
    tick,
)

ROLES = ("operator", "supervisor", "auditor", "admin", "property_manager")
MISSING = 987_654_321
"""An id no row has: another organisation's object must answer exactly as this one does."""

TODAY = timezone.localdate


class Tenant:
    """One organisation, its people (one of each role) and the building it works at.

    Every builder makes a fresh object, so the caller's own object and the other's start alike;
    only the organisation's own checklist is made once (its versions are made fresh).
    """

    def __init__(self, org: Organisation, site: Site, checklists: dict[str, ChecklistVersion]):
        self.org = org
        self.site = site
        self.checklists = checklists
        self.people = {role: UserFactory(organisation=org, role=role) for role in ROLES}
        self._signs = False
        self._checklist: Checklist | None = None

    def __repr__(self) -> str:
        return f"Tenant({self.org.name})"

    def signing(self) -> None:
        """The organisation's signing certificate, made once and only when a case signs."""
        if not self._signs:
            create_self_signed(organisation=self.org)
            self._signs = True

    def job(self, state: str = JobState.PLANNED) -> Job:
        """A job of today with one drop, brought to the state through the services."""
        operator = self.people["operator"]
        job = JobFactory(
            site=self.site, organisation=self.org, supervisor=self.people["supervisor"]
        )
        make_drop(job)
        if state != JobState.PLANNED:
            fill_all(job, self.checklists, operator)
            # The organisation's own checklist, once published, is needed too: all ticks pass.
            for requirement in job_requirements(job):
                if not requirement.satisfied:
                    version = ChecklistVersion.objects.get(pk=requirement.version_id)
                    entries = {item["key"]: {"value": "pass"} for item in version.items}
                    record_sheet(
                        job=job,
                        version=version,
                        by=operator,
                        entries=entries,
                        anchor=requirement.subject.anchor,
                        equipment=requirement.subject.equipment,
                    )
        if state in (JobState.WORKING, JobState.CLOSED):
            start_job(job=job, by=operator)
        if state == JobState.CLOSED:
            close_job(job=job, by=operator)
        job.refresh_from_db()
        assert job.state == state, (job.state, state)
        return job

    def sheet(self) -> CheckSheet:
        job = self.job()
        sheet, _ = record_sheet(
            job=job,
            version=self.checklists["site"],
            by=self.people["operator"],
            entries=PASSING["site"],
        )
        return sheet

    def record(self) -> DailyRecord:
        """The signed record of a closed day."""
        self.signing()
        return sign_daily_record(
            job=self.job(JobState.CLOSED),
            by=self.people["supervisor"],
            password=PASSWORD,
            meaning="reviewed_safe",
        )

    def anchor(self) -> Anchor:
        """A certified anchor on the building the organisation works at."""
        anchor = AnchorFactory(site=self.site)
        CertificationFactory(anchor=anchor)
        return anchor

    def equipment(self, kind: str = "robot") -> Equipment:
        return EquipmentFactory(organisation=self.org, kind=kind)

    def log_entry(self) -> AnchorLogEntry:
        """A signed entry of the building's log book (only its owner signs one)."""
        self.signing()
        return record_entry(
            anchor=self.anchor(),
            by=self.people["supervisor"],
            password=PASSWORD,
            kind="periodic_inspection",
            details="Yearly inspection.",
            performed_on=TODAY(),
            result="pass",
        )

    def grant(self) -> SiteGrant:
        """A live grant of the organisation's own building to a crew of its choosing."""
        return SiteGrant.objects.create(
            site=self.site,
            contractor=OrganisationFactory(kind=Organisation.Kind.CONTRACTOR),
            granted_by=self.people["supervisor"],
            starts_on=TODAY() - dt.timedelta(days=1),
            ends_on=TODAY() + dt.timedelta(days=30),
        )

    def checklist(self) -> Checklist:
        """The organisation's own site walk, with version 1 published."""
        if self._checklist is None:
            key = f"walk-{self.org.pk}"
            self._checklist = published_checklist(
                key, "site", [tick("zone_closed")], self.org
            ).checklist
        return self._checklist

    def published(self) -> ChecklistVersion:
        return self.checklist().versions.get(number=1)

    def draft(self) -> ChecklistVersion:
        """A draft after the published version 1."""
        checklist = self.checklist()
        return ChecklistVersion.objects.create(
            checklist=checklist,
            number=checklist.versions.count() + 1,
            items=[tick("zone_closed"), tick("barriers")],
        )


@dataclass(frozen=True)
class Missing:
    """An unsaved stand-in that has only ids, none of which any row has."""

    pk: int = MISSING
    id: int = MISSING


class Absent:
    """The builders of a Tenant, each naming an object that does not exist."""

    site = Missing()
    org = Missing()

    def __repr__(self) -> str:
        return "Absent()"

    def signing(self) -> None:
        return None

    def job(self, state: str = JobState.PLANNED) -> Missing:
        return Missing()

    def sheet(self) -> Missing:
        return Missing()

    def record(self) -> Missing:
        return Missing()

    def anchor(self) -> Missing:
        return Missing()

    def equipment(self, kind: str = "robot") -> Missing:
        return Missing()

    def log_entry(self) -> Missing:
        return Missing()

    def grant(self) -> Missing:
        return Missing()

    def checklist(self) -> Missing:
        return Missing()

    def published(self) -> Missing:
        return Missing()

    def draft(self) -> Missing:
        return Missing()


ABSENT = Absent()
Side = Tenant | Absent


@dataclass
class World:
    """The tower's owner, the two crews working it (north, south), a crew far away (far) and one
    whose grant at the tower was ended (former)."""

    tenants: dict[str, Tenant] = field(default_factory=dict)

    def __getitem__(self, name: str) -> Tenant:
        return self.tenants[name]


def build_world(checklists: dict[str, ChecklistVersion]) -> World:
    """The tower's owner; two crews holding live grants at the tower; a crew far away at its own
    depot; and a crew at its own depot whose grant at the tower the owner has ended."""
    owner = OrganisationFactory(name="Harbour Tower owners", kind=Organisation.Kind.OWNER)
    tower = SiteFactory(organisation=owner, name="Harbour Tower")
    world = World({"owner": Tenant(owner, tower, checklists)})
    for name in ("north", "south"):
        crew = OrganisationFactory(name=f"{name.title()} crew", kind=Organisation.Kind.CONTRACTOR)
        SiteGrant.objects.create(
            site=tower,
            contractor=crew,
            granted_by=world["owner"].people["property_manager"],
            starts_on=TODAY() - dt.timedelta(days=10),
            ends_on=TODAY() + dt.timedelta(days=30),
        )
        world.tenants[name] = Tenant(crew, tower, checklists)
    for name in ("far", "former"):
        crew = OrganisationFactory(name=f"{name.title()} crew", kind=Organisation.Kind.CONTRACTOR)
        depot = SiteFactory(organisation=crew, name=f"{name.title()} depot")
        world.tenants[name] = Tenant(crew, depot, checklists)
    manager = world["owner"].people["property_manager"]
    grant = SiteGrant.objects.create(
        site=tower,
        contractor=world["former"].org,
        granted_by=manager,
        starts_on=TODAY() - dt.timedelta(days=10),
        ends_on=TODAY() + dt.timedelta(days=30),
    )
    end_grant(grant=grant, by=manager, reason="Contract ended.")
    return world


JOB_RELATIONS = {
    "stranger": ("north", "far"),
    "neighbour": ("north", "south"),
    "building_owner": ("owner", "north"),
}
"""(caller, target) pairs for what an organisation keeps to itself: jobs, their sheets,
records and photos, equipment, checklists. A crew at the same building, and the building's
owner, see none of it."""

SITE_RELATIONS = {
    "crew_to_owner": ("far", "owner"),
    "owner_to_crew": ("owner", "far"),
    "former_grantee_to_owner": ("former", "owner"),
}
"""(caller, target) pairs for what belongs to a building (anchors, certifications, log book,
grants), between organisations with no live grant between them (the former crew's was ended);
each owns a building, so each has an own object to prove the body good on."""


def snapshot() -> dict[str, list[dict[str, Any]]]:
    """Every row of every model of the two apps, as stored: a refused request changes none."""
    return {
        model._meta.label: list(model.objects.order_by("pk").values())
        for app in ("compliance", "checklists")
        for model in apps.get_app_config(app).get_models()
    }


def send(client: APIClient, method: str, url: str, body: Any = None, fmt: str = "json") -> Response:
    """One request; a body only where the method carries one."""
    if method == "get":
        return client.get(url, body)
    return getattr(client, method)(url, body, format=fmt)


def png() -> io.BytesIO:
    """A small PNG, fresh for each upload (an upload reads its file to the end)."""
    data = io.BytesIO()
    Image.new("RGB", (8, 8)).save(data, format="PNG")
    data.seek(0)
    data.name = "roof.png"
    return data


def row(obj: Model) -> dict[str, Any]:
    """The object's stored fields, read again."""
    return type(obj).objects.filter(pk=obj.pk).values().get()
