"""The signature's container holds nothing but what the signer wrote.

The byte range a PDF signature covers leaves out its own /Contents: the CMS SignedData
(RFC 5652), whose certificate set, digest algorithm set and revocation data are not signed.
A copy of the signer's certificate with one byte of its issuer changed still verified: the
validator found the other, untouched copy. The checks on the container now allow only the
signing certificate and certificates that issued one in the set, each key once, one digest
algorithm (the signer's), no revocation data, no unsigned attributes and one signer.
"""

import re

import pytest
from asn1crypto import algos, cms, pem, x509

from compliance.records.checks import verify_pdf

pytestmark = pytest.mark.django_db


def rewritten(pdf: bytes, change) -> bytes:
    """The PDF with its CMS container changed by ``change`` and written back in the same space
    (upper-case hex, zero padding), as an attacker with a hex editor would."""
    start, length, after, _ = map(
        int, re.search(rb"/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]", pdf).groups()
    )
    hex_start, hex_end = start + length + 1, after - 1
    raw = bytes.fromhex(pdf[hex_start:hex_end].decode())
    info = cms.ContentInfo.load(raw.rstrip(b"\x00"), strict=False)
    blob = change(info, raw)
    text = blob.hex().upper().encode()
    assert len(text) <= hex_end - hex_start
    return pdf[:hex_start] + text.ljust(hex_end - hex_start, b"0") + pdf[hex_end:]


def one_byte_in_the_first_certificate_copy(info, raw):
    signed = info["content"]
    assert len(signed["certificates"]) == 2  # the signer's certificate, twice
    # Inside its issuer's name, found by its bytes: a fixed offset moved with the length of the
    # certificate's random serial number and, now and then, fell outside the name.
    certificate = signed["certificates"][0].chosen
    issuer = certificate["tbs_certificate"]["issuer"].dump()
    at = raw.find(issuer, raw.find(certificate.dump())) + len(issuer) - 3
    changed = bytearray(raw)
    changed[at] ^= 0x01
    return bytes(changed).rstrip(b"\x00")


def an_unused_digest_algorithm(info, raw):
    info["content"]["digest_algorithms"].append(algos.DigestAlgorithm({"algorithm": "sha512"}))
    return info.dump(force=True)


def test_the_untouched_file_verifies(signed_pdf):
    assert verify_pdf(signed_pdf, name="record.pdf").ok


@pytest.mark.parametrize(
    "change", [one_byte_in_the_first_certificate_copy, an_unused_digest_algorithm]
)
def test_a_change_to_the_unsigned_parts_of_the_container_is_not_verified(signed_pdf, change):
    altered = rewritten(signed_pdf, change)
    assert altered != signed_pdf and len(altered) == len(signed_pdf)
    report = verify_pdf(altered, name="record.pdf")
    assert not report.ok
    assert report.first_failure.name == "signature_valid"
    assert "container" in report.first_failure.detail


def a_certificate_added(info, raw):
    from compliance.records.signing import create_self_signed
    from tests.factories import OrganisationFactory

    other = create_self_signed(organisation=OrganisationFactory(name="Someone else"))
    info["content"]["certificates"].append(
        cms.CertificateChoices(
            "certificate", x509.Certificate.load(pem.unarmor(other.certificate_pem.encode())[2])
        )
    )
    return info.dump(force=True)


def test_a_certificate_added_to_the_container_is_not_verified(signed_pdf):
    report = verify_pdf(rewritten(signed_pdf, a_certificate_added), name="record.pdf")
    assert not report.ok
    assert report.first_failure.name == "signature_valid"
