"""Sealing primitives shared by daily records and the anchor log: canonical JSON, seals, chains.

The seal of a document is the SHA-256 of its RFC 8785 (JCS) serialisation.
"""

import datetime as dt
import hashlib
import json
import math
import re
import secrets
from dataclasses import dataclass
from typing import Any

import rfc8785


def utc(value: dt.datetime | None) -> str | None:
    if value is None:
        return None
    return value.astimezone(dt.UTC).isoformat().replace("+00:00", "Z")


_SAFE_INT = 2**53 - 1


def canonical_bytes(document: Any) -> bytes:
    """The RFC 8785 (JCS) bytes of a JSON value, byte for byte what ``rfc8785.dumps`` writes.

    rfc8785 writes in pure Python, one call per value: a 30-sheet day took 0.13 s, and a
    sign-off and a verification each write a day more than once. Here Python's C encoder does
    the writing (keys sorted, ``(",", ":")``, UTF-8 unescaped, and its escapes are RFC 8785's),
    and only what it writes differently is handled apart: each float is swapped for a token
    holding a random nonce and then replaced by rfc8785's own text for it (ECMAScript's number
    form: ``5`` not ``5.0``, ``1e-7`` not ``1e-07``). A value the fast path does not cover goes
    to rfc8785 whole: a key outside the Basic Multilingual Plane (UTF-16, which RFC 8785
    orders keys by, puts it before U+E000-U+FFFF), a float that is not finite (refused) or a
    type that is not JSON's. An integer past 2**53, which rfc8785 refuses, is written as the
    double it stands for (see _double). tests/records/test_canonical.py checks the two agree
    on generated values."""
    numbers = _Numbers()
    floats: list[float] = []

    def swap(value: Any) -> Any:
        kind = type(value)
        if kind is str or kind is bool or value is None:
            return value
        if isinstance(value, str):  # a subclass, such as a model's choice: JSON writes its text
            return str.__str__(value)
        if kind is int:
            if -_SAFE_INT <= value <= _SAFE_INT:
                return value
            value, kind = _double(value), float
        if kind is float:
            if not math.isfinite(value):
                raise _Slow
            floats.append(value)
            return numbers.token(len(floats) - 1)
        if kind is dict:
            out = {}
            for key, item in value.items():
                if type(key) is not str or (not key.isascii() and max(key) > "\uffff"):
                    raise _Slow
                out[key] = swap(item)
            return out
        if kind is list or kind is tuple:
            return [swap(item) for item in value]
        raise _Slow

    try:
        swapped = swap(document)
    except (_Slow, RecursionError):
        return rfc8785.dumps(_doubles(document))
    text = numbers.write(swapped, [rfc8785.dumps(f).decode() for f in floats])
    try:
        return text.encode("utf-8")
    except UnicodeEncodeError:  # a lone surrogate: rfc8785 refuses it with its own error
        return rfc8785.dumps(_doubles(document))


def _double(value: int) -> float:
    """A JSON number is an IEEE-754 double (RFC 8785 section 3.2.2.3; I-JSON, RFC 7493 section
    2.2): an integer past 2**53 stands for the double nearest it. PostgreSQL's jsonb gives a
    double such as 1e17 back as its digits, which Python reads as an integer; its canonical
    text is those digits again. One past the largest double has none, and is refused."""
    try:
        return float(value)
    except OverflowError:
        raise rfc8785.IntegerDomainError(value) from None


def _doubles(value: Any) -> Any:
    """``value`` with every integer past 2**53 taken as its double (see _double)."""
    if type(value) is int and not -_SAFE_INT <= value <= _SAFE_INT:
        return _double(value)
    if isinstance(value, dict):
        return {key: _doubles(item) for key, item in value.items()}
    if isinstance(value, list | tuple):
        return [_doubles(item) for item in value]
    return value


class _Slow(Exception):
    """A value canonical_bytes leaves to rfc8785."""


class _Numbers:
    """Numbers stood in for by tokens while Python's C encoder writes the rest of a value.

    A token is a string holding a NUL and a random nonce (the encoder writes the NUL as
    ``\\u0000``), so no text of the value can pass for one."""

    def __init__(self) -> None:
        self.nonce = secrets.token_hex(8)

    def token(self, index: int) -> str:
        return f"\x00{self.nonce}:{index}\x00"

    def write(self, value: Any, texts: list[str]) -> str:
        """The value as the C encoder writes it (keys sorted, no spaces, UTF-8 unescaped), each
        token replaced by ``texts[index]``."""
        text = json.dumps(value, ensure_ascii=False, sort_keys=True, separators=(",", ":"))
        if not texts:
            return text
        token = re.compile(f'"\\\\u0000{self.nonce}:([0-9]+)\\\\u0000"')
        return token.sub(lambda m: texts[int(m.group(1))], text)


class _NotJson(Exception):
    """NaN or Infinity: Python's parser takes them, JSON (and so RFC 8785) does not."""


def is_canonical(raw: bytes) -> bool:
    """Whether ``raw`` is exactly the RFC 8785 form of the JSON value it holds: the answer of
    ``canonical_bytes(json.loads(raw)) == raw``, found without walking the value in Python.

    The parser itself swaps each number with a fraction or exponent, and each integer past
    2**53 (a double written as digits), for a token (its hooks see the number's text), so
    Python's C encoder can write the rest and each token is then written as rfc8785 writes
    that double. Text with a character outside the Basic Multilingual Plane (a four-byte UTF-8
    sequence) may order keys differently: it goes the long way."""
    if re.search(rb"[\xf0-\xf4]", raw):
        return _canonical_the_long_way(raw)
    tokens = _Numbers()
    numbers: list[str] = []

    def on_float(text: str) -> str:
        numbers.append(text)
        return tokens.token(len(numbers) - 1)

    def on_int(text: str) -> int | str:
        value = int(text)
        if -_SAFE_INT <= value <= _SAFE_INT:
            return value
        return on_float(text)  # a double written as digits (see _double)

    def on_constant(text: str) -> Any:
        raise _NotJson

    try:
        value = json.loads(raw, parse_float=on_float, parse_int=on_int, parse_constant=on_constant)
    except _Slow:
        return _canonical_the_long_way(raw)
    except (_NotJson, ValueError):  # not JSON at all (a UnicodeDecodeError is a ValueError)
        return False
    try:
        written = [rfc8785.dumps(float(n)).decode() for n in numbers]
    except rfc8785.CanonicalizationError:  # 1e400 reads as infinity, which JCS refuses
        return False
    text = tokens.write(value, written)
    try:
        return text.encode("utf-8") == raw
    except UnicodeEncodeError:  # a lone surrogate: no UTF-8 form, so not canonical
        return False


def _canonical_the_long_way(raw: bytes) -> bool:
    try:
        return canonical_bytes(json.loads(raw)) == raw
    except (ValueError, rfc8785.CanonicalizationError):
        return False


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
