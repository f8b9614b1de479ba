"""Every calculation fails closed on any finite JSON input: a verdict or an error naming a field.

Numbers at the edges of binary64 (IEEE 754-2019: largest finite about 1.8e308, smallest positive
subnormal 5e-324) and integers too large for a float, through the library, the HTTP endpoint and
a sync batch carrying a sheet. No other exception, no 500, no infinite or undefined number in a
passing answer, and nothing stored for a refused sheet.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import pytest

from compliance.engineering import CalcResult, run

OUT_OF_RANGE_PATH = Path(__file__).resolve().parents[2] / "fixtures" / "calc_out_of_range.json"
OUT_OF_RANGE: list[dict[str, Any]] = json.loads(OUT_OF_RANGE_PATH.read_text(encoding="utf-8"))[
    "cases"
]


@pytest.mark.parametrize("case", OUT_OF_RANGE, ids=lambda c: f"{c['calc']}: {c['why']}")
def test_working_beyond_binary64_fails_closed(case: dict[str, Any]) -> None:
    """The shared out-of-range cases (the phone's port runs the same file)."""
    result = run(case["calc"], case["inputs"])
    assert isinstance(result, CalcResult)
    body = result.to_dict()
    assert (body["verdict"], body["governing"], body["margin"]) == ("fail", "out_of_range", None)
    assert case["quantity"] in result.reason, result.reason
    assert result.steps[-2] == result.reason
    assert result.steps[-1] == "verdict: fail (governing check out_of_range, margin none)"
    json.dumps(body, allow_nan=False)


def test_out_of_range_cases_are_valid_inputs_for_every_port() -> None:
    """Each case passes validation: the failure comes from the working, not the input."""
    from compliance.engineering import CALCULATIONS

    for case in OUT_OF_RANGE:
        CALCULATIONS[case["calc"]].validate(case["inputs"])
        assert all(isinstance(v, int | float) and math.isfinite(v) for v in case["inputs"].values())
