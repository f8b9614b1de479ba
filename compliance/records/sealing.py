"""Sealing primitives shared by daily records and the anchor log: canonical JSON, seals, chains.

The seal of a document is the SHA-256 of its RFC 8785 (JCS) serialisation.
"""

import datetime as dt
import hashlib
import json
from dataclasses import dataclass
from typing import Any

import rfc8785


def utc(value: dt.datetime | None) -> str | None:
    if value is None:
        return None
    return value.astimezone(dt.UTC).isoformat().replace("+00:00", "Z")


def canonical_bytes(document: dict[str, Any]) -> bytes:
    return rfc8785.dumps(document)


def seal_of(document: dict[str, Any]) -> str:
    return hashlib.sha256(canonical_bytes(document)).hexdigest()


@dataclass
class ChainBreak:
    sequence: int
    code: str
    message: str


def check_links(rows: list[dict[str, Any]]) -> list[ChainBreak]:
    """Check a chain given as [{sequence, seal, previous_seal, canonical_json?}] in order.

    Used on the database and on an export's manifest alike.
    """
    breaks: list[ChainBreak] = []
    expected_previous = ""
    for position, row in enumerate(rows, start=1):
        seq = row["sequence"]
        if seq != position:
            kind = "missing" if seq > position else "reordered"
            breaks.append(
                ChainBreak(
                    seq,
                    kind,
                    f"Record {position} of the chain is {kind}: found number {seq} in its place.",
                )
            )
            return breaks
        text = row.get("canonical_json")
        if text is not None:
            if hashlib.sha256(text.encode("utf-8")).hexdigest() != row["seal"]:
                breaks.append(
                    ChainBreak(
                        seq,
                        "altered",
                        f"Record {seq} was altered: its content no longer hashes to its seal.",
                    )
                )
                return breaks
            doc = json.loads(text)
            if doc.get("sequence") != seq or (doc.get("previous_seal") or "") != (
                row["previous_seal"] or ""
            ):
                breaks.append(
                    ChainBreak(
                        seq,
                        "altered",
                        f"Record {seq}'s chain fields differ from its sealed content.",
                    )
                )
                return breaks
        if (row["previous_seal"] or "") != expected_previous:
            breaks.append(
                ChainBreak(
                    seq,
                    "broken_link",
                    f"Record {seq} does not follow record {seq - 1}: "
                    "the previous seal does not match.",
                )
            )
            return breaks
        expected_previous = row["seal"]
    return breaks


def merkle_root(leaves: list[bytes]) -> str:
    """RFC 6962 section 2.1 Merkle tree hash: 0x00 prefix for leaves, 0x01 for inner nodes."""

    def mth(items: list[bytes]) -> bytes:
        if not items:
            return hashlib.sha256(b"").digest()
        if len(items) == 1:
            return hashlib.sha256(b"\x00" + items[0]).digest()
        k = 1
        while k * 2 < len(items):
            k *= 2
        return hashlib.sha256(b"\x01" + mth(items[:k]) + mth(items[k:])).digest()

    return mth(leaves).hex()


EXPORT_FORMAT = "parapet.export/3"
EXPORT_MANIFEST = "manifest.json"
EXPORT_MANIFEST_SIGNATURE = "manifest.sig.json"

HEAD_FORMAT = "parapet.chain-head/1"


def head_statement(
    *, organisation_id: int, site_id: int, sequence: int, seal: str, signed_at: dt.datetime
) -> dict[str, Any]:
    """What a chain's signed head says: this organisation's chain at this site ends here."""
    return {
        "format": HEAD_FORMAT,
        "organisation": organisation_id,
        "site": site_id,
        "sequence": sequence,
        "seal": seal,
        "signed_at": utc(signed_at),
    }
