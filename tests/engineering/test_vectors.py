"""The shared test vectors in fixtures/calc_vectors.json (the phone's port runs the same file)."""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import pytest

from compliance.engineering import CALCULATIONS, CalcInputError, run

VECTORS_PATH = Path(__file__).resolve().parents[2] / "fixtures" / "calc_vectors.json"
DOCUMENT: dict[str, Any] = json.loads(VECTORS_PATH.read_text(encoding="utf-8"))


def _close(actual: object, expected: dict[str, Any]) -> bool:
    value = expected["value"]
    if value is None or isinstance(value, str):
        return actual == value
    if not isinstance(actual, int | float) or isinstance(actual, bool):
        return False
    tolerance = max(expected.get("rel_tol", 0.0) * abs(value), expected.get("abs_tol", 0.0))
    return math.isfinite(actual) and abs(actual - value) <= tolerance


def test_file_shape() -> None:
    assert DOCUMENT["version"] == 1
    by_calc: dict[str, set[str]] = {}
    for vector in DOCUMENT["vectors"]:
        assert vector["calc"] in CALCULATIONS
        assert vector["source"]
        by_calc.setdefault(vector["calc"], set()).add(vector["expected"]["verdict"])
    for name in CALCULATIONS:
        assert by_calc[name] == {"pass", "fail"}
        assert sum(v["calc"] == name for v in DOCUMENT["vectors"]) >= 3
    names = [v["name"] for v in DOCUMENT["vectors"]]
    assert len(names) == len(set(names))


@pytest.mark.parametrize("vector", DOCUMENT["vectors"], ids=lambda v: f"{v['calc']}: {v['name']}")
def test_vector(vector: dict[str, Any]) -> None:
    result = run(vector["calc"], vector["inputs"]).to_dict()
    expected = vector["expected"]
    assert result["verdict"] == expected["verdict"]
    if "governing" in expected:
        assert result["governing"] == expected["governing"]
    if "margin" in expected:
        assert _close(result["margin"], expected["margin"]), (result["margin"], expected["margin"])
    outputs = result["outputs"]
    assert isinstance(outputs, dict)
    for key, want in expected["outputs"].items():
        assert key in outputs, key
        assert _close(outputs[key], want), (key, outputs[key], want)


@pytest.mark.parametrize(
    "case", DOCUMENT["invalid"], ids=lambda c: f"{c['calc']}: {c['field']} ({c['why']})"
)
def test_invalid_case(case: dict[str, Any]) -> None:
    with pytest.raises(CalcInputError) as caught:
        run(case["calc"], case["inputs"])
    assert caught.value.field == case["field"], str(caught.value)


def test_vectors_match_the_independent_reference_script() -> None:
    """fixtures/calc_vectors_reference.py recomputes the vectors it covers from first principles
    (numpy.polyfit for the decay fits) without importing the package; the file must match."""
    import importlib.util

    path = VECTORS_PATH.parent / "calc_vectors_reference.py"
    spec = importlib.util.spec_from_file_location("calc_vectors_reference", path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    fresh = module.regenerate(DOCUMENT)
    assert fresh["vectors"] == DOCUMENT["vectors"]
    assert {v["calc"] for v in fresh["vectors"]} == set(CALCULATIONS)
