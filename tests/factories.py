"""factory_boy factories for the registers; defaults describe a small, valid rig."""

import datetime as dt

import factory
from django.utils import timezone

from checklists.models import Checklist, ChecklistVersion
from checklists.schema import content_hash
from compliance.models import (
    Anchor,
    AnchorCertification,
    Drop,
    Equipment,
    Job,
    JurisdictionProfile,
    Organisation,
    Site,
    User,
)

PASSWORD = "correct horse battery"

RATINGS = {
    "robot": {
        "mass_kg": 60.0,
        "cup_diameter_m": 0.12,
        "cups_engaged": 4,
        "friction": 0.6,
        "projected_area_m2": 0.5,
        "drag_coefficient": 1.2,
        "max_wind_ms": 12.0,
        "nozzle_min_kpa": 150.0,
    },
    "tether": {"mbs_kn": 30.0, "wll_kn": 3.0, "ea_kn": 600.0, "kg_per_m": 0.08, "length_m": 200.0},
    "safety_line": {"mbs_kn": 30.0, "ea_kn": 600.0, "kg_per_m": 0.08, "length_m": 200.0},
    "hose": {
        "id_mm": 12.0,
        "rating_kpa": 2500.0,
        "kg_per_m": 0.15,
        "length_m": 200.0,
        "roughness_mm": 0.0015,
    },
    "estop": {"location": "remote"},
}


class OrganisationFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Organisation

    name = factory.Sequence(lambda n: f"Contractor {n}")


class UserFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = User
        skip_postgeneration_save = True

    username = factory.Sequence(lambda n: f"person{n}")
    first_name = "Sam"
    last_name = factory.Sequence(lambda n: f"Person{n}")
    organisation = factory.SubFactory(OrganisationFactory)
    role = "operator"
    password = factory.PostGenerationMethodCall("set_password", PASSWORD)

    @factory.post_generation
    def _save(obj, create, extracted, **kwargs):
        if create:
            obj.save()


class ProfileFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = JurisdictionProfile
        django_get_or_create = ("key",)

    key = "test-profile"
    name = "Test profile"
    thresholds = {
        "min_anchor_capacity_kn": {"value": 12.0, "unit": "kN", "source": "test"},
        "max_wind_ms": {"value": 14.0, "unit": "m/s", "source": "test"},
        "vacuum_safety_factor": {"value": 2.0, "unit": "", "source": "test"},
        "anchor_safety_factor": {"value": 2.0, "unit": "", "source": "test"},
        "line_safety_factor": {"value": 2.0, "unit": "", "source": "test"},
        "vacuum_required_hold_s": {"value": 300, "unit": "s", "source": "test"},
        "gust_factor": {"value": 1.5, "unit": "", "source": "test"},
        "certification_interval_days": {"value": 365, "unit": "d", "source": "test"},
        "suspended_mass_limit_kg": {"value": 250, "unit": "kg", "source": "test"},
    }
    cautions = "Test cautions: defer to the maker's manual and a licensed engineer."
    content_hash = "0" * 64


class SiteFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Site

    organisation = factory.SubFactory(OrganisationFactory)
    name = factory.Sequence(lambda n: f"Tower {n}")
    height_m = 120.0
    profile = factory.SubFactory(ProfileFactory)


class AnchorFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Anchor

    site = factory.SubFactory(SiteFactory)
    label = factory.Sequence(lambda n: f"A{n}")


class CertificationFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = AnchorCertification

    anchor = factory.SubFactory(AnchorFactory)
    certifier = "Pat Engineer"
    rated_capacity_kn = 22.2
    certified_on = factory.LazyFunction(lambda: timezone.localdate() - dt.timedelta(days=100))
    valid_until = factory.LazyFunction(lambda: timezone.localdate() + dt.timedelta(days=265))


class EquipmentFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Equipment

    organisation = factory.SubFactory(OrganisationFactory)
    kind = "robot"
    label = factory.Sequence(lambda n: f"EQ-{n}")
    ratings = factory.LazyAttribute(lambda o: dict(RATINGS[o.kind]))


class JobFactory(factory.django.DjangoModelFactory):
    class Meta:
        model = Job

    site = factory.SubFactory(SiteFactory)
    organisation = factory.LazyAttribute(lambda o: o.site.organisation)
    date = factory.LazyFunction(timezone.localdate)
    supervisor = factory.LazyAttribute(
        lambda o: UserFactory(organisation=o.site.organisation, role="supervisor")
    )


def make_drop(job: Job, label: str = "D1", certified: bool = True) -> Drop:
    """A drop with its own robot, lines, hose and an anchor pair on the job's site."""
    org = job.organisation
    anchors = [AnchorFactory(site=job.site) for _ in range(2)]
    if certified:
        for anchor in anchors:
            CertificationFactory(anchor=anchor)
    kit = {
        kind: EquipmentFactory(organisation=org, kind=kind)
        for kind in ("robot", "tether", "safety_line", "hose")
    }
    return Drop.objects.create(
        job=job, label=label, anchor=anchors[0], safety_anchor=anchors[1], length_m=100.0, **kit
    )


def published_checklist(
    key: str, applies_to: str, items: list[dict], organisation=None
) -> ChecklistVersion:
    checklist = Checklist.objects.create(
        key=key,
        title=key.replace("-", " ").title(),
        applies_to=applies_to,
        organisation=organisation,
    )
    version = ChecklistVersion(
        checklist=checklist, number=1, items=items, status="published", published_at=timezone.now()
    )
    version.content_hash = content_hash(version.hashed_content())
    version.save()
    return version


def tick(key: str, blocking: bool = True) -> dict:
    return {
        "key": key,
        "kind": "tick",
        "label": key.replace("_", " "),
        "reason": "test",
        "blocking": blocking,
    }


def reading(key: str, unit: str, limits: dict | None = None, blocking: bool = True) -> dict:
    item = {
        "key": key,
        "kind": "reading",
        "label": key.replace("_", " "),
        "reason": "test",
        "blocking": blocking,
        "unit": unit,
    }
    if limits:
        item["limits"] = limits
    return item


def drop_body(drop, **overrides):
    """A request body planning a drop on the same kit and anchors as `drop`."""
    body = {
        "label": "D9",
        "robot": drop.robot_id,
        "anchor": drop.anchor_id,
        "safety_anchor": drop.safety_anchor_id,
        "tether": drop.tether_id,
        "safety_line": drop.safety_line_id,
        "hose": drop.hose_id,
        "length_m": 80.0,
    }
    return {**body, **overrides}
