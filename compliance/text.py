"""Whether a text a person typed says anything."""

import unicodedata

SILENT = frozenset(("Cc", "Cf", "Co", "Cn", "Cs", "Mn", "Me", "Zs", "Zl", "Zp"))
"""Categories that say nothing on their own: controls, invisible format characters (zero-width
spaces and joiners, word joiners, byte-order marks), private use, unassigned, marks with no
letter to sit on, and spaces (str.strip() keeps several of these)."""

BLANK_LETTERS = frozenset("\u2800\u3164\u115f\u1160\uffa0")
"""Characters filed as letters or symbols that print as nothing: the blank braille pattern
and the Hangul fillers."""


def has_words(text: str) -> bool:
    """Something a reader can see: not only white space, controls, invisible format characters,
    lone combining marks or blank letters."""
    return any(
        not ch.isspace() and ch not in BLANK_LETTERS and unicodedata.category(ch) not in SILENT
        for ch in text
    )
