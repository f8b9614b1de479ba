"""The meanings of a signature, shared with the phone as data (fixtures/signature_meanings.json).

The phone shows these words for the supervisor to choose from and the server seals the chosen
text into the record, so both must say the same; the phone's test reads the same file
(frontend/test/signoff.test.ts) instead of parsing Python source. It sits with the verdict
vectors as the other data the server shares with the phone.
"""

import json
from pathlib import Path

from compliance.records.services import MEANINGS

PATH = Path(__file__).resolve().parents[2] / "fixtures" / "signature_meanings.json"


def test_the_shared_file_says_what_the_server_seals():
    shared = json.loads(PATH.read_text(encoding="utf-8"))["meanings"]
    assert shared == MEANINGS, f"update {PATH.name} with the server's MEANINGS"
