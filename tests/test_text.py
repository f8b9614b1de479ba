"""What counts as saying something: a signature "with exceptions" needs remarks a reader can
see, and a job closed before any work needs a reason."""

import pytest

from compliance.text import has_words


@pytest.mark.parametrize(
    "text",
    [
        "",
        "   \n\t",
        "\u200b\u200b",  # zero-width spaces
        "\x01\x02\x03",  # ASCII controls: signed "with exceptions" and printed as empty boxes
        "\u034f\u034f",  # a combining grapheme joiner, drawn as nothing
        "\u0301",  # an accent with no letter
        "\u2800\u2800\u2800",  # the blank braille pattern
        "\u3164",  # a Hangul filler
        "\ue000",  # private use
        "\u2028\u3000",  # a line separator and an ideographic space
    ],
)
def test_text_a_reader_cannot_see_says_nothing(text):
    assert has_words(text) is False


@pytest.mark.parametrize("text", ["ok", "é", "e\u0301", "李", "ש", "٣", "…", "—", "20 m/s"])
def test_text_a_reader_can_see_says_something(text):
    assert has_words(text) is True
