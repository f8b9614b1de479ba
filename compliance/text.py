"""Whether a text a person typed says anything."""

import unicodedata


def has_words(text: str) -> bool:
    """Something besides white space and invisible format characters (zero-width spaces and
    joiners, word joiners, byte-order marks: Unicode category Cf), which str.strip() keeps."""
    return any(not ch.isspace() and unicodedata.category(ch) != "Cf" for ch in text)
