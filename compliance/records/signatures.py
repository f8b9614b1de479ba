"""Checking a signature over a seal: pure cryptography, no database, for the offline verifier."""

import base64
import binascii

from cryptography import x509
from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives import hashes
from cryptography.hazmat.primitives.asymmetric import padding, rsa

__all__ = ["verify_seal_signature"]


def verify_seal_signature(seal: str, signature_b64: str, certificate_pem: str) -> bool:
    """Whether `signature_b64` is the RSA-PSS (SHA-256) signature of the seal's ASCII text by the
    certificate's key. Any malformed input, or a key that is not RSA, answers False."""
    try:
        cert = x509.load_pem_x509_certificate(certificate_pem.encode())
        public_key = cert.public_key()
        if not isinstance(public_key, rsa.RSAPublicKey):
            return False
        public_key.verify(
            base64.b64decode(signature_b64, validate=True),
            seal.encode("ascii"),
            padding.PSS(mgf=padding.MGF1(hashes.SHA256()), salt_length=padding.PSS.MAX_LENGTH),
            hashes.SHA256(),
        )
    except (InvalidSignature, ValueError, TypeError, UnicodeError, binascii.Error):
        return False
    return True
