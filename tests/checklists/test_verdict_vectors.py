"""checklists/verdicts.py against the shared verdict vectors (fixtures/verdict_vectors.json).

The phone runs the same vectors against its own reading of a sheet
(frontend/test/verdict_vectors.test.ts). The expected values are stated by hand, with their rule
beside each vector, in fixtures/verdict_vectors_reference.py, which writes the file.
"""

import importlib.util
import json
import math
from pathlib import Path
from typing import Any

import pytest

from checklists.verdicts import evaluate

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures"
DOCUMENT = json.loads((FIXTURES / "verdict_vectors.json").read_text(encoding="utf-8"))
VECTORS = DOCUMENT["vectors"]


def _close(actual: Any, expected: dict[str, Any]) -> bool:
    value = expected["value"]
    tolerance = max(expected.get("rel_tol", 0.0) * abs(value), expected.get("abs_tol", 0.0))
    return isinstance(actual, float) and math.isfinite(actual) and abs(actual - value) <= tolerance


def test_the_file_is_what_its_reference_script_writes():
    spec = importlib.util.spec_from_file_location(
        "verdict_vectors_reference", FIXTURES / "verdict_vectors_reference.py"
    )
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    assert module.build() == DOCUMENT, "run python fixtures/verdict_vectors_reference.py"


def test_the_vectors_cover_every_kind_of_item_and_outcome():
    kinds = {item["kind"] for v in VECTORS for item in v["items"]}
    verdicts = {e["verdict"] for v in VECTORS for e in v["expected"]["items"]}
    assert kinds == {"tick", "reading", "series", "calc", "photo", "note"}
    assert verdicts == {"pass", "fail", "na", "recorded"}
    assert len({v["name"] for v in VECTORS}) == len(VECTORS)


@pytest.mark.parametrize("vector", VECTORS, ids=[v["name"] for v in VECTORS])
def test_vector(vector: dict[str, Any]) -> None:
    outcome = evaluate(vector["items"], vector["entries"], vector["context"])
    expected = vector["expected"]
    assert [r.key for r in outcome.items] == [e["key"] for e in expected["items"]]
    for result, want in zip(outcome.items, expected["items"], strict=True):
        where = f"{vector['name']}: {result.key}"
        assert result.verdict == want["verdict"], f"{where}: {result.message}"
        if "margin" in want:
            if want["margin"] is None:
                assert result.margin is None, where
            else:
                assert _close(result.margin, want["margin"]), f"{where}: margin {result.margin}"
        if "message" in want:
            assert result.message == want["message"], where
        if "caution" in want:
            caution = result.working.get("caution_below")
            assert (caution is not None) == want["caution"], where
    assert outcome.verdict == expected["verdict"]
    assert [r.key for r in outcome.blocking_failures] == expected["blocking_failures"]
