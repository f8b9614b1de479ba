"""Hostile values for every body field and query parameter of the API, and a small world for them
to land in: a contractor's job (open, closed, signed), an owner's building with a grant to the
contractor, and baseline bodies each operation accepts, so a spoiled field is the one that is read.

Values that JSON text can carry but Python's json cannot write (integers past 4300 digits,
nesting deeper than the encoder recurses) are ``Raw`` text, spliced in when the body is written.
"""

from __future__ import annotations

import datetime as dt
import io
import json
import uuid
from dataclasses import dataclass
from typing import Any
from unittest import mock
from urllib.parse import quote

from django.utils import timezone
from hypothesis import strategies as st

from compliance.anchor_log.services import SIGNED_KINDS, record_entry
from compliance.models import AnchorLogEntry, JobState, Organisation, SiteGrant
from compliance.records import signing
from tests.conftest import PASSING, fill_all
from tests.engineering.examples import SUCTION
from tests.factories import (
    PASSWORD,
    AnchorFactory,
    CertificationFactory,
    JobFactory,
    OrganisationFactory,
    SiteFactory,
    UserFactory,
    drop_body,
    make_drop,
)


@dataclass(frozen=True)
class Raw:
    """JSON text put into the body as it is."""

    text: str

    def __repr__(self) -> str:
        return f"Raw({self.text[:20]!r}... {len(self.text)} chars)"


def deep_list(depth: int) -> Raw:
    return Raw("[" * depth + "]" * depth)


def deep_object(depth: int) -> Raw:
    return Raw('{"a":' * depth + "1" + "}" * depth)


HUGE_INTEGERS = [
    10**400,
    -(10**400),
    -(2**63) - 1,
    -(2**63),
    2**63 - 1,
    2**63,
    2**64,
    2**31,
    -(2**31) - 1,
    2**53 + 1,
    Raw("1" + "0" * 5000),
    Raw("-" + "9" * 5000),
    Raw("1e400"),
    Raw("-1e400"),
    Raw("1e-400"),
    Raw("123456789012345678901234567890.5"),
]
IMPOSSIBLE_DATES = [
    "2026-02-30",
    "2026-02-29",
    "2026-13-01",
    "2026-00-10",
    "0000-01-01",
    "0001-01-01",
    "9999-12-31",
    "10000-01-01",
    "-0001-01-01",
    "9999-12-31T23:59:59-14:00",
    "0001-01-01T00:00:00+14:00",
    "2026-12-02T25:00:00Z",
    "2026-12-02T23:59:60Z",
    "2026-12-02T07:05:00",
    "2026-12-02T07:05:00+25:00",
    "2026-W49-3",
    "20261202",
    "+002026-12-02",
    "2026-12-02\x00",
    "2026-12-02T07:05:00.9999999999Z",
]
EPOCHS = [
    0,
    -1,
    1767225600,
    1767225600000,
    1767225600.5,
    253402300800,
    253402300800000,
    -62135596801,
    "1767225600",
    "1767225600000",
    "@1767225600",
]
BAD_TEXT = [
    "\ud800",
    "\udfff",
    "a\ud800b",
    "\ud83d",
    "\x00",
    "tower\x00",
    "\x00" * 64,
    "\ufeff",
    "\u202e",
    "²",
    "٣",
    "../../etc/passwd",
    "%s%s%n",
    "{{ 7 * 7 }}",
]
LONG_TEXT = ["x" * 100_000, "\x00" * 10_000, "9" * 5000, "\ud800" * 5000, "é" * 70_000]
DEEP = [deep_list(50), deep_list(900), deep_list(5000), deep_object(950), deep_object(100_000)]
ODD_JSON = [None, True, False, "", [], {}, -0.0, 5e-324, 1.7976931348623157e308, [None], {"": ""}]

glyphs = st.sampled_from(["\x00", "\ud800", "\udbff", "\udc00", "\udfff", "a", "é", "😀", " "])
bad_strings = st.one_of(
    st.sampled_from(BAD_TEXT),
    st.lists(glyphs, min_size=1, max_size=12).map("".join),
    st.text(max_size=20).map(lambda t: t + "\x00"),
    st.text(max_size=20).map(lambda t: "\ud800" + t),
)
hostile_scalars = st.one_of(
    st.sampled_from(HUGE_INTEGERS),
    st.sampled_from(IMPOSSIBLE_DATES),
    st.sampled_from(EPOCHS),
    bad_strings,
    st.sampled_from(ODD_JSON),
    st.integers(),
)
hostile = st.one_of(
    hostile_scalars,
    hostile_scalars,
    st.sampled_from(LONG_TEXT),
    st.sampled_from(DEEP),
    st.lists(hostile_scalars, max_size=3),
    st.dictionaries(st.one_of(bad_strings, st.text(max_size=4)), hostile_scalars, max_size=2),
)
"""Any one hostile value for a field."""

hostile_query = st.one_of(
    st.sampled_from(HUGE_INTEGERS).map(lambda v: v.text if isinstance(v, Raw) else str(v)),
    st.sampled_from(IMPOSSIBLE_DATES),
    st.sampled_from(EPOCHS).map(str),
    bad_strings,
    st.sampled_from(["", " ", "-1", "0", "1.5", "true", "null", "[]", "x" * 10_000, "[" * 5000]),
    st.text(max_size=10),
)
"""Any one hostile query-string value (sent percent-encoded, surrogates as their raw bytes)."""


# Writing requests ------------------------------------------------------------------------------


def _swap_raw(value: Any, found: dict[str, str]) -> Any:
    if isinstance(value, Raw):
        marker = f"@@raw{len(found)}@@"
        found[marker] = value.text
        return marker
    if isinstance(value, dict):
        return {k: _swap_raw(v, found) for k, v in value.items()}
    if isinstance(value, list):
        return [_swap_raw(v, found) for v in value]
    return value


def json_text(body: Any) -> str:
    """The body as JSON text: lone surrogates escaped as \\udXXX, Raw values spliced in."""
    found: dict[str, str] = {}
    text = json.dumps(_swap_raw(body, found))
    for marker, raw in found.items():
        text = text.replace(json.dumps(marker), raw, 1)
    return text


def query_string(params: dict[str, str]) -> str:
    """Percent-encoded; a surrogate goes as the bytes UTF-8 would give it (which is not UTF-8)."""
    return "&".join(
        f"{quote(k.encode('utf-8', 'surrogatepass'))}={quote(v.encode('utf-8', 'surrogatepass'))}"
        for k, v in params.items()
    )


def path_part(value: Any) -> str:
    return quote(str(value).encode("utf-8", "surrogatepass"), safe="")


def form_value(value: Any) -> str:
    """A form field carries text only: what a hostile value looks like when typed into one."""
    if isinstance(value, Raw):
        return value.text
    if isinstance(value, str):
        return value
    if isinstance(value, bytes):
        return value.decode("latin-1")
    return json_text(value) if isinstance(value, dict | list) else json.dumps(value)


def png_bytes() -> bytes:
    from PIL import Image

    data = io.BytesIO()
    Image.new("RGB", (8, 6), (200, 30, 30)).save(data, format="PNG")
    return data.getvalue()


# Where a body keeps its fields -----------------------------------------------------------------


def paths_of(value: Any, prefix: tuple = (), depth: int = 0) -> list[tuple]:
    """Every field path of a baseline body, nested objects and list items included."""
    found = []
    if depth > 4:
        return found
    if isinstance(value, dict):
        for key, item in value.items():
            found.append((*prefix, key))
            found.extend(paths_of(item, (*prefix, key), depth + 1))
    elif isinstance(value, list):
        for index, item in enumerate(value[:2]):
            found.append((*prefix, index))
            found.extend(paths_of(item, (*prefix, index), depth + 1))
    return found


def set_path(body: Any, path: tuple, value: Any) -> Any:
    target = body
    for part in path[:-1]:
        target = target[part]
    target[path[-1]] = value
    return body


def drop_path(body: Any, path: tuple) -> Any:
    target = body
    for part in path[:-1]:
        target = target[part]
    if isinstance(target, dict):
        target.pop(path[-1], None)
    return body


# The world -------------------------------------------------------------------------------------

ROLES = ("operator", "supervisor", "property_manager")


@dataclass
class World:
    job: Any  # today's, open, every check passed
    closed: Any  # yesterday's, closed, not yet signed
    signed: Any  # two days ago, signed: its record takes addenda
    record: Any
    users: dict[str, Any]
    contractor: Organisation
    owner_site: Any
    owner_anchors: list
    grant: SiteGrant
    versions: dict
    own_checklist: Any
    draft: Any
    log_entry: AnchorLogEntry
    drop: Any  # today's job's drop: its anchors and kit are reused in new drops
    sheet: Any

    def site_for(self, role: str):
        return self.owner_site if role == "property_manager" else self.job.site

    def anchor_for(self, role: str):
        return self.owner_anchors[0] if role == "property_manager" else self.drop.anchor


_KEY: list = []


def credential(organisation: Organisation) -> Any:
    """A self-signed credential on a key made once per run: a 2048-bit key takes 0.1 s, and
    every operation's world needs two."""
    if not _KEY:
        _KEY.append(signing.rsa.generate_private_key(public_exponent=65537, key_size=2048))
    with mock.patch.object(signing.rsa, "generate_private_key", return_value=_KEY[0]):
        return signing.create_self_signed(organisation=organisation)


def build_world(versions: dict) -> World:
    from checklists.services import create_draft
    from compliance.records.services import sign_daily_record
    from tests.factories import published_checklist, tick

    today = timezone.localdate()
    job = JobFactory()
    drop = make_drop(job)
    org = job.organisation
    operator = UserFactory(organisation=org, role="operator")
    supervisor = job.supervisor
    fill_all(job, versions, operator)
    credential(org)
    # The older days need only be closed: sign-off reads whatever the day holds.
    older = {
        days: JobFactory(
            site=job.site,
            supervisor=supervisor,
            date=today - dt.timedelta(days=days),
            state=JobState.CLOSED,
        )
        for days in (1, 2)
    }
    record = sign_daily_record(
        job=older[2],
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="No work that day.",
    )
    owner = OrganisationFactory(kind="owner")
    manager = UserFactory(organisation=owner, role="property_manager")
    credential(owner)
    owner_site = SiteFactory(organisation=owner)
    anchors = [AnchorFactory(site=owner_site) for _ in range(2)]
    for anchor in anchors:
        CertificationFactory(anchor=anchor)
    grant = SiteGrant.objects.create(
        site=owner_site,
        contractor=org,
        granted_by=manager,
        starts_on=today - dt.timedelta(days=10),
        ends_on=today + dt.timedelta(days=30),
    )
    entry = record_entry(
        anchor=anchors[0],
        by=manager,
        password=PASSWORD,
        kind=SIGNED_KINDS[0],
        details="Inspected, sound.",
        performed_on=today - dt.timedelta(days=3),
    )
    own = published_checklist("own-hose", "hose", [tick("condition")], organisation=org).checklist
    draft = create_draft(checklist=own, items=[tick("condition"), tick("kinks")], by=supervisor)
    return World(
        job=job,
        closed=older[1],
        signed=older[2],
        record=record,
        users={"operator": operator, "supervisor": supervisor, "property_manager": manager},
        contractor=org,
        owner_site=owner_site,
        owner_anchors=anchors,
        grant=grant,
        versions=versions,
        own_checklist=own,
        draft=draft,
        log_entry=entry,
        drop=drop,
        sheet=job.sheets.order_by("id").first(),
    )


# Path parameters and baseline bodies -----------------------------------------------------------


def path_values(w: World, template: str, role: str) -> dict[str, Any]:
    """Ids that exist for the role, so a request reaches the code that reads its body."""
    owner = role == "property_manager"
    if "/checklist-versions/" in template:
        ident = w.draft.pk
    elif "/checklists/" in template:
        ident = w.own_checklist.pk
    elif "/anchor-log/" in template:
        ident = w.log_entry.pk
    elif "/anchors/" in template:
        ident = w.anchor_for(role).pk
    elif "/equipment/" in template:
        ident = w.drop.hose_id
    elif template.endswith("/sign/"):
        ident = w.closed.pk
    elif "/jobs/" in template:
        ident = w.job.pk
    elif "/records/" in template:
        ident = w.record.pk
    elif "/sheets/" in template:
        ident = w.sheet.pk
    elif "/sites/" in template:
        ident = w.owner_site.pk if owner or "/grants/" in template else w.job.site_id
    else:
        ident = None
    return {
        "id": ident,
        "key": w.job.site.profile.key,
        "name": "suction-hold",
        "grant_pk": w.grant.pk,
    }


def sheet_body(w: World) -> dict[str, Any]:
    return {
        "client_uuid": str(uuid.uuid4()),
        "job": w.job.pk,
        "version": w.versions["hose"].pk,
        "equipment": w.drop.hose_id,
        "device_time": timezone.now().isoformat(),
        "remarks": "",
        "entries": json.loads(json.dumps(PASSING["hose"])),
    }


def sheet_record(w: World) -> dict[str, Any]:
    data = sheet_body(w)
    return {"type": "sheet", "client_uuid": data.pop("client_uuid"), "data": data}


def baseline(w: World, method: str, template: str, role: str, fresh: bool = True) -> Any:
    """A body the operation accepts from this role (None: the operation reads no body). With
    fresh=False, names that must be unique are fixed, so a second one is a duplicate."""
    today = timezone.localdate()

    def unique(prefix: str) -> str:
        return f"{prefix}-{uuid.uuid4().hex[:6]}" if fresh else f"{prefix}-1"

    drop = w.drop
    user = w.users[role]
    key = (method, template.removeprefix("/api/v1"))
    bodies = {
        ("POST", "/anchor-log/"): lambda: {
            "anchor": w.anchor_for(role).pk,
            "kind": str(SIGNED_KINDS[0]),
            "result": "pass",
            "performed_on": (today - dt.timedelta(days=1)).isoformat(),
            "performed_by": "Pat Engineer",
            "performed_by_company": "Height Safety Co",
            "details": "Proof load applied, sound.",
            "password": PASSWORD,
        },
        ("POST", "/anchors/"): lambda: {
            "site": w.site_for(role).pk,
            "label": unique("N"),
            "x_m": 1.5,
            "y_m": 2.5,
            "description": "parapet, north",
        },
        ("POST", "/anchors/{id}/certifications/"): lambda: {
            "certifier": "Pat Engineer",
            "certifier_company": "Height Safety Co",
            "rated_capacity_kn": 22.2,
            "certified_on": (today - dt.timedelta(days=5)).isoformat(),
            "valid_until": (today + dt.timedelta(days=360)).isoformat(),
        },
        ("POST", "/auth/login/"): lambda: {"username": user.username, "password": PASSWORD},
        ("POST", "/auth/token/"): lambda: {"username": user.username, "password": PASSWORD},
        ("POST", "/calc/{name}/"): lambda: {**SUCTION},
        ("PATCH", "/checklist-versions/{id}/"): lambda: {
            "items": json.loads(json.dumps(w.draft.items)),
            "notes": "kinks added",
        },
        ("POST", "/checklists/"): lambda: {
            "key": unique("own"),
            "title": "Own check",
            "applies_to": "hose",
            "description": "ours",
        },
        ("POST", "/checklists/{id}/versions/"): lambda: {
            "items": json.loads(json.dumps(w.draft.items)),
            "notes": "next",
        },
        ("POST", "/equipment/"): lambda: {
            "kind": "hose",
            "label": unique("H"),
            "serial": "S-1",
            "ratings": {
                "id_mm": 12.0,
                "rating_kpa": 2500.0,
                "kg_per_m": 0.15,
                "length_m": 200.0,
                "roughness_mm": 0.0015,
            },
            "made_on": "2024-01-01",
            "next_inspection_due": (today + dt.timedelta(days=90)).isoformat(),
            "in_service": True,
        },
        ("POST", "/jobs/"): lambda: {
            "site": w.site_for(role).pk,
            "date": (today + dt.timedelta(days=3 if fresh else 0)).isoformat(),
            "supervisor": w.users["supervisor"].pk,
            "notes": "",
        },
        ("POST", "/jobs/{id}/close/"): lambda: {"reason": "wind"},
        ("POST", "/jobs/{id}/pause/"): lambda: {"reason": "wind"},
        ("POST", "/jobs/{id}/drops/"): lambda: drop_body(drop, label=unique("D")),
        ("POST", "/jobs/{id}/sign/"): lambda: {
            "password": PASSWORD,
            "meaning": "reviewed_safe",
            "remarks": "",
        },
        ("POST", "/photos/"): lambda: {
            "client_uuid": str(uuid.uuid4()),
            "job": w.job.pk,
            "item_key": "",  # a photo without a sheet names a photo item, and these have none
            "image": png_bytes(),
        },
        ("POST", "/records/{id}/addenda/"): lambda: {
            "password": PASSWORD,
            "text": "A late note.",
            "client_uuid": str(uuid.uuid4()),
        },
        ("POST", "/sheets/"): lambda: sheet_body(w),
        ("POST", "/sites/"): lambda: {
            "name": unique("Tower"),
            "address": "1 Quay",
            "height_m": 80.0,
            "storeys": 20,
            "profile": w.job.site.profile.key,
            "terrain": "IV",
            "roof_outline": [[0, 0], [30, 0], [30, 20], [0, 20]],
        },
        ("POST", "/sites/{id}/grants/"): lambda: {
            "contractor": OrganisationFactory(kind="contractor").pk if fresh else w.contractor.pk,
            "starts_on": today.isoformat(),
            "ends_on": (today + dt.timedelta(days=30)).isoformat(),
        },
        ("POST", "/sites/{id}/grants/{grant_pk}/end/"): lambda: {"reason": "work done"},
        ("POST", "/sync/"): lambda: {
            "records": [sheet_record(w)],
            "sent_at": timezone.now().isoformat(),
        },
        ("POST", "/verify/"): lambda: {"file": b"%PDF-1.7\n%%EOF\n"},
    }
    make = bodies.get(key)
    return None if make is None else make()


MULTIPART = {"/api/v1/photos/", "/api/v1/verify/"}

EXTRA_QUERY = {
    "/api/v1/anchors/": ["site"],
    "/api/v1/equipment/": ["kind"],
    "/api/v1/jobs/": ["date"],
    "/api/v1/checklist-versions/": ["status"],
    "/api/v1/checklist-versions/{id}/diff/": ["against"],
    "/api/v1/sheets/": ["job"],
    "/api/v1/records/": ["site", "job"],
    "/api/v1/records/export/": ["site", "start", "end"],
    "/api/v1/anchor-log/": ["site", "anchor"],
}
"""Query parameters the views read that the schema does not declare."""

EVERYWHERE_QUERY = ["format", "limit", "offset"]


def roles_for(method: str, template: str) -> tuple[str, ...]:
    """Who each operation is run as: the operator everywhere; a supervisor where a supervisor
    changes things; the owner's property manager where the owner acts (the building, its
    anchors, its log book, grants, exports) and on every write."""
    owner_reads = ("/sites/", "/anchors/", "/anchor-log/", "/records/export/", "/me/")
    if method != "GET":
        return ROLES
    if any(part in template for part in owner_reads):
        return ("operator", "property_manager")
    return ("operator",)
