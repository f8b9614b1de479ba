"""Loading jurisdiction profiles and default checklists from fixtures/."""

import hashlib
import json
from pathlib import Path
from typing import Any

from django.conf import settings
from django.db import transaction

from checklists.services import ensure_published
from compliance.jobs.holds import jobs_under_profile, reread_readiness
from compliance.models import JurisdictionProfile, ProfileRevision


def _read(path: Path) -> dict[str, Any]:
    return json.loads(path.read_text(encoding="utf-8"))


def load_profiles(directory: Path | None = None) -> list[JurisdictionProfile]:
    """Create or refresh each profile from its JSON file; every threshold must name a source."""
    directory = directory or Path(settings.PARAPET_FIXTURES_DIR) / "profiles"
    profiles = []
    for path in sorted(directory.glob("*.json")):
        data = _read(path)
        for key, threshold in data["thresholds"].items():
            if not str(threshold.get("source", "")).strip():
                raise ValueError(f"{path.name}: threshold {key} names no source.")
            float(threshold["value"])
        digest = hashlib.sha256(
            json.dumps(data, sort_keys=True, separators=(",", ":")).encode()
        ).hexdigest()
        with transaction.atomic():
            before = (
                JurisdictionProfile.objects.filter(key=data["key"])
                .values_list("thresholds", flat=True)
                .first()
            )
            profile, _ = JurisdictionProfile.objects.update_or_create(
                key=data["key"],
                defaults={
                    "name": data["name"],
                    "thresholds": data["thresholds"],
                    "cautions": data["cautions"],
                    "content_hash": digest,
                },
            )
            if not profile.revisions.filter(content_hash=digest).exists():
                last = profile.revisions.order_by("-number").first()
                ProfileRevision.objects.create(
                    profile=profile,
                    number=1 if last is None else last.number + 1,
                    name=data["name"],
                    thresholds=data["thresholds"],
                    cautions=data["cautions"],
                    content_hash=digest,
                )
            if before is not None and before != data["thresholds"]:
                # A threshold a check was judged on may read otherwise now (a new content, or
                # one the profile held before): the open jobs under the profile are read again,
                # and a robot at work on a limit since lowered stops.
                reread_readiness(jobs=jobs_under_profile(profile.pk), by=None)
        profiles.append(profile)
    return profiles


def profile_diff(before: ProfileRevision, after: ProfileRevision) -> dict[str, Any]:
    """What changed between two revisions of a profile: thresholds added, removed and changed
    (value, unit or source), by key."""
    a, b = before.thresholds, after.thresholds
    changed = []
    for key in sorted(a.keys() & b.keys()):
        fields = sorted(f for f in ("value", "unit", "source") if a[key].get(f) != b[key].get(f))
        if fields:
            changed.append(
                {
                    "key": key,
                    "fields": fields,
                    "before": {f: a[key].get(f) for f in fields},
                    "after": {f: b[key].get(f) for f in fields},
                }
            )
    return {
        "profile": after.profile.key,
        "from": before.number,
        "to": after.number,
        "added": {k: b[k] for k in sorted(b.keys() - a.keys())},
        "removed": {k: a[k] for k in sorted(a.keys() - b.keys())},
        "changed": changed,
    }


def load_default_checklists(directory: Path | None = None) -> list[Any]:
    directory = directory or Path(settings.PARAPET_FIXTURES_DIR) / "checklists"
    versions = []
    with transaction.atomic():
        for path in sorted(directory.glob("*.json")):
            data = _read(path)
            versions.append(
                ensure_published(
                    key=data["key"],
                    title=data["title"],
                    applies_to=data["applies_to"],
                    description=data.get("description", ""),
                    items=data["items"],
                )
            )
    return versions


def load_defaults() -> None:
    load_profiles()
    load_default_checklists()
