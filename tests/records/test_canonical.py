"""canonical_bytes writes exactly what rfc8785 writes, only faster.

Reference: the ``rfc8785`` package (PyPI, by Trail of Bits), an implementation of RFC 8785,
JSON Canonicalization Scheme; it is the function the seals were written with before. It
refuses an integer past 2**53; a JSON number is an IEEE-754 double (RFC 8785 section 3.2.2.3;
I-JSON, RFC 7493 section 2.2), so the reference here gives it the double nearest it first, as
a JavaScript reader would (see tests/records/test_large_numbers.py).
"""

import json
import math

import pytest
import rfc8785
from hypothesis import given, settings
from hypothesis import strategies as st

from compliance.records.sealing import canonical_bytes, is_canonical

SAFE = 2**53 - 1

scalars = (
    st.none()
    | st.booleans()
    | st.integers(-SAFE, SAFE)
    | st.integers(-(2**70), 2**70)
    | st.floats(allow_nan=False, allow_infinity=False)
    | st.text()
)
values = st.recursive(
    scalars,
    lambda inner: st.lists(inner, max_size=5) | st.dictionaries(st.text(), inner, max_size=5),
    max_leaves=40,
)


def as_doubles(value):
    """Every integer past 2**53 as the double nearest it (what a JSON number is)."""
    if type(value) is int and abs(value) > SAFE:
        return float(value)
    if isinstance(value, dict):
        return {k: as_doubles(v) for k, v in value.items()}
    if isinstance(value, list):
        return [as_doubles(v) for v in value]
    return value


def reference(value):
    return rfc8785.dumps(as_doubles(value))


def both(value):
    """(canonical_bytes, the reference) of the value, each its bytes or its error's type."""
    out = []
    for write in (canonical_bytes, reference):
        try:
            out.append(write(value))
        except Exception as exc:
            out.append(type(exc))
    return out


@settings(max_examples=400, deadline=None)
@given(values)
def test_any_json_value_is_written_as_rfc8785_writes_it(value):
    mine, reference = both(value)
    assert mine == reference


@pytest.mark.parametrize(
    "value",
    [
        # ECMAScript's number forms (RFC 8785 section 3.2.2.3), where Python's repr differs
        {"a": 5.0, "b": 1e-7, "c": 1e21, "d": 1e20, "e": 0.00001, "f": -0.0, "g": 1e16},
        # keys ordered by UTF-16 code units (section 3.2.3): U+1F600 sorts before U+FB01
        {"\U0001f600": 1, "\ufb01": 2, "a": 3, "": 4},
        # the escapes (section 3.2.2.2) and text left as UTF-8
        {"text": 'quote " backslash \\ tab \t nul \x00 del \x7f line sep \u2028 é'},
        # what the fast path hands over: a huge integer, a non-finite float, a lone surrogate
        {"n": 2**60},
        {"x": math.inf},
        {"s": "\ud800"},
        # a string that looks like the float token (its nonce is random per call)
        {"t": "\x00deadbeefdeadbeef:0\x00", "f": 1.5},
    ],
)
def test_the_cases_where_the_fast_path_could_go_wrong(value):
    mine, reference = both(value)
    assert mine == reference


def reference_is_canonical(raw: bytes) -> bool:
    """The definition: the bytes are what rfc8785 writes for the value they hold."""

    def number(text):
        return int(text) if abs(int(text)) <= SAFE else float(text)

    try:
        return rfc8785.dumps(json.loads(raw, parse_int=number)) == raw
    except (ValueError, rfc8785.CanonicalizationError):
        return False


writers = st.sampled_from(
    [
        rfc8785.dumps,
        lambda v: json.dumps(v, ensure_ascii=False, sort_keys=True, separators=(",", ":")).encode(
            "utf-8", "surrogatepass"
        ),
        lambda v: json.dumps(v).encode("utf-8", "surrogatepass"),
        lambda v: json.dumps(v, ensure_ascii=False, separators=(",", ":")).encode(
            "utf-8", "surrogatepass"
        ),
    ]
)


@settings(max_examples=400, deadline=None)
@given(values, writers)
def test_is_canonical_answers_as_the_definition_for_any_writer(value, write):
    try:
        raw = write(value)
    except (ValueError, rfc8785.CanonicalizationError):
        return
    assert is_canonical(raw) is reference_is_canonical(raw)


@pytest.mark.parametrize(
    "raw",
    [
        b'{"a":1}',
        b'{"a":1.0}',
        b'{"b":1,"a":2}',
        b'{"a":NaN}',
        b'{"a":Infinity}',
        b'{"a":1e400}',
        b'{"a":-0}',
        b'{"a":-0.0}',
        b'{"a":1E2}',
        b'{"a":100}',
        b'{"a":9007199254740993}',
        b'{"a":9007199254740992}',
        b'{"a":100000000000000000}',
        b'{"a":1152921504606847000}',
        b'{"a":1152921504606846976}',
        b'{"a":-100000000000000000}',
        b'{"a":"\\ud800"}',
        '{"\U0001f600":1,"\ufb01":2}'.encode(),
        '{"\ufb01":2,"\U0001f600":1}'.encode(),
        b'{"a":1} ',
        b"\xef\xbb\xbf{}",
        b"not json",
        '{"a":"é"}'.encode("utf-16"),
    ],
)
def test_is_canonical_on_the_edges(raw):
    assert is_canonical(raw) is reference_is_canonical(raw)


def test_a_str_subclass_is_written_as_its_text_without_leaving_the_fast_path(monkeypatch):
    """A model's choice (a str subclass, such as an anchor log entry's kind) is written as the
    text it holds, as rfc8785 writes it, by the C encoder: it sent whole log entries down the
    pure Python writer before."""
    import enum

    from compliance.records import sealing

    class Kind(enum.StrEnum):
        PRE_USE = "pre_use_check"

        def __str__(self) -> str:  # what str() says is not what JSON writes
            return "Kind.PRE_USE"

    value = {"kind": Kind.PRE_USE, "result": "pass", "ratio": 0.5}
    expected = rfc8785.dumps({"kind": "pre_use_check", "result": "pass", "ratio": 0.5})
    assert rfc8785.dumps(value) == expected
    whole = []
    real = sealing.rfc8785.dumps

    def dumps(written):
        if isinstance(written, dict):
            whole.append(written)
        return real(written)

    monkeypatch.setattr(sealing.rfc8785, "dumps", dumps)

    assert canonical_bytes(value) == expected
    assert whole == []
