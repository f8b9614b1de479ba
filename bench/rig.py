"""Bench data: crews with a job, a drop and its kit, and 40-item pre-start checklists.

All numbers here are invented bench data, not sourced limits.
"""

import datetime as dt
import uuid
from dataclasses import dataclass

from django.contrib.auth.hashers import make_password
from django.utils import timezone
from rest_framework.authtoken.models import Token

from checklists.models import ChecklistVersion
from checklists.services import ensure_published
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
from compliance.records.signing import create_self_signed

PASSWORD = "bench climbing 2026"
CREWS_PER_ORGANISATION = 10
SHEETS_PER_BATCH = 8
ITEMS_PER_SHEET = 40

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
}
THRESHOLDS = {
    "min_anchor_capacity_kn": {"value": 12.0, "unit": "kN", "source": "bench data"},
    "max_wind_ms": {"value": 14.0, "unit": "m/s", "source": "bench data"},
    "vacuum_safety_factor": {"value": 2.0, "unit": "", "source": "bench data"},
    "anchor_safety_factor": {"value": 2.0, "unit": "", "source": "bench data"},
    "line_safety_factor": {"value": 2.0, "unit": "", "source": "bench data"},
    "vacuum_required_hold_s": {"value": 300, "unit": "s", "source": "bench data"},
    "gust_factor": {"value": 1.5, "unit": "", "source": "bench data"},
    "certification_interval_days": {"value": 365, "unit": "d", "source": "bench data"},
    "suspended_mass_limit_kg": {"value": 250, "unit": "kg", "source": "bench data"},
}
# (checklist key, subject kind): 8 requirements per one-drop job, so 8 sheets a day
CHECKLISTS = [
    ("bench-anchor", "anchor"),
    ("bench-robot", "robot"),
    ("bench-vacuum", "robot"),
    ("bench-tether", "tether"),
    ("bench-line", "safety_line"),
    ("bench-hose", "hose"),
    ("bench-site", "site"),
]
READING_UNITS = ["kPa", "m/s", "kN", "mm", "kg"]
DECAY = [[30.0 * i, 70.0 - 0.02 * 30.0 * i] for i in range(11)]  # 5 min, 0.02 kPa/s leak


def forty_items(kind: str) -> list[dict]:
    """22 ticks, 15 readings with limits, 2 timed series and a decay calculation."""
    items: list[dict] = []
    for i in range(22):
        items.append(
            {
                "key": f"tick_{i:02d}",
                "kind": "tick",
                "label": f"{kind} visual check {i}",
                "reason": "bench data",
                "blocking": i % 3 != 2,
            }
        )
    for i in range(15):
        unit = READING_UNITS[i % len(READING_UNITS)]
        limits: dict = {"min": {"value": 0}, "max": {"value": 5000}}
        if unit == "m/s":
            limits = {"max": {"profile": "max_wind_ms"}}
        items.append(
            {
                "key": f"reading_{i:02d}",
                "kind": "reading",
                "label": f"{kind} reading {i}",
                "reason": "bench data",
                "blocking": True,
                "unit": unit,
                "limits": limits,
            }
        )
    for i in range(2):
        items.append(
            {
                "key": f"decay_{i}",
                "kind": "series",
                "label": f"vacuum with the pump isolated, run {i}",
                "reason": "bench data",
                "blocking": True,
                "unit": "kPa",
                "min_samples": 3,
                "interval_s": 30,
            }
        )
    items.append(
        {
            "key": "decay_test",
            "kind": "calc",
            "label": "time the grip lasts with the pump isolated",
            "reason": "bench data",
            "blocking": True,
            "calc": "vacuum-decay",
            "inputs": {
                "samples": {"reading": "decay_0"},
                "min_vacuum_kpa": {"value": 40.0},
                "required_hold_s": {"profile": "vacuum_required_hold_s"},
                "interval_s": {"value": 30},
                "interval_tolerance_s": {"value": 10},
                "min_duration_s": {"value": 60},
                "max_extrapolation": {"value": 10},
                "min_r2": {"value": 0.8},
            },
        }
    )
    assert len(items) == ITEMS_PER_SHEET
    return items


def entries_for(items: list[dict]) -> dict:
    entries: dict = {}
    for item in items:
        if item["kind"] == "tick":
            entries[item["key"]] = {"value": "pass"}
        elif item["kind"] == "reading":
            value = 6.5 if item["unit"] == "m/s" else 42.0
            entries[item["key"]] = {"value": value, "unit": item["unit"]}
        elif item["kind"] == "series":
            entries[item["key"]] = {"value": DECAY}
    return entries


def checklists() -> dict[str, ChecklistVersion]:
    """The bench's default checklists, published once (idempotent)."""
    return {
        key: ensure_published(
            key=key,
            title=key.replace("-", " ").title(),
            applies_to=kind,
            description="bench data",
            items=forty_items(kind),
        )
        for key, kind in CHECKLISTS
    }


def profile() -> JurisdictionProfile:
    found, _ = JurisdictionProfile.objects.get_or_create(
        key="bench-profile",
        defaults={
            "name": "Bench profile (invented numbers)",
            "thresholds": THRESHOLDS,
            "cautions": "Bench data only.",
            "content_hash": "0" * 64,
        },
    )
    return found


@dataclass(frozen=True)
class Crew:
    username: str
    user_id: int
    job_id: int
    records: list[dict]


def make_crews(count: int, tag: str, day: dt.date | None = None) -> list[Crew]:
    """``count`` crews, each with its own site, one drop and its kit, and today's job."""
    day = day or timezone.localdate()
    versions = checklists()
    prof = profile()
    password = make_password(PASSWORD)
    crews: list[Crew] = []
    for start in range(0, count, CREWS_PER_ORGANISATION):
        org = Organisation.objects.create(name=f"Bench {tag} {start // CREWS_PER_ORGANISATION}")
        # As in use: an organisation that signs its days has a signing key, so each anchor
        # pre-use sheet is copied into the log book as a signed entry.
        create_self_signed(organisation=org)
        boss = User.objects.create(
            username=f"{tag}-boss-{start}", password=password, organisation=org, role="supervisor"
        )
        for n in range(start, min(start + CREWS_PER_ORGANISATION, count)):
            site = Site.objects.create(
                organisation=org, name=f"Tower {n}", height_m=120.0, profile=prof
            )
            anchors = Anchor.objects.bulk_create(
                [Anchor(site=site, label=f"A{n}-{i}") for i in range(2)]
            )
            AnchorCertification.objects.bulk_create(
                [
                    AnchorCertification(
                        anchor=a,
                        certifier="Bench Certifier",
                        rated_capacity_kn=22.2,
                        certified_on=day - dt.timedelta(days=100),
                        valid_until=day + dt.timedelta(days=265),
                    )
                    for a in anchors
                ]
            )
            kit = {
                kind: Equipment.objects.create(
                    organisation=org, kind=kind, label=f"{kind}-{n}", ratings=RATINGS[kind]
                )
                for kind in RATINGS
            }
            job = Job.objects.create(organisation=org, site=site, date=day, supervisor=boss)
            Drop.objects.create(
                job=job,
                label="D1",
                anchor=anchors[0],
                safety_anchor=anchors[1],
                length_m=100.0,
                **kit,
            )
            user = User.objects.create(
                username=f"{tag}-crew-{n}", password=password, organisation=org, role="operator"
            )
            job.crew.add(user)
            crews.append(
                Crew(user.username, user.pk, job.pk, day_batch(job, versions, anchors, kit))
            )
    return crews


def day_batch(job: Job, versions: dict, anchors: list[Anchor], kit: dict) -> list[dict]:
    """The phone's batch for the day: one sheet per requirement, 8 in all."""
    now = timezone.now().isoformat()
    records = []
    for key, kind in CHECKLISTS:
        subjects = anchors if kind == "anchor" else [None]
        for anchor in subjects:
            data = {
                "job": job.pk,
                "version": versions[key].pk,
                "entries": entries_for(versions[key].items),
                "device_time": now,
            }
            if anchor is not None:
                data["anchor"] = anchor.pk
            elif kind != "site":
                data["equipment"] = kit[kind].pk
            records.append({"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": data})
    assert len(records) == SHEETS_PER_BATCH
    return records


def token_for(user_id: int) -> str:
    return Token.objects.get_or_create(user_id=user_id)[0].key
