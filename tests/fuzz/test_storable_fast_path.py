"""The one-pass check a sync batch makes first (C's JSON encoder) answers as the walk does.

``unstorable`` asks the encoder first and walks the value only when the encoder finds
something; this compares it with the walk alone on generated JSON values, the hostile parts
included (NUL, lone surrogates, in keys too, non-finite numbers, a backslash-u0000 typed as
text, huge integers, deep nesting).
"""

import math

from hypothesis import given, settings
from hypothesis import strategies as st

from compliance.jobs import sync
from tests.fuzz import hostile as h

texts = st.one_of(
    st.text(max_size=12),
    h.bad_strings,
    st.sampled_from(["\\u0000", "a\\u0000b", '"\\u0000"', "\\\\u0000"]),
)
scalars = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(),
    st.sampled_from([10**400, -(2**63) - 1]),
    st.floats(allow_nan=True, allow_infinity=True),
    texts,
)
values = st.recursive(
    scalars,
    lambda inner: st.one_of(st.lists(inner, max_size=4), st.dictionaries(texts, inner, max_size=4)),
    max_leaves=20,
)


def walked(value, numbers):
    """The walk alone, as ``unstorable`` was before the encoder's pass."""
    original = sync._plainly_storable
    sync._plainly_storable = lambda value, numbers: False
    try:
        return sync.unstorable(value, numbers=numbers)
    finally:
        sync._plainly_storable = original


@settings(max_examples=400, deadline=None)
@given(value=values, numbers=st.booleans())
def test_the_encoders_pass_answers_as_the_walk_does(value, numbers):
    assert sync.unstorable(value, numbers=numbers) == walked(value, numbers)


def test_what_the_encoder_clears_the_walk_clears_and_what_it_flags_is_named():
    clean = {"entries": {"a": [1, 2.5, None, True, "kN ½ 😀"], "b\\u0000": "text \\u0000"}}
    assert sync._plainly_storable({"entries": {"a": [1, 2.5, "😀"]}}, numbers=True)
    # A backslash typed before u0000 is a false alarm the walk clears.
    assert not sync._plainly_storable(clean, numbers=True)
    assert sync.unstorable(clean) is None
    assert sync.unstorable({"a": [1, {"b\x00": 1}]}) == ("a[1].b\x00", sync.UNSTORABLE_TEXT)
    assert sync.unstorable({"a": ["x", "\ud800"]}) == ("a[1]", sync.UNSTORABLE_TEXT)
    assert sync.unstorable({"a": {"b": math.inf}}) == ("a.b", sync.UNSTORABLE_NUMBER)
    assert sync.unstorable({"a": {"b": math.inf}}, numbers=False) is None
    deep = []
    for _ in range(100_000):
        deep = [deep]
    assert sync.unstorable(deep) is None
