"""Exports on a shared building: each contractor its own chain, the owner every chain, and a
chain cut short or a day left out never verifies."""

import datetime as dt
import io
import json
import zipfile

import pytest
import rfc8785
from django.db import connection
from django.urls import reverse

from compliance import clock
from compliance.jobs.services import close_job, start_job
from compliance.models import DailyRecord, Organisation, SiteGrant
from compliance.records.checks import TrustList, verify_export
from compliance.records.exports import build_export, export_scope
from compliance.records.files import ensure_pdf
from compliance.records.services import sign_daily_record
from compliance.records.signing import create_self_signed, sha256_hex, sign_seal
from tests.conftest import client_for, fill_all
from tests.factories import PASSWORD, JobFactory, OrganisationFactory, UserFactory, make_drop
from tests.records.conftest import next_day_job

pytestmark = pytest.mark.django_db


@pytest.fixture
def building(signed, simple_checklists, operator, supervisor, settings, tmp_path):
    """The signed contractor's site now belongs to an owner; a second contractor works there
    under a grant and signs its own day. Returns (owner admin, first record, second record)."""
    settings.MEDIA_ROOT = tmp_path
    site = signed.site
    owner = OrganisationFactory(name="Harbour Lofts Ltd", kind=Organisation.Kind.OWNER)
    create_self_signed(organisation=owner)
    manager = UserFactory(organisation=owner, role="property_manager")
    first = signed.organisation
    site.organisation = owner
    site.save()
    other = OrganisationFactory(name="Second Rope Co")
    create_self_signed(organisation=other)
    for contractor in (first, other):
        SiteGrant.objects.create(
            site=site,
            contractor=contractor,
            starts_on=signed.job.date - dt.timedelta(days=60),
            ends_on=signed.job.date + dt.timedelta(days=60),
            granted_by=manager,
        )
    boss = UserFactory(organisation=other, role="supervisor")
    crew = UserFactory(organisation=other, role="operator")
    job = JobFactory(site=site, organisation=other, supervisor=boss, date=signed.job.date)
    make_drop(job)
    fill_all(job, simple_checklists, crew)
    with clock.replaying(job.date):
        start_job(job=job, by=crew)
        close_job(job=job, by=crew)
    second = sign_daily_record(job=job, by=boss, password=PASSWORD, meaning="reviewed_safe")
    return manager, signed, second


def _rendered(site_id):
    """Render every record's PDF, as the background task does once a sign-off commits."""
    for stored in DailyRecord.objects.filter(site_id=site_id):
        ensure_pdf(stored)


def _export(user, record, start=None, end=None):
    _rendered(record.site_id)
    start = start or record.job.date
    return build_export(
        scope=export_scope(user=user, site_id=record.site_id),
        by=user,
        start=start,
        end=end or start,
    )


def _manifest(data):
    return json.loads(zipfile.ZipFile(io.BytesIO(data)).read("manifest.json"))


def test_each_contractor_exports_its_own_chain_at_a_granted_site(building):
    _, first, second = building
    for record in (first, second):
        data = _export(record.signer, record)
        chains = _manifest(data)["chains"]
        assert [c["organisation"]["id"] for c in chains] == [record.organisation_id]
        report = verify_export(data, use_database=True)
        assert report.ok, report.as_dict()


def test_the_owner_exports_every_chain_at_its_building_and_it_verifies(building):
    manager, first, second = building
    data = _export(manager, first)
    manifest = _manifest(data)
    assert [c["organisation"]["id"] for c in manifest["chains"]] == sorted(
        [first.organisation_id, second.organisation_id]
    )
    assert manifest["exported_by"]["id"] == manager.organisation_id
    assert verify_export(data, use_database=True).ok
    trust = TrustList(
        fingerprints=frozenset(
            {
                first.credential.fingerprint_sha256,
                second.credential.fingerprint_sha256,
                manager.organisation.signing_credentials.get().fingerprint_sha256,
            }
        )
    )
    assert verify_export(data, trust=trust).ok
    # An auditor who trusts only the first contractor does not get VERIFIED for the lot.
    assert not verify_export(
        data, trust=TrustList(fingerprints=frozenset({first.credential.fingerprint_sha256}))
    ).ok


def test_the_export_endpoint_answers_each_party_and_no_one_else(building):
    manager, first, second = building
    day = first.job.date.isoformat()
    query = {"site": first.site_id, "start": day, "end": day}
    _rendered(first.site_id)
    for user, chains in (
        (first.signer, 1),
        (second.signer, 1),
        (manager, 2),
    ):
        response = client_for(user).get(reverse("record-export"), query)
        assert response.status_code == 200, user
        assert len(_manifest(response.content)["chains"]) == chains
    stranger = UserFactory(organisation=OrganisationFactory(), role="auditor")
    response = client_for(stranger).get(reverse("record-export"), query)
    assert response.status_code == 400
    assert response.json() == {"site": ["Unknown site."]}


def test_an_export_of_a_chain_whose_last_day_was_deleted_does_not_verify(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    settings.MEDIA_ROOT = tmp_path
    later = next_day_job(signed.job, simple_checklists, operator, 1)
    last = sign_daily_record(job=later, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    with connection.cursor() as cursor:
        cursor.execute("DELETE FROM compliance_dailyrecord WHERE id = %s", [last.pk])
    data = _export(supervisor, signed, signed.job.date, later.date)
    report = verify_export(data, use_database=True)
    assert report.first_failure.name == "chain_head"
    assert "removed from its end" in report.first_failure.detail


def test_a_day_of_the_period_moved_out_of_the_export_does_not_verify(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    """Even re-signed with the organisation's own key (an insider), a manifest that lists a day
    of the period among the later seals, without its PDF, is refused."""
    settings.MEDIA_ROOT = tmp_path
    later = next_day_job(signed.job, simple_checklists, operator, 1)
    sign_daily_record(job=later, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    data = _export(supervisor, signed, signed.job.date, later.date)
    source = zipfile.ZipFile(io.BytesIO(data))
    files = {n: source.read(n) for n in source.namelist()}
    manifest = json.loads(files["manifest.json"])
    chain = manifest["chains"][0]
    moved = chain["records"].pop()
    del files[moved["file"]]
    chain["after_period"].insert(
        0, {k: moved[k] for k in ("sequence", "kind", "date", "seal", "previous_seal")}
    )
    from compliance.records.sealing import merkle_root

    manifest["merkle_root"] = merkle_root([bytes.fromhex(e["seal"]) for e in chain["records"]])
    raw = rfc8785.dumps(manifest)
    files["manifest.json"] = raw
    files["manifest.sig.json"] = json.dumps(
        {
            "signature": sign_seal(sha256_hex(raw), signed.credential),
            "certificate_pem": signed.credential.certificate_pem,
        }
    ).encode()
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as archive:
        for name, content in files.items():
            archive.writestr(name, content)
    report = verify_export(out.getvalue(), use_database=True)
    assert report.first_failure.name == "chain_intact"
    assert "fall in the period but are not in the export" in report.first_failure.detail


def test_an_addendum_signed_later_travels_with_its_day(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    from compliance.records.services import add_addendum

    settings.MEDIA_ROOT = tmp_path
    later = next_day_job(signed.job, simple_checklists, operator, 1)
    sign_daily_record(job=later, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    add_addendum(record=signed, by=supervisor, password=PASSWORD, text="Hose serial corrected.")
    data = _export(supervisor, signed)
    chain = _manifest(data)["chains"][0]
    # The addendum (record 3) amends the exported day, so the export runs on to it and takes
    # the next day's record (2) along to keep the chain unbroken.
    assert [e["sequence"] for e in chain["records"]] == [1, 2, 3]
    assert chain["after_period"] == []
    assert verify_export(data, use_database=True).ok


def test_an_export_waits_for_pdfs_still_rendering(signed, supervisor, settings, tmp_path):
    """Nothing is drawn in the request: a record whose PDF is not ready answers 202 and its
    render is queued; once rendered, the export is served."""
    settings.MEDIA_ROOT = tmp_path
    day = signed.job.date.isoformat()
    query = {"site": signed.site_id, "start": day, "end": day}
    client = client_for(supervisor)
    waiting = client.get(reverse("record-export"), query)
    assert waiting.status_code == 202
    assert waiting["Retry-After"] == "5"
    assert waiting.json()["status"] == "rendering"
    # Run in-process here, the queued render has already drawn the PDF.
    assert client.get(reverse("record-export"), query).status_code == 200


@pytest.mark.parametrize(
    ("start", "end", "words"),
    [
        ("2026-03-02", "2026-03-01", "Must not be before start."),
        ("2025-01-01", "2026-02-06", "An export covers at most 400 days."),
    ],
)
def test_an_export_period_is_checked_by_the_service_and_named_by_the_api(
    signed, supervisor, start, end, words
):
    from django.core.exceptions import ValidationError

    scope = export_scope(user=supervisor, site_id=signed.site_id)
    with pytest.raises(ValidationError) as caught:
        build_export(
            scope=scope,
            by=supervisor,
            start=dt.date.fromisoformat(start),
            end=dt.date.fromisoformat(end),
        )
    assert caught.value.message_dict == {"end": [words]}
    query = {"site": signed.site_id, "start": start, "end": end}
    response = client_for(supervisor).get(reverse("record-export"), query)
    assert (response.status_code, response.json()) == (400, {"end": [words]})


def test_an_export_of_exactly_400_days_is_allowed(signed, supervisor):
    start = signed.job.date - dt.timedelta(days=400)
    query = {"site": signed.site_id, "start": start.isoformat(), "end": signed.job.date.isoformat()}
    # Accepted: the day's PDF is queued for rendering (202), not refused for its length.
    assert client_for(supervisor).get(reverse("record-export"), query).status_code == 202


def _members(data):
    source = zipfile.ZipFile(io.BytesIO(data))
    return [(info.filename, source.read(info)) for info in source.infolist()]


def _packed(members):
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as archive:
        for name, content in members:
            archive.writestr(zipfile.ZipInfo(name), content)
    return out.getvalue()


def _resigned(members, manifest, credential):
    """The members with `manifest` written in and signed with `credential`, as someone who
    holds that organisation's key would."""
    raw = rfc8785.dumps(manifest)
    signature = json.dumps(
        {
            "signature": sign_seal(sha256_hex(raw), credential),
            "certificate_pem": credential.certificate_pem,
        }
    ).encode()
    replaced = {"manifest.json": raw, "manifest.sig.json": signature}
    return [(name, replaced.get(name, content)) for name, content in members]


@pytest.mark.filterwarnings("ignore:Duplicate name")
@pytest.mark.parametrize(
    "change",
    ["a file the manifest does not name", "a listed name twice", "a path out of the folder"],
)
def test_an_export_holding_anything_its_manifest_does_not_name_does_not_verify(building, change):
    """The verdict says the export holds exactly the signed records: an unzip of it must give
    those files and nothing else (an extra PDF, a second copy under a listed name that an
    unzip may write over the checked one, a name reaching outside the folder)."""
    manager, first, _ = building
    members = _members(_export(manager, first))
    listed = next(name for name, _ in members if name.endswith(".pdf"))
    other_pdf = next(content for name, content in members if name.endswith(".pdf"))
    added = {
        "a file the manifest does not name": ("records/9/00001-record-extra.pdf", other_pdf),
        "a listed name twice": (listed, b"%PDF-1.7 not the signed one"),
        "a path out of the folder": ("../../outside.txt", b"hello"),
    }[change]
    data = _packed([added, *members])

    report = verify_export(data, use_database=True)

    assert not report.ok
    assert report.first_failure.name == "members", report.as_dict()


def test_an_export_with_a_listed_file_removed_never_reads_ok_on_its_files(building):
    """One PDF deleted from the archive: the verdict said "OK The export holds the files its
    manifest names and no other." and then "FAILED ... is listed but missing"."""
    manager, first, _ = building
    members = _members(_export(manager, first))
    removed = next(name for name, _ in members if name.endswith(".pdf"))
    data = _packed([(name, content) for name, content in members if name != removed])

    report = verify_export(data, use_database=False)

    assert not report.ok
    assert report.first_failure.name == "members", report.as_dict()
    assert f"missing: {removed}" in report.first_failure.detail
    assert not any(c.name == "members" and c.ok for c in report.checks)


def test_a_contractor_cannot_sign_a_shorter_head_for_another_contractor_s_chain(
    building, simple_checklists, operator, settings
):
    """The second contractor holds its own key: it cuts the first contractor's last day off
    and signs a head for the shorter chain, listing its own certificate beside the first's."""
    manager, first, second = building
    later = next_day_job(first.job, simple_checklists, operator, 1)
    sign_daily_record(job=later, by=first.signer, password=PASSWORD, meaning="reviewed_safe")
    data = _export(manager, first, first.job.date, later.date)
    members = _members(data)
    manifest = json.loads(dict(members)["manifest.json"])
    rival = second.credential
    chain = next(c for c in manifest["chains"] if c["organisation"]["id"] == first.organisation_id)
    cut = chain["records"].pop()
    chain["after_period"] = []
    statement = rfc8785.dumps(
        {
            "format": json.loads(chain["head"]["statement"])["format"],
            "organisation": first.organisation_id,
            "site": first.site_id,
            "sequence": chain["records"][-1]["sequence"],
            "seal": chain["records"][-1]["seal"],
            "signed_at": "2026-12-05T00:00:00Z",
        }
    ).decode()
    chain["head"] = {
        "statement": statement,
        "signature": sign_seal(sha256_hex(statement.encode()), rival),
        "certificate_sha256": rival.fingerprint_sha256,
    }
    chain["certificates"] = sorted([*chain["certificates"], rival.certificate_pem])
    manifest["chains"] = [chain]
    manifest["exported_by"] = {"id": second.organisation_id, "name": "Second Rope Co"}
    from compliance.records.sealing import merkle_root

    manifest["merkle_root"] = merkle_root([bytes.fromhex(e["seal"]) for e in chain["records"]])
    kept = {"manifest.json", "manifest.sig.json", *(e["file"] for e in chain["records"])}
    forged = _packed([(n, c) for n, c in _resigned(members, manifest, rival) if n in kept])
    assert cut["file"] not in kept
    everyone = TrustList(
        fingerprints=frozenset(
            {first.credential.fingerprint_sha256, rival.fingerprint_sha256}
            | {manager.organisation.signing_credentials.get().fingerprint_sha256}
        )
    )

    offline = verify_export(forged, trust=everyone)
    on_server = verify_export(forged, use_database=True)

    assert not offline.ok and offline.first_failure.name == "chain_head", offline.as_dict()
    assert not on_server.ok and on_server.first_failure.name == "chain_head"


def test_on_the_server_an_export_leaving_out_the_first_day_of_the_period_does_not_verify(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    """An organisation re-signs its own export without the period's first day. Offline nothing
    in the file can show it (the report says so); the server compares with its records."""
    settings.MEDIA_ROOT = tmp_path
    later = next_day_job(signed.job, simple_checklists, operator, 1)
    sign_daily_record(job=later, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    members = _members(_export(supervisor, signed, signed.job.date, later.date))
    manifest = json.loads(dict(members)["manifest.json"])
    chain = manifest["chains"][0]
    dropped = chain["records"].pop(0)
    from compliance.records.sealing import merkle_root

    manifest["merkle_root"] = merkle_root([bytes.fromhex(e["seal"]) for e in chain["records"]])
    forged = _packed(
        [(n, c) for n, c in _resigned(members, manifest, signed.credential) if n != dropped["file"]]
    )
    trust = TrustList(fingerprints=frozenset({signed.credential.fingerprint_sha256}))

    on_server = verify_export(forged, use_database=True)
    offline = verify_export(forged, trust=trust)

    assert not on_server.ok
    assert on_server.first_failure.name == "chain_complete", on_server.as_dict()
    assert "record 1" in on_server.first_failure.detail
    assert "cannot show" in offline.claim or any(
        "cannot show" in check.detail for check in offline.checks
    ), offline.as_dict()


def test_an_export_stays_verified_on_the_server_after_a_day_of_its_period_is_signed_later(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    """Days are often signed late: a record of the period signed after the export was made is
    not one the export left out, and the export, complete when made, still verifies."""
    import datetime as dt

    settings.MEDIA_ROOT = tmp_path
    earlier = next_day_job(signed.job, simple_checklists, operator, -1)
    data = _export(supervisor, signed, earlier.date, signed.job.date)
    assert verify_export(data, use_database=True).ok

    sign_daily_record(
        job=earlier,
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="Signed late.",
    )
    report = verify_export(data, use_database=True)

    assert report.ok, report.as_dict()
    assert dt.date.fromisoformat(_manifest(data)["period"]["start"]) == earlier.date


def test_only_the_server_s_own_note_of_an_export_excuses_a_day_signed_after_it(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    """The moment an export was made comes from the server's HMAC'd note, never from the
    export itself: a note rewritten in the database (an insider moving the moment back) is not
    the server's word, and the export is then held to every record stored now."""
    from compliance.models import ExportMade

    settings.MEDIA_ROOT = tmp_path
    earlier = next_day_job(signed.job, simple_checklists, operator, -1)
    data = _export(supervisor, signed, earlier.date, signed.job.date)
    sign_daily_record(
        job=earlier, by=supervisor, password=PASSWORD, meaning="reviewed_exceptions", remarks="."
    )
    with connection.cursor() as cursor:
        cursor.execute("UPDATE compliance_exportmade SET mac = %s", ["0" * 64])
    assert ExportMade.objects.count() == 1

    report = verify_export(data, use_database=True)

    # Held to the records as they are now: its head is no longer the chain's, and the day
    # signed since is missing.
    assert not report.ok and report.first_failure.name in ("chain_head", "chain_complete")


def test_an_export_made_after_the_key_is_replaced_verifies(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    """A new key signs the chain's head anew; the records of the period were signed with the
    old one. A genuine export of them was refused as 'head not signed by' its organisation."""
    settings.MEDIA_ROOT = tmp_path
    new = create_self_signed(organisation=signed.organisation)

    data = _export(supervisor, signed)
    trust = TrustList(
        fingerprints=frozenset({signed.credential.fingerprint_sha256, new.fingerprint_sha256})
    )

    on_server = verify_export(data, use_database=True)
    assert on_server.ok, on_server.as_dict()
    offline = verify_export(data, trust=trust)
    assert offline.ok, offline.as_dict()


def test_on_the_server_an_export_cut_short_with_a_replaced_key_does_not_verify(
    signed, simple_checklists, operator, supervisor, settings, tmp_path
):
    """Someone who copied the old key before it was replaced cuts the chain's last day off an
    export and signs a shorter head and the manifest with it."""
    settings.MEDIA_ROOT = tmp_path
    later = next_day_job(signed.job, simple_checklists, operator, 1)
    sign_daily_record(job=later, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    members = _members(_export(supervisor, signed))
    old = signed.credential
    create_self_signed(organisation=signed.organisation)
    manifest = json.loads(dict(members)["manifest.json"])
    chain = manifest["chains"][0]
    chain["after_period"] = []
    last = chain["records"][-1]
    statement = rfc8785.dumps(
        {
            "format": json.loads(chain["head"]["statement"])["format"],
            "organisation": signed.organisation_id,
            "site": signed.site_id,
            "sequence": last["sequence"],
            "seal": last["seal"],
            "signed_at": "2026-12-05T00:00:00Z",
        }
    ).decode()
    chain["head"] = {
        "statement": statement,
        "signature": sign_seal(sha256_hex(statement.encode()), old),
        "certificate_sha256": old.fingerprint_sha256,
    }
    forged = _packed(_resigned(members, manifest, old))

    report = verify_export(forged, use_database=True)

    assert not report.ok
    assert report.first_failure.name == "chain_head", report.as_dict()
    assert "records were cut from its end" in report.first_failure.detail


def test_a_manifest_not_signed_by_its_exporter_tells_nothing_of_the_stored_records(
    building, settings
):
    """Anyone signed in can upload a file: a manifest naming another organisation as its
    exporter, signed with the uploader's own key, drew the server into comparing it with that
    organisation's records and saying which were missing."""
    from compliance.records.sealing import merkle_root

    manager, first, second = building
    manifest = {
        "format": "parapet.export/3",
        "exported_by": {"id": manager.organisation_id, "name": "?"},
        "site": {"id": first.site_id, "name": "?"},
        "period": {"start": first.job.date.isoformat(), "end": first.job.date.isoformat()},
        "chains": [],
        "merkle_root": merkle_root([]),
    }
    members = [("manifest.json", b""), ("manifest.sig.json", b"")]
    forged = _packed(_resigned(members, manifest, second.credential))

    report = verify_export(forged, use_database=True)

    assert not report.ok
    assert [c.name for c in report.checks] == ["manifest"]
    assert "record" not in report.first_failure.detail


@pytest.mark.parametrize("exported_by", ["Somebody", 7, None, ["x"]])
def test_a_manifest_whose_exporter_is_no_object_is_refused_not_an_error(
    building, settings, exported_by
):
    from compliance.records.sealing import merkle_root

    _, first, second = building
    manifest = {
        "format": "parapet.export/3",
        "exported_by": exported_by,
        "site": {"id": first.site_id, "name": "?"},
        "period": {"start": first.job.date.isoformat(), "end": first.job.date.isoformat()},
        "chains": [],
        "merkle_root": merkle_root([]),
    }
    members = [("manifest.json", b""), ("manifest.sig.json", b"")]
    forged = _packed(_resigned(members, manifest, second.credential))

    for report in (verify_export(forged, use_database=True), verify_export(forged)):
        assert not report.ok
