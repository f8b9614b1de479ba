"""Each process decrypts a signing key once for the same row, key bytes and passphrase."""

import uuid
from unittest import mock

import pytest
from cryptography.hazmat.primitives import serialization
from django.urls import reverse

from compliance.jobs.selectors import job_requirements
from compliance.models import AnchorLogEntry, SigningCredential
from compliance.records.signatures import verify_seal_signature
from compliance.records.signing import KeyMaterial, create_self_signed, sign_seal
from tests.conftest import PASSING, client_for

pytestmark = pytest.mark.django_db

LOAD = "compliance.records.signing.serialization.load_pem_private_key"


def counting():
    return mock.patch(LOAD, wraps=serialization.load_pem_private_key)


def test_the_same_key_is_decrypted_once(job):
    credential = create_self_signed(organisation=job.organisation)
    with counting() as load:
        first = KeyMaterial.of(credential)
        again = KeyMaterial.of(SigningCredential.objects.get(pk=credential.pk))
    assert again is first
    assert load.call_count == 1


def test_other_key_bytes_in_the_same_row_are_decrypted_afresh(job):
    old = create_self_signed(organisation=job.organisation)
    kept = KeyMaterial.of(old)
    new = create_self_signed(organisation=job.organisation)
    edited = SigningCredential.objects.get(pk=old.pk)
    edited.encrypted_key_pem, edited.certificate_pem = new.encrypted_key_pem, new.certificate_pem
    with counting() as load:
        material = KeyMaterial.of(edited)
    assert load.call_count == 1
    assert material is not kept and material.certificate != kept.certificate


def test_a_wrong_passphrase_is_refused_though_the_right_one_was_used_before(job, settings):
    credential = create_self_signed(organisation=job.organisation)
    KeyMaterial.of(credential)
    settings.PARAPET_SIGNING_PASSPHRASE = "not the passphrase the key was stored under"
    with pytest.raises(ValueError):
        KeyMaterial.of(credential)


def test_a_kept_key_signs_what_the_certificate_verifies(job):
    credential = create_self_signed(organisation=job.organisation)
    KeyMaterial.of(credential)
    seal = "ab" * 32
    assert verify_seal_signature(seal, sign_seal(seal, credential), credential.certificate_pem)


def test_a_batch_with_two_anchor_checks_decrypts_the_key_at_most_once(
    job, simple_checklists, operator
):
    """Each anchor pre-use sheet is copied into the log book as a signed entry."""
    create_self_signed(organisation=job.organisation)
    records = [
        {
            "type": "sheet",
            "client_uuid": str(uuid.uuid4()),
            "data": {
                "job": job.pk,
                "version": simple_checklists["anchor"].pk,
                "anchor": req.subject.anchor.pk,
                "entries": PASSING["anchor"],
                # Filled offline on the job's day, sent now.
                "device_time": f"{job.date.isoformat()}T09:00:00+00:00",
            },
        }
        for req in job_requirements(job)
        if req.subject.kind == "anchor"
    ]
    assert len(records) == 2
    with counting() as load:
        answer = client_for(operator).post(reverse("sync"), {"records": records}, format="json")
    assert answer.status_code == 200
    assert [r["status"] for r in answer.json()["results"]] == ["applied", "applied"]
    signed = AnchorLogEntry.objects.filter(kind=AnchorLogEntry.Kind.PRE_USE).exclude(
        seal_signature=""
    )
    assert signed.count() == 2
    assert load.call_count == 1


def _certificate_naming(organisation_name: str, ca: bool = False):
    import datetime as dt

    from cryptography import x509
    from cryptography.hazmat.primitives import hashes
    from cryptography.hazmat.primitives.asymmetric import rsa
    from cryptography.x509.oid import NameOID

    key = rsa.generate_private_key(public_exponent=65537, key_size=2048)
    name = x509.Name(
        [
            x509.NameAttribute(NameOID.COMMON_NAME, "daily records"),
            x509.NameAttribute(NameOID.ORGANIZATION_NAME, organisation_name),
        ]
    )
    now = dt.datetime.now(dt.UTC)
    cert = (
        x509.CertificateBuilder()
        .subject_name(name)
        .issuer_name(name)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(now)
        .not_valid_after(now + dt.timedelta(days=30))
    )
    if ca:
        cert = cert.add_extension(x509.BasicConstraints(ca=True, path_length=None), critical=True)
    cert = cert.sign(key, hashes.SHA256())
    pem = cert.public_bytes(serialization.Encoding.PEM)
    key_pem = key.private_bytes(
        serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8, serialization.NoEncryption()
    )
    return pem, key_pem


def test_an_imported_certificate_names_its_own_organisation(job):
    """The verifier ties a record to its organisation through the certificate's O=: a
    contractor importing a certificate that names another organisation could sign as it."""
    from compliance.records.signing import store_credential

    pem, key_pem = _certificate_naming("Somebody Else Ltd")
    with pytest.raises(ValueError, match="names the organisation 'Somebody Else Ltd'"):
        store_credential(organisation=job.organisation, certificate_pem=pem, key_pem=key_pem)
    assert not SigningCredential.objects.filter(organisation=job.organisation).exists()
    pem, key_pem = _certificate_naming(job.organisation.name)
    kept = store_credential(organisation=job.organisation, certificate_pem=pem, key_pem=key_pem)
    assert kept.active


def test_a_certificate_authority_s_own_certificate_is_not_imported_as_a_signer(job):
    """An imported certificate marked CA (without content commitment) stayed a CA in every
    trust list holding it, vouching for any certificate its holder issued."""
    from compliance.records.signing import store_credential

    pem, key_pem = _certificate_naming(job.organisation.name, ca=True)
    with pytest.raises(ValueError, match="certificate authority's"):
        store_credential(organisation=job.organisation, certificate_pem=pem, key_pem=key_pem)
    assert not SigningCredential.objects.filter(organisation=job.organisation).exists()
