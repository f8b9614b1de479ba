"""The result shape shared with the Django side and the phone's port."""

from __future__ import annotations

import ast
import dataclasses
import json
from pathlib import Path

import pytest

from compliance.engineering import CALCULATIONS, CalcResult, run
from compliance.engineering.working import num, pct

from .examples import BY_NAME, DECAY, WATER, vary

PACKAGE = Path(__file__).resolve().parents[2] / "compliance" / "engineering"

UNIT_SUFFIXES = (
    "_n",
    "_kn",
    "_kpa",
    "_m",
    "_m2",
    "_kg",
    "_s",
    "_ms",
    "_l",
    "_h",
    "_l_per_h",
    "_kpa_per_min",
    "_kpa_per_s",
    "_mbar_l_per_s",
    "_kgm3",
    "_pa_s",
    "_pa",
    "_kn_per_m",
)
DIMENSIONLESS = {
    "facade_zone",
    "wind_governing",
    "cpe",
    "turbulence_intensity",
    "gust_factor",
    "governing_position",
    "readings",
    "achieved_safety_factor",
    "anchor_factor",
    "line_factor",
    "dynamic_factor",
    "reynolds",
    "friction_factor",
    "fit",
    "linear_r2",
    "exponential_r2",
    "beaufort",
    "profile_ratio",
    "terrain_factor_kr",
    "alpha",
    "flow_regime",
}

EDGE_CASES = [
    *BY_NAME.items(),
    ("vacuum-decay", vary(DECAY, samples=[[0, 50], [60, 50], [120, 50], [180, 50]])),
    ("vacuum-decay", vary(DECAY, samples=[[0, 50], [60, 20], [120, 10], [180, 0]])),
    ("vacuum-decay", vary(DECAY, samples=[[0, 50], [1, 50], [2, 50]])),
    ("vacuum-decay", vary(DECAY, samples=[[0, 50], [60, 51], [120, 52], [180, 53]])),
    ("water-line", vary(WATER, flow_lpm=0.0, drop_m=0.0, top_head_m=0.0)),
    ("water-line", vary(WATER, flow_lpm=1e-300)),
    ("suction-hold", vary(BY_NAME["suction-hold"], vacuum_kpa=0.0)),
    ("wind-at-height", vary(BY_NAME["wind-at-height"], speed_ms=0.0)),
    ("water-use", vary(BY_NAME["water-use"], supply_l=None)),
]


@pytest.mark.parametrize(("calc", "inputs"), EDGE_CASES)
def test_to_dict_is_strict_json(calc: str, inputs: dict[str, object]) -> None:
    data = run(calc, inputs).to_dict()
    text = json.dumps(data, allow_nan=False)
    assert json.loads(text) == data
    assert set(data) == {
        "name",
        "inputs",
        "outputs",
        "verdict",
        "margin",
        "governing",
        "steps",
        "reason",
        "caution",
    }
    assert data["name"] == calc
    assert data["verdict"] in ("pass", "fail")
    assert data["steps"] and all(isinstance(s, str) for s in data["steps"])  # type: ignore[union-attr]
    assert "licensed engineer" in data["caution"]  # type: ignore[operator]


@pytest.mark.parametrize(("calc", "inputs"), EDGE_CASES)
def test_margin_sign_matches_the_verdict(calc: str, inputs: dict[str, object]) -> None:
    result = run(calc, inputs)
    if result.margin is not None:
        assert (result.margin >= 0) == (result.verdict == "pass")
    elif result.verdict == "fail":
        # Only an inconclusive check fails with no margin, and it says so.
        assert "margin none: inconclusive" in result.steps[-1]
        assert result.reason.endswith(("repeat the test.", "Start the test again."))
    else:
        assert result.verdict == "pass"


@pytest.mark.parametrize("calc", list(CALCULATIONS))
def test_output_keys_carry_their_unit(calc: str) -> None:
    for key in run(calc, BY_NAME[calc]).outputs:
        assert key in DIMENSIONLESS or key.endswith(UNIT_SUFFIXES), key


def test_inputs_are_normalised_with_defaults() -> None:
    result = run("suction-hold", BY_NAME["suction-hold"])
    assert result.inputs["brush_push_n"] == 0.0
    assert result.inputs["hose_od_mm"] == 0.0
    assert result.to_dict()["inputs"]["vacuum_kpa"] == 21.0  # type: ignore[index]


def test_result_is_frozen() -> None:
    result = run("water-use", BY_NAME["water-use"])
    assert isinstance(result, CalcResult)
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.verdict = "fail"  # type: ignore[misc]
    with pytest.raises(TypeError):
        result.outputs["litres_l"] = 0.0  # type: ignore[index]


def test_calculation_names() -> None:
    assert set(CALCULATIONS) == {
        "suction-hold",
        "vacuum-decay",
        "arrest-load",
        "wind-at-height",
        "water-line",
        "suspended-mass",
        "water-use",
        "anchor-tag",
    }
    for name, calc in CALCULATIONS.items():
        assert calc.name == name
        assert all(isinstance(f.describe(), dict) for f in calc.fields)


ALLOWED_IMPORTS = {
    "__future__",
    "math",
    "itertools",
    "collections.abc",
    "dataclasses",
    "types",
    "typing",
}


@pytest.mark.parametrize("path", sorted(PACKAGE.glob("*.py")), ids=lambda p: p.name)
def test_package_uses_the_standard_library_only(path: Path) -> None:
    """No Django, numpy or scipy: the package stays portable to TypeScript."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                assert alias.name in ALLOWED_IMPORTS, alias.name
        elif isinstance(node, ast.ImportFrom) and node.level == 0:
            assert node.module in ALLOWED_IMPORTS, node.module


@pytest.mark.parametrize(
    ("value", "text"),
    [
        (950.0176, "950"),
        (0.0113097, "0.01131"),
        (21000.0, "21000"),
        (2.0, "2"),
        (9999.7, "10000"),
        (4, "4"),
        (-5.5, "-5.5"),
        (0.0, "0"),
        (1.23456e-9, "1.235e-9"),
        (float("inf"), "infinite"),
    ],
)
def test_number_formatting(value: float, text: str) -> None:
    assert num(value) == text


def test_percent_formatting() -> None:
    assert pct(0.2543) == "+25.4 %"
    assert pct(-0.05) == "-5 %"


@pytest.mark.parametrize(
    ("fraction", "passed", "shown"),
    [
        (-0.003, False, "-1 %"),
        (-0.0, False, "-1 %"),
        (-0.25, False, "-25 %"),
        (0.004, True, "+0 %"),
        (0.129, True, "+12 %"),
        (0.0, True, "+0 %"),
    ],
)
def test_a_failing_margin_never_reads_as_plus_zero(
    fraction: float, passed: bool, shown: str
) -> None:
    """Rounded toward the verdict: "+0 %" beside a failed item reads as a pass."""
    from compliance.engineering.working import whole_pct

    assert whole_pct(fraction, passed=passed) == shown
