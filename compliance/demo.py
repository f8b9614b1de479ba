"""Loading the invented demo scenario (fixtures/demo/scenario.json) through the real services."""

import datetime as dt
import itertools
import json
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from django.conf import settings
from django.db import transaction
from django.utils import timezone

from checklists.selectors import current_versions
from checklists.services import record_sheet
from compliance import clock
from compliance.anchor_log.services import record_entry
from compliance.jobs import services
from compliance.jobs.selectors import job_requirements
from compliance.models import (
    Anchor,
    Drop,
    Equipment,
    Job,
    JurisdictionProfile,
    Organisation,
    User,
)
from compliance.records.services import sign_daily_record
from compliance.records.signing import create_self_signed
from compliance.registers import services as register_services
from compliance.registers.profiles import load_defaults


def scenario_path() -> Path:
    return Path(settings.PARAPET_FIXTURES_DIR) / "demo" / "scenario.json"


def _entries(version_items: list[dict[str, Any]], readings: dict[str, Any]) -> dict[str, Any]:
    entries: dict[str, Any] = {}
    for item in version_items:
        key, kind = item["key"], item["kind"]
        if kind == "tick":
            entries[key] = {"value": "pass"}
        elif kind in ("reading", "series"):
            entries[key] = {"value": readings[key], "unit": item["unit"]}
    return entries


def _fill(
    job: Job,
    by: User,
    readings: dict[str, dict[str, Any]],
    only: str | None = None,
    equipment: Equipment | None = None,
    extra: dict[str, Any] | None = None,
    remarks: str = "",
    at: dt.time | None = None,
) -> None:
    """Fill the job's checks with the scenario's readings; on a past day, as filled on the roof
    from ``at`` on, two minutes apart (a sheet with no time of its own reads as filled when
    the demo was loaded, days after its day)."""
    made = _on_the_roof(job, at)
    versions = {
        v.checklist.key: v for vs in current_versions(job.organisation_id).values() for v in vs
    }
    for req in job_requirements(job):
        if only and (req.checklist_key != only or req.subject.equipment != equipment):
            continue
        version = versions[req.checklist_key]
        values = {**readings.get(req.checklist_key, {}), **((extra or {}) if only else {})}
        record_sheet(
            job=job,
            version=version,
            by=by,
            entries=_entries(version.items, values),
            anchor=req.subject.anchor,
            equipment=req.subject.equipment,
            remarks=remarks,
            device_time=next(made, None),
            phone_clock_offset_s=0,
        )


def _on_the_roof(job: Job, at: dt.time | None) -> Iterator[dt.datetime]:
    """Times on the job's day from ``at``, two minutes apart; none for today's job (it is
    filled as the demo loads) or with no time given."""
    if at is None or job.date >= timezone.localdate():
        return iter(())
    start = timezone.make_aware(dt.datetime.combine(job.date, at))
    return (start + dt.timedelta(minutes=2 * n) for n in itertools.count())


@transaction.atomic
def load_demo(path: Path | None = None) -> Organisation:
    """Create the demo organisation and its history; a second call changes nothing."""
    data = json.loads((path or scenario_path()).read_text(encoding="utf-8"))
    existing = Organisation.objects.filter(name=data["organisation"]).first()
    if existing is not None:
        return existing
    load_defaults()
    org = Organisation.objects.create(name=data["organisation"])
    people: dict[str, User] = {}
    for person in data["people"]:
        user = User(
            username=person["username"],
            first_name=person["first_name"],
            last_name=person["last_name"],
            role=person["role"],
            organisation=org,
            is_staff=person.get("superuser", False),
            is_superuser=person.get("superuser", False),
        )
        user.set_password(data["password"])
        user.save()
        people[user.username] = user
    create_self_signed(organisation=org)
    site_data = data["site"]
    owner_data = data["owner"]
    owner = Organisation.objects.create(name=owner_data["organisation"], kind="owner")
    manager = User(
        username=owner_data["username"],
        first_name=owner_data["first_name"],
        last_name=owner_data["last_name"],
        role="property_manager",
        organisation=owner,
    )
    manager.set_password(data["password"])
    manager.save()
    create_self_signed(organisation=owner)
    site = register_services.create_site(
        by=manager,
        name=site_data["name"],
        address=site_data["address"],
        height_m=site_data["height_m"],
        storeys=site_data["storeys"],
        terrain=site_data["terrain"],
        profile=JurisdictionProfile.objects.get(key=site_data["profile"]),
        roof_outline=site_data["roof_outline"],
    )
    today = timezone.localdate()
    register_services.give_grant(
        site=site,
        contractor=org,
        by=manager,
        starts_on=today - dt.timedelta(days=30),
        ends_on=today + dt.timedelta(days=335),
    )
    anchors: dict[str, Anchor] = {}
    for a in data["anchors"]:
        anchor = register_services.add_anchor(
            site=site, by=manager, label=a["label"], x_m=a["x_m"], y_m=a["y_m"]
        )
        age = a.get("certified_days_ago", 420 if a.get("expired") else 120)
        certified_on = today - dt.timedelta(days=age)
        register_services.record_certification(
            anchor=anchor,
            by=manager,
            certifier=data["certifier"]["name"],
            certifier_company=data["certifier"]["company"],
            rated_capacity_kn=a["capacity_kn"],
            certified_on=certified_on,
            valid_until=certified_on + dt.timedelta(days=365),
        )
        anchors[a["label"]] = anchor
        record_entry(
            anchor=anchor,
            by=manager,
            password=data["password"],
            kind="periodic_inspection",
            result="pass",
            performed_on=certified_on,
            performed_by=data["certifier"]["name"],
            performed_by_company=data["certifier"]["company"],
            details="Annual inspection and proof load; tag renewed.",
        )
    # The owner's log book before today: tests, repairs, a removal from service and the return.
    for entry in data.get("owner_log", []):
        record_entry(
            anchor=anchors[entry["anchor"]],
            by=manager,
            password=data["password"],
            kind=entry["kind"],
            result=entry["result"],
            performed_on=today - dt.timedelta(days=entry["days_ago"]),
            performed_by=data["certifier"]["name"],
            performed_by_company=data["certifier"]["company"],
            details=entry["details"],
        )
    kit: dict[str, Equipment] = {}
    for e in data["equipment"]:
        kit[e["label"]] = register_services.create_equipment(
            by=people["rhea"],
            kind=e["kind"],
            label=e["label"],
            serial=e.get("serial", ""),
            ratings=e["ratings"],
            next_inspection_due=today + dt.timedelta(days=90),
        )
    drops = {d["label"]: d for d in data["drops"]}
    supervisor, operator = people["rhea"], people["tomas"]
    for day in data["days"]:
        date = today + dt.timedelta(days=day["offset"])
        # A past day goes through the same services and rules as a phone's, as on its day.
        with clock.replaying(min(date, today)):
            job = services.create_job(
                site=site,
                date=date,
                supervisor=supervisor,
                by=supervisor,
                notes=day.get("remarks", ""),
            )
            job.crew.set([operator, people["ana"]])
            for label in day["drops"]:
                d = drops[label]
                services.add_drop(
                    job=job,
                    by=supervisor,
                    label=label,
                    robot=kit[d["robot"]],
                    anchor=anchors[d["anchor"]],
                    safety_anchor=anchors[d["safety_anchor"]],
                    tether=kit[d["tether"]],
                    safety_line=kit[d["safety_line"]],
                    hose=kit[d["hose"]],
                    length_m=d["length_m"],
                )
            if not day.get("fill", True):
                continue
            _fill(job, operator, data["readings"], at=dt.time(7, 0))
            services.start_job(job=job, by=operator)
            failure = day.get("failure")
            if failure:
                robot = kit[failure["robot"]]
                _fill(
                    job,
                    operator,
                    data["readings"],
                    only=failure["checklist"],
                    equipment=robot,
                    extra=failure["readings"],
                    remarks=failure["remarks"],
                    at=dt.time(10, 30),
                )
                _fill(
                    job,
                    operator,
                    data["readings"],
                    only=failure["checklist"],
                    equipment=robot,
                    remarks=day["repair"]["remarks"],
                    at=dt.time(11, 15),
                )
                services.start_job(job=job, by=operator)
            for label in day["done"]:
                services.log_drop(
                    drop=Drop.objects.get(job=job, label=label),
                    by=operator,
                    note="Drop cleaned top to bottom.",
                )
            services.close_job(job=job, by=supervisor)
            if not day.get("sign", True):
                continue  # left for the supervisor to sign at the desk
            sign_daily_record(
                job=job,
                by=supervisor,
                password=data["password"],
                meaning="reviewed_safe",
                remarks=day.get("remarks", ""),
            )
    return org


def demo_logins() -> list[tuple[str, str, str]]:
    data = json.loads(scenario_path().read_text(encoding="utf-8"))
    people = [(p["username"], data["password"], p["role"]) for p in data["people"]]
    return [*people, (data["owner"]["username"], data["password"], "property manager (owner)")]
