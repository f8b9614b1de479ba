"""Signing keys and certificates, PAdES signatures on PDFs, and signatures over seals.

With no timestamp authority reachable, signatures are PAdES baseline B-B (signature and
signing certificate, no trusted timestamp); the signing time is the signer's claim.
"""

import base64
import datetime as dt
import functools
import hashlib
import io
from dataclasses import dataclass

from asn1crypto import keys as asn1_keys
from asn1crypto import x509 as asn1_x509
from cryptography import x509
from cryptography.hazmat.primitives import hashes, serialization
from cryptography.hazmat.primitives.asymmetric import padding, rsa
from cryptography.x509.oid import ExtendedKeyUsageOID, NameOID
from django.conf import settings
from django.db import transaction
from django.utils import timezone
from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
from pyhanko.sign import fields, signers
from pyhanko_certvalidator.registry import SimpleCertificateStore

from compliance.errors import NoSigningCredential
from compliance.models import Organisation, RecordChainHead, SigningCredential
from compliance.records.sealing import canonical_bytes, head_statement


def _passphrase() -> bytes:
    return settings.PARAPET_SIGNING_PASSPHRASE.encode("utf-8")


def fingerprint(cert: x509.Certificate) -> str:
    return cert.fingerprint(hashes.SHA256()).hex()


@transaction.atomic
def store_credential(
    *,
    organisation: Organisation,
    certificate_pem: bytes,
    key_pem: bytes,
    key_passphrase: bytes | None = None,
) -> SigningCredential:
    """Import a certificate and its private key (e.g. from the organisation's CA)."""
    cert = x509.load_pem_x509_certificate(certificate_pem)
    key = serialization.load_pem_private_key(key_pem, password=key_passphrase)
    if cert.public_key().public_numbers() != key.public_key().public_numbers():  # type: ignore[union-attr]
        raise ValueError("The private key does not belong to the certificate.")
    named = [a.value for a in cert.subject.get_attributes_for_oid(NameOID.ORGANIZATION_NAME)]
    if named != [organisation.name]:
        # The verifier ties a record to its organisation through this name (verifier.py,
        # check_signer_organisation).
        raise ValueError(
            f"The certificate names the organisation {', '.join(map(repr, named)) or 'none'};"
            f" it must name {organisation.name!r}, whose records it will sign."
        )
    try:
        constraints = cert.extensions.get_extension_for_class(x509.BasicConstraints).value
    except x509.ExtensionNotFound:
        constraints = None
    if constraints is not None and constraints.ca:
        # A CA in an auditor's trust list vouches for the certificates it issues: a signing
        # key that could issue certificates would vouch for ones its holder made naming others.
        raise ValueError(
            "The certificate is a certificate authority's (CA:TRUE): import a signing"
            " certificate the CA issued, not the CA's own."
        )
    encrypted = key.private_bytes(
        serialization.Encoding.PEM,
        serialization.PrivateFormat.PKCS8,
        serialization.BestAvailableEncryption(_passphrase()),
    )
    SigningCredential.objects.filter(organisation=organisation, active=True).update(
        active=False, retired_at=timezone.now()
    )
    credential = SigningCredential.objects.create(
        organisation=organisation,
        certificate_pem=cert.public_bytes(serialization.Encoding.PEM).decode(),
        encrypted_key_pem=encrypted.decode(),
        fingerprint_sha256=fingerprint(cert),
        subject=cert.subject.rfc4514_string(),
        not_after=cert.not_valid_after_utc,
        self_signed=cert.issuer == cert.subject,
    )
    # The heads of the organisation's chains are signed again with the new key: from now on a
    # head signed with the old one (say, by someone who copied it) is not accepted.
    for head in RecordChainHead.objects.select_for_update().filter(organisation=organisation):
        sign_chain_head(head, credential, sequence=head.sequence, seal=head.seal)
    return credential


def create_self_signed(*, organisation: Organisation, days: int = 3650) -> SigningCredential:
    """A self-signed document-signing certificate for the demo and for tests."""
    key = rsa.generate_private_key(public_exponent=65537, key_size=2048)
    name = x509.Name(
        [
            x509.NameAttribute(NameOID.COMMON_NAME, f"{organisation.name} daily records"),
            x509.NameAttribute(NameOID.ORGANIZATION_NAME, organisation.name),
        ]
    )
    now = timezone.now()
    cert = (
        x509.CertificateBuilder()
        .subject_name(name)
        .issuer_name(name)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(now - dt.timedelta(days=1))
        .not_valid_after(now + dt.timedelta(days=days))
        # A signing certificate, never a CA: one that could sign certificates would vouch, in
        # any trust list holding it, for a certificate its holder made naming someone else.
        .add_extension(x509.BasicConstraints(ca=False, path_length=None), critical=True)
        .add_extension(
            x509.KeyUsage(
                digital_signature=True,
                content_commitment=True,
                key_encipherment=False,
                data_encipherment=False,
                key_agreement=False,
                key_cert_sign=False,
                crl_sign=False,
                encipher_only=False,
                decipher_only=False,
            ),
            critical=True,
        )
        .add_extension(
            x509.ExtendedKeyUsage([ExtendedKeyUsageOID.EMAIL_PROTECTION]), critical=False
        )
        .sign(key, hashes.SHA256())
    )
    return store_credential(
        organisation=organisation,
        certificate_pem=cert.public_bytes(serialization.Encoding.PEM),
        key_pem=key.private_bytes(
            serialization.Encoding.PEM,
            serialization.PrivateFormat.PKCS8,
            serialization.NoEncryption(),
        ),
    )


def active_credential(organisation_id: int) -> SigningCredential:
    credential = SigningCredential.objects.filter(
        organisation_id=organisation_id, active=True
    ).first()
    if credential is None:
        raise NoSigningCredential("No signing certificate; run `manage.py signing_key` first.")
    return credential


@dataclass(frozen=True)
class KeyMaterial:
    certificate: x509.Certificate
    private_key: rsa.RSAPrivateKey

    @classmethod
    def of(cls, credential: SigningCredential) -> "KeyMaterial":
        """The credential's key, decrypted. Decrypting costs tens of milliseconds (the
        passphrase's key derivation), and a morning sync signs an anchor-log entry for every
        anchor sheet, so each process keeps the keys it decrypted (see _decrypted)."""
        return _decrypted(
            credential.pk, credential.encrypted_key_pem, credential.certificate_pem, _passphrase()
        )


@functools.lru_cache(maxsize=64)
def _decrypted(
    credential_id: int, encrypted_key_pem: str, certificate_pem: str, passphrase: bytes
) -> KeyMaterial:
    """Decrypt once per process for the same row, key bytes and passphrase.

    Keeping a decrypted key in the process's memory adds nothing an attacker with that memory
    lacks: the passphrase that decrypts every stored key is in the same memory for the
    process's whole life. A replaced key (other bytes), a restored or edited row, or another
    passphrase is a different entry, decrypted afresh (and refused if the passphrase is wrong).
    """
    key = serialization.load_pem_private_key(encrypted_key_pem.encode(), password=passphrase)
    assert isinstance(key, rsa.RSAPrivateKey)
    return KeyMaterial(x509.load_pem_x509_certificate(certificate_pem.encode()), key)


def sign_seal(
    seal: str, credential: SigningCredential, *, material: KeyMaterial | None = None
) -> str:
    """RSA-PSS/SHA-256 signature over the seal's ASCII hex, base64. `material` is the
    credential's key already decrypted, when the caller signs more than once."""
    material = material or KeyMaterial.of(credential)
    signature = material.private_key.sign(
        seal.encode("ascii"),
        padding.PSS(mgf=padding.MGF1(hashes.SHA256()), salt_length=padding.PSS.MAX_LENGTH),
        hashes.SHA256(),
    )
    return base64.b64encode(signature).decode("ascii")


def sign_pdf(
    pdf: bytes, credential: SigningCredential, *, signer_name: str, reason: str, location: str
) -> bytes:
    """Add a PAdES B-B signature covering the whole file."""
    material = KeyMaterial.of(credential)
    cert = asn1_x509.Certificate.load(material.certificate.public_bytes(serialization.Encoding.DER))
    key = asn1_keys.PrivateKeyInfo.load(
        material.private_key.private_bytes(
            serialization.Encoding.DER,
            serialization.PrivateFormat.PKCS8,
            serialization.NoEncryption(),
        )
    )
    signer = signers.SimpleSigner(
        signing_cert=cert, signing_key=key, cert_registry=SimpleCertificateStore.from_certs([cert])
    )
    writer = IncrementalPdfFileWriter(io.BytesIO(pdf))
    meta = signers.PdfSignatureMetadata(
        field_name="DailyRecordSignature",
        name=signer_name,
        reason=reason,
        location=location,
        subfilter=fields.SigSeedSubFilter.PADES,
        md_algorithm="sha256",
    )
    out = signers.PdfSigner(meta, signer=signer).sign_pdf(writer)
    return out.getvalue()


def sign_chain_head(
    head: RecordChainHead,
    credential: SigningCredential,
    *,
    sequence: int,
    seal: str,
    material: KeyMaterial | None = None,
) -> RecordChainHead:
    """Move a chain's head to (sequence, seal) and sign the statement with `credential`."""
    raw = canonical_bytes(
        head_statement(
            organisation_id=head.organisation_id,
            site_id=head.site_id,
            sequence=sequence,
            seal=seal,
            signed_at=timezone.now(),
        )
    )
    head.sequence, head.seal, head.statement = sequence, seal, raw.decode("utf-8")
    head.signature = sign_seal(sha256_hex(raw), credential, material=material)
    head.credential = credential
    head.save()
    return head


def sha256_hex(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()
