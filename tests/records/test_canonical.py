"""canonical_bytes writes exactly what rfc8785 writes, only faster.

Reference: the ``rfc8785`` package (PyPI, by Trail of Bits), an implementation of RFC 8785,
JSON Canonicalization Scheme; it is the function the seals were written with before.
"""

import math

import pytest
import rfc8785
from hypothesis import given, settings
from hypothesis import strategies as st

from compliance.records.sealing import canonical_bytes

SAFE = 2**53 - 1

scalars = (
    st.none()
    | st.booleans()
    | st.integers(-SAFE, SAFE)
    | st.floats(allow_nan=False, allow_infinity=False)
    | st.text()
)
values = st.recursive(
    scalars,
    lambda inner: st.lists(inner, max_size=5) | st.dictionaries(st.text(), inner, max_size=5),
    max_leaves=40,
)


def both(value):
    """(canonical_bytes, rfc8785.dumps) of the value, each its bytes or its error's type."""
    out = []
    for write in (canonical_bytes, rfc8785.dumps):
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
