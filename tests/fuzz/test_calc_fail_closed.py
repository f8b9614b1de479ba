"""Every calculation fails closed on any finite JSON input: a verdict or an error naming a field.

Numbers at the edges of binary64 (IEEE 754-2019: largest finite about 1.8e308, smallest positive
subnormal 5e-324) and integers too large for a float, through the library, the HTTP endpoint and
a sync batch carrying a sheet. No other exception, no 500, no infinite or undefined number in a
passing answer, and nothing stored for a refused sheet.
"""

from __future__ import annotations

import json
import math
import uuid
from pathlib import Path
from typing import Any

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError
from django.urls import reverse
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from checklists.models import CheckSheet, ItemEntry
from compliance.engineering import CALCULATIONS, CalcInputError, CalcResult, Field, run
from compliance.jobs.selectors import job_requirements
from compliance.models import Hold, HoldClearance, JobTransition, SyncReceipt
from tests.conftest import client_for
from tests.engineering.examples import BY_NAME
from tests.factories import published_checklist, reading, tick

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
    for case in OUT_OF_RANGE:
        CALCULATIONS[case["calc"]].validate(case["inputs"])
        assert all(
            isinstance(v, str) or (isinstance(v, int | float) and math.isfinite(v))
            for v in case["inputs"].values()
        )


# Strategies ------------------------------------------------------------------------------------

EXTREMES = [
    0,
    0.0,
    -0.0,
    5e-324,
    -5e-324,
    2.2250738585072014e-308,
    1e-300,
    1e-12,
    1.0,
    1e12,
    1e155,
    1e300,
    1e308,
    1.7976931348623157e308,
    -1e308,
    10**400,
    -(10**400),
    2**1024,
]
numbers = st.one_of(
    st.sampled_from(EXTREMES),
    st.floats(allow_nan=False, allow_infinity=False),
    st.integers(min_value=-(10**400), max_value=10**400),
    st.integers(min_value=-1000, max_value=1000),
)
wrong_types = st.one_of(
    st.none(),
    st.booleans(),
    st.text(max_size=6),
    st.lists(numbers, max_size=2),
    st.dictionaries(st.text(max_size=3), numbers, max_size=1),
)


def in_bounds(spec: Field) -> st.SearchStrategy[Any]:
    """Plausible values: inside the declared bounds, where most of the working is reached."""
    low = spec.at_least if spec.at_least is not None else spec.greater_than
    high = spec.at_most
    if spec.kind == "integer":
        return st.integers(min_value=int(low or 0), max_value=int(high or (low or 0) + 64))
    return st.floats(
        min_value=low,
        max_value=high,
        exclude_min=spec.greater_than is not None and spec.at_least is None,
        allow_nan=False,
        allow_infinity=False,
    )


def tidy_series(spec: Field, min_size: int = 0) -> st.SearchStrategy[Any]:
    """[seconds, value] pairs with increasing times and values within the declared bounds."""
    times = st.lists(st.floats(0.0, 1e9), min_size=min_size, max_size=8, unique=True)
    value = st.floats(spec.at_least or 0.0, spec.at_most or 1e6)
    return times.map(sorted).flatmap(
        lambda ts: st.lists(value, min_size=len(ts), max_size=len(ts)).map(
            lambda vs: [[t, v] for t, v in zip(ts, vs, strict=True)]
        )
    )


def series_values(spec: Field) -> st.SearchStrategy[Any]:
    rough = st.lists(st.lists(numbers, min_size=0, max_size=3), max_size=6)
    return st.one_of(tidy_series(spec), rough)


def value_for(spec: Field) -> st.SearchStrategy[Any]:
    if spec.kind == "choice":
        return st.one_of(st.sampled_from(spec.choices), numbers, wrong_types)
    if spec.kind == "series":
        return st.one_of(series_values(spec), numbers, wrong_types)
    return st.one_of(in_bounds(spec), in_bounds(spec), numbers, wrong_types)


def plausible(spec: Field) -> st.SearchStrategy[Any]:
    if spec.kind == "choice":
        return st.sampled_from(spec.choices)
    if spec.kind == "series":
        return series_values(spec)
    return in_bounds(spec)


@st.composite
def calc_inputs(draw: st.DrawFn, name: str) -> dict[str, Any]:
    """A JSON object for calculation `name`, round-tripped through JSON text. Three shapes, so
    that most examples reach the working: every field from a valid example or within its
    declared bounds (edges included); the example with one field spoiled (an extreme, a huge
    integer, a wrong type, null or missing); or any mix, now and then with an unknown key."""
    example = BY_NAME.get(name, {})
    fields = CALCULATIONS[name].fields
    shape = draw(st.sampled_from(["within", "within", "one", "one", "mix"]))
    inputs: dict[str, Any] = {}
    if shape == "within":
        for spec in fields:
            if spec.name in example and draw(st.booleans()):
                inputs[spec.name] = example[spec.name]
            elif spec.required or spec.name in example or draw(st.booleans()):
                inputs[spec.name] = draw(plausible(spec))
    elif shape == "one":
        inputs = dict(example)
        spec = draw(st.sampled_from(fields))
        change = draw(st.sampled_from(["value", "value", "value", "null", "missing"]))
        if change == "value":
            inputs[spec.name] = draw(value_for(spec))
        elif change == "null":
            inputs[spec.name] = None
        else:
            inputs.pop(spec.name, None)
    else:
        for spec in fields:
            action = draw(st.sampled_from(["example", "generated", "null", "missing"]))
            if action == "example" and spec.name in example:
                inputs[spec.name] = example[spec.name]
            elif action == "generated":
                inputs[spec.name] = draw(value_for(spec))
            elif action == "null":
                inputs[spec.name] = None
        if draw(st.booleans()):
            inputs[draw(st.text(min_size=1, max_size=8))] = draw(numbers)
    return json.loads(json.dumps(inputs))


def allowed_fields(name: str, inputs: dict[str, Any]) -> set[str]:
    """A refusal names a declared input, an unknown key that was sent, or "inputs"."""
    return {f.name for f in CALCULATIONS[name].fields} | set(inputs) | {"inputs"}


def assert_fails_closed(name: str, inputs: dict[str, Any]) -> dict[str, Any] | CalcInputError:
    """The one property: a JSON-safe pass/fail result, or an error naming a known field."""
    try:
        result = run(name, inputs)
    except CalcInputError as exc:
        assert exc.field in allowed_fields(name, inputs), (exc.field, inputs)
        assert isinstance(exc.message, str) and exc.message
        return exc
    assert isinstance(result, CalcResult)
    assert result.verdict in ("pass", "fail")
    body = result.to_dict()
    json.dumps(body, allow_nan=False)
    if result.verdict == "pass":
        numbers_out = [v for v in result.outputs.values() if isinstance(v, float)]
        assert all(math.isfinite(v) for v in numbers_out), result.outputs
        assert result.margin is None or math.isfinite(result.margin)
    return body


# The library ------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", sorted(CALCULATIONS))
@settings(max_examples=200, deadline=None)
@given(data=st.data())
def test_every_calculation_fails_closed_on_any_json(name: str, data: st.DataObject) -> None:
    assert_fails_closed(name, data.draw(calc_inputs(name)))


# The HTTP endpoint and the command ---------------------------------------------------------------


@pytest.mark.django_db
@settings(
    max_examples=100,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture],
)
@given(data=st.data())
def test_calc_endpoint_is_exactly_200_or_400_naming_the_field(operator, data) -> None:
    name = data.draw(st.sampled_from(sorted(CALCULATIONS)))
    inputs = data.draw(calc_inputs(name))
    text = json.dumps(inputs)
    response = client_for(operator).post(
        reverse("calc", args=[name]), text, content_type="application/json"
    )
    expected = assert_fails_closed(name, inputs)
    event(f"HTTP {response.status_code}")
    body = response.json()
    if isinstance(expected, CalcInputError):
        assert response.status_code == 400, body
        assert body == {expected.field: [expected.message]}
        with pytest.raises(CommandError) as caught:
            call_command("calc", name, "--input", text)
        assert str(caught.value) == f"{expected.field}: {expected.message}"
    else:
        assert response.status_code == 200, body
        assert body["verdict"] in ("pass", "fail")
        assert body == json.loads(json.dumps(expected))


# A sync batch carrying a sheet -------------------------------------------------------------------

LINE_ITEMS = [
    tick("condition"),
    reading("valve_pressure", "kPa", {"max": {"equipment": "rating_kpa"}}),
    reading("flow", "L/min", blocking=False),
    reading("water_temp", "°C", blocking=False),
    reading("working_vacuum", "kPa", blocking=False),
    {
        "key": "decay_series",
        "kind": "series",
        "label": "decay series",
        "reason": "test",
        "blocking": False,
        "unit": "kPa",
    },
    {
        "key": "line_pressure",
        "kind": "calc",
        "label": "line pressure",
        "reason": "test",
        "blocking": True,
        "calc": "water-line",
        "inputs": {
            "drop_m": {"drop": "height_m"},
            "hose_id_mm": {"equipment": "id_mm"},
            "hose_length_m": {"equipment": "length_m"},
            "flow_lpm": {"reading": "flow"},
            "roughness_mm": {"equipment": "roughness_mm"},
            "water_temp_c": {"reading": "water_temp"},
            "hose_rating_kpa": {"equipment": "rating_kpa"},
            "nozzle_min_kpa": {"robot": "nozzle_min_kpa"},
        },
    },
    {
        "key": "hold",
        "kind": "calc",
        "label": "hold",
        "reason": "test",
        "blocking": True,
        "calc": "suction-hold",
        "inputs": {
            "vacuum_kpa": {"reading": "working_vacuum"},
            "cup_diameter_m": {"robot": "cup_diameter_m"},
            "cups": {"robot": "cups_engaged"},
            "friction": {"robot": "friction"},
            "mass_kg": {"robot": "mass_kg"},
        },
    },
]

any_float = st.floats(allow_nan=False, allow_infinity=False)
READINGS = {  # item key: (unit, other units it may be entered in, plausible values)
    "valve_pressure": ("kPa", ["bar", "psi", "Pa", "mbar"], st.floats(0.0, 3000.0)),
    "flow": ("L/min", [], st.floats(0.0, 60.0)),
    "water_temp": ("°C", [], st.floats(0.0, 60.0)),
    "working_vacuum": ("kPa", ["bar", "psi", "Pa", "mbar"], st.floats(0.0, 101.325)),
}


@st.composite
def sheet_entries(draw: st.DrawFn) -> dict[str, Any]:
    """Entries for LINE_ITEMS: all well-formed (plausible or any finite float, in the item's
    unit or one it converts from), then, in most examples, one entry spoiled (an extreme or huge
    integer, a wrong type, an unknown unit, junk or missing)."""
    entries: dict[str, Any] = {"condition": {"value": "pass"}}
    for key, (unit, others, plausible_values) in READINGS.items():
        given: dict[str, Any] = {"value": draw(st.one_of(plausible_values, any_float))}
        written = draw(st.sampled_from([None, unit, *others]))
        if written is not None:
            given["unit"] = written
        entries[key] = given
    entries["decay_series"] = {
        "value": draw(tidy_series(CALCULATIONS["vacuum-decay"].fields[0], min_size=3))
    }
    spoil = draw(st.sampled_from([None, *entries]))
    if spoil is not None:
        how = draw(st.sampled_from(["value", "value", "unit", "junk", "missing"]))
        if how == "value":
            entries[spoil] = {**entries[spoil], "value": draw(st.one_of(numbers, wrong_types))}
        elif how == "unit":
            entries[spoil] = {
                **entries[spoil],
                "unit": draw(st.one_of(st.text(max_size=4), numbers)),
            }
        elif how == "junk":
            entries[spoil] = draw(wrong_types)
        else:
            del entries[spoil]
    return entries


@pytest.fixture
def line_version(db):
    return published_checklist("line-fuzz", "hose", LINE_ITEMS)


def stored() -> tuple[int, ...]:
    return (
        CheckSheet.objects.count(),
        ItemEntry.objects.count(),
        SyncReceipt.objects.count(),
        Hold.objects.count(),
        HoldClearance.objects.count(),
        JobTransition.objects.count(),
    )


@pytest.mark.django_db
@settings(
    max_examples=60,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture],
)
@given(entries=sheet_entries())
def test_a_synced_sheet_is_applied_whole_or_rejected_naming_the_field(
    job, operator, line_version, entries
) -> None:
    version = line_version
    hose = next(r for r in job_requirements(job) if r.subject.kind == "hose").subject.equipment
    record = {
        "type": "sheet",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "version": version.pk, "equipment": hose.pk, "entries": entries},
    }
    client = client_for(operator)
    before = stored()
    response = client.post(
        reverse("sync"), json.dumps({"records": [record]}), content_type="application/json"
    )
    assert response.status_code == 200, response.content[:300]
    (result,) = response.json()["results"]
    event(f"sheet {result['status']}")
    if result["status"] == "rejected":
        errors = result["errors"]
        event("rejected: " + ",".join(sorted(errors)))
        # Only entries are spoiled, so the error names an entry, in words.
        assert errors and all(k.startswith("entries.") for k in errors), errors
        assert all(m and isinstance(m, str) for v in errors.values() for m in v), errors
        assert stored() == before
        return
    assert result["status"] == "applied", result
    assert (stored()[0], stored()[2]) == (before[0] + 1, before[2] + 1)
    # The stored sheet can be shown: its numbers are JSON (the renderer refuses inf and NaN).
    assert client.get(reverse("sheet-detail", args=[result["sheet"]])).status_code == 200
