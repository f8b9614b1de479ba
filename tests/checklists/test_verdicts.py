"""Direct tests of the verdict engine (checklists/verdicts.py): the refusals, conversions and
working a sheet's answer carries, which the shared vectors (test_verdict_vectors.py) leave out
because the phone never produces them."""

import pytest

from checklists.verdicts import EntryError, MissingSource, evaluate, input_words, resolve

TICK = {"key": "lips", "kind": "tick", "label": "Cup lips sound", "blocking": True}
VACUUM = {
    "key": "vacuum",
    "kind": "reading",
    "label": "Working vacuum",
    "blocking": True,
    "unit": "kPa",
    "limits": {"min": {"profile": "min_vacuum_kpa"}},
}
LENGTH = {
    "key": "length",
    "kind": "reading",
    "label": "Length needed for the drop",
    "blocking": True,
    "unit": "m",
    "limits": {"max": {"value": 200}},
}
GUST = {
    "key": "gust",
    "kind": "reading",
    "label": "Gust on the roof",
    "blocking": True,
    "unit": "m/s",
    "limits": {"max": {"value": 14}},
}
SERIES = {
    "key": "decay",
    "kind": "series",
    "label": "Decay readings",
    "blocking": True,
    "unit": "kPa",
    "min_samples": 3,
}
PROFILE = {
    "profile": {
        "min_vacuum_kpa": {"value": 50, "unit": "kPa"},
        "band": {"value": 0.2, "unit": "", "source": " Within a fifth of the limit. "},
    }
}


def refusal(items, entries, context=PROFILE) -> EntryError:
    with pytest.raises(EntryError) as caught:
        evaluate(items, entries, context)
    return caught.value


@pytest.mark.parametrize(
    ("items", "entries", "field", "words"),
    [
        (
            [TICK],
            {"lips": {"value": "pass"}, "other": {"value": 1}},
            "entries.other",
            "Not an item",
        ),
        ([TICK], {}, "entries.lips", "needs an entry"),
        ([TICK], {"lips": "pass"}, "entries.lips", "object with a value"),
        ([TICK], {"lips": {"value": "ok"}}, "entries.lips.value", "pass, fail or na"),
        (
            [TICK],
            {"lips": {"value": "na"}},
            "entries.lips.value",
            "cannot be marked not applicable",
        ),
        ([VACUUM], {"vacuum": {"value": "62"}}, "entries.vacuum.value", "Must be a number."),
        ([VACUUM], {"vacuum": {"value": True}}, "entries.vacuum.value", "Must be a number."),
        ([VACUUM], {"vacuum": {"value": 10**400}}, "entries.vacuum.value", "finite"),
        (
            [VACUUM],
            {"vacuum": {"value": 62, "unit": 1}},
            "entries.vacuum.unit",
            "A unit is a text.",
        ),
        (
            [VACUUM],
            {"vacuum": {"value": 62, "unit": "kN"}},
            "entries.vacuum.unit",
            "Expected a reading in kPa",
        ),
        (
            [VACUUM],
            {"vacuum": {"value": 1e307, "unit": "bar"}},
            "entries.vacuum.value",
            "beyond the largest",
        ),
        # A slipped minus sign: a gust of -20 m/s passed the profile's maximum, and a hose
        # pressure of -500 kPa its rating. Speeds, pressures, forces, masses and times are never
        # below zero.
        (
            [GUST],
            {"gust": {"value": -20, "unit": "m/s"}},
            "entries.gust.value",
            "A reading in m/s is never below zero: -20 m/s has a slipped sign.",
        ),
        (
            [GUST],
            {"gust": {"value": -36, "unit": "km/h"}},
            "entries.gust.value",
            "-36 km/h has a slipped sign",
        ),
        (
            [VACUUM],
            {"vacuum": {"value": -62}},
            "entries.vacuum.value",
            "A reading in kPa is never below zero",
        ),
        # A line length of -250 m passed the line's 200 m maximum.
        (
            [LENGTH],
            {"length": {"value": -250, "unit": "m"}},
            "entries.length.value",
            "A reading in m is never below zero: -250 m has a slipped sign.",
        ),
        (
            [SERIES],
            {"decay": {"value": [[0, 62], [30, -61], [60, 60]]}},
            "entries.decay.value[1]",
            "A reading in kPa is never below zero",
        ),
        (
            [SERIES],
            {"decay": {"value": [[0, 62]]}},
            "entries.decay.value",
            "list of [seconds, reading]",
        ),
        (
            [SERIES],
            {"decay": {"value": [[0, 62], [30]]}},
            "entries.decay.value[1]",
            "[seconds, reading]",
        ),
        (
            [SERIES],
            {"decay": {"value": [[-1, 62], [30, 61]]}},
            "entries.decay.value[0][0]",
            "negative",
        ),
        (
            [SERIES],
            {"decay": {"value": [[0, 62], [0, 61]]}},
            "entries.decay.value[1][0]",
            "must increase",
        ),
        (
            [SERIES],
            {"decay": {"value": [[0, 62], [30, "x"]]}},
            "entries.decay.value[1][1]",
            "number",
        ),
    ],
)
def test_a_malformed_entry_is_refused_naming_its_field(items, entries, field, words):
    error = refusal(items, entries)
    assert error.field == field
    assert words in error.message


def test_photo_and_note_entries_of_the_wrong_type_are_refused():
    photo = {"key": "p", "kind": "photo", "label": "Photo", "blocking": False}
    note = {"key": "n", "kind": "note", "label": "Note", "blocking": False}
    assert refusal([photo], {"p": {"value": [1]}}).field == "entries.p.value"
    assert refusal([note], {"n": {"value": 3}}).field == "entries.n.value"
    required = {**photo, "required": True}
    assert refusal([required], {}).message == "This item needs an entry."


def test_a_reading_in_another_unit_is_kept_in_the_items_unit_and_its_entry_noted():
    # 1 bar = 100 kPa, by definition (NIST SP 811, appendix B).
    outcome = evaluate([VACUUM], {"vacuum": {"value": 0.62, "unit": "bar"}}, PROFILE)
    (result,) = outcome.items
    assert result.value == pytest.approx(62.0)
    assert result.unit == "kPa"
    assert result.verdict == "pass"
    assert result.working["as_entered"] == {"value": 0.62, "unit": "bar"}
    assert result.working["limits"] == {
        "min": {"value": 50.0, "source": {"profile": "min_vacuum_kpa"}}
    }


def test_a_series_in_another_unit_is_converted_sample_by_sample():
    samples = [[0, 0.62], [30, 0.61], [60, 0.60]]
    outcome = evaluate([SERIES], {"decay": {"value": samples, "unit": "bar"}}, {})
    (result,) = outcome.items
    assert result.value == [
        [0.0, pytest.approx(62.0)],
        [30.0, pytest.approx(61.0)],
        [60.0, pytest.approx(60.0)],
    ]
    assert result.working["as_entered"] == {"value": samples, "unit": "bar"}


def test_a_caution_says_its_band_its_margin_and_the_profiles_reason():
    item = {**VACUUM, "caution_below": {"profile": "band"}}
    (result,) = evaluate([item], {"vacuum": {"value": 54, "unit": "kPa"}}, PROFILE).items
    # (54 - 50) / 50 = 0.08: under the 0.2 band, shown as whole percent rounded down.
    assert result.working["caution_below"] == {
        "band": 0.2,
        "source": {"profile": "band"},
        "message": "Passes, but within 20 % of its limit (margin 8 %):"
        " Within a fifth of the limit.",
    }


def test_the_sheet_fails_on_any_failed_item_and_stops_work_on_a_blocking_one():
    loose = {**TICK, "key": "tidy", "label": "Roof tidy", "blocking": False}
    outcome = evaluate([TICK, loose], {"lips": {"value": "pass"}, "tidy": {"value": "fail"}}, {})
    assert outcome.verdict == "fail"
    assert outcome.blocking_failures == ()
    outcome = evaluate([TICK, loose], {"lips": {"value": "fail"}, "tidy": {"value": "pass"}}, {})
    assert [r.key for r in outcome.blocking_failures] == ["lips"]
    assert outcome.items[0].failed_blocking


def test_a_calculation_keeps_its_working_and_the_inputs_it_was_given():
    item = {
        "key": "water",
        "kind": "calc",
        "label": "Water for the day",
        "blocking": True,
        "calc": "water-use",
        "inputs": {
            "area_m2": {"value": 1200},
            "litres_per_m2": {"value": 0.8},
            "rate_m2_per_h": {"value": 150},
        },
    }
    (result,) = evaluate([item], {}, {}).items
    # No supply given: nothing to check, a pass with no margin (engineering/water_use.py).
    assert result.verdict == "pass"
    assert result.margin is None
    assert result.value["litres_l"] == pytest.approx(960.0)
    assert result.working["name"] == "water-use"
    assert result.working["steps"]


def test_resolve_reads_a_profile_threshold_as_its_value_and_words_what_is_missing():
    context = {"profile": {"a": {"value": 3, "unit": "s"}, "b": 4}, "drop": {}, "robot": {}}
    assert resolve({"profile": "a"}, context, {}, {}) == 3
    assert resolve({"profile": "b"}, context, {}, {}) == 4
    assert resolve({"value": 7}, context, {}, {}) == 7
    assert resolve({"output": "calc.x"}, context, {}, {"calc": {"x": 9}}) == 9
    for source, words in [
        ({"profile": "c"}, "the site's profile has no c"),
        ({"drop": "length_m"}, "the drop has no length m recorded"),
        ({"anchor": "rated_capacity_kn"}, "the anchor has no rated capacity kn recorded"),
        (
            {"safety_line": "mbs_kn"},
            "the safety line's register entry has no mbs kn (mbs_kn) recorded",
        ),
        ({"reading": "r"}, "reading 'r' has no value"),
        ({"output": "calc.y"}, "output 'calc.y' is not available"),
    ]:
        with pytest.raises(MissingSource) as caught:
            resolve(source, context, {}, {"calc": {"x": 9}})
        assert str(caught.value) == words


def test_input_words_name_an_input_as_the_sheet_shows_it():
    labels = {"rows": "Rows of cups counted", "hold": "Hold on wet glass"}
    assert (
        input_words({"reading": "rows"}, labels, "cup_rows")
        == "the reading \u201cRows of cups counted\u201d"
    )
    assert (
        input_words({"output": "hold.min_vacuum_kpa"}, labels, "x")
        == "the min vacuum kpa worked out in \u201cHold on wet glass\u201d"
    )
    assert input_words({"value": 4}, labels, "cups") == "the checklist's fixed cups (4)"
    assert input_words({"robot": "mass_kg"}, labels, "m") == "the robot's mass kg"
    assert input_words({"crane": "reach_m"}, labels, "r") == "the crane's reach m"
    assert input_words(None, labels, "wind_ms") == "wind ms"


def test_a_note_longer_than_a_record_page_holds_sensibly_is_refused():
    """A note is capped like the sheet's remarks (a pasted log would fill pages of the record
    and the phone's storage); the limit itself is kept."""
    note = {"key": "n", "kind": "note", "label": "Note", "blocking": False}
    error = refusal([note], {"n": {"value": "x" * 8001}})
    assert (error.field, error.message) == (
        "entries.n.value",
        "A note of at most 8000 characters.",
    )
    kept = evaluate([note], {"n": {"value": "y" * 8000}}, {})
    assert kept.items[0].value == "y" * 8000


CALC = {
    "key": "hold",
    "kind": "calc",
    "label": "Vacuum margin",
    "blocking": True,
    "calc": "vacuum-decay",
    "inputs": {},
}


@pytest.mark.parametrize(
    ("items", "entries", "field"),
    [
        # A misspelt unit key read as "no unit given" took 4500 lbf as 4500 kPa and passed.
        ([VACUUM], {"vacuum": {"value": 4500, "units": "lbf"}}, "entries.vacuum.units"),
        (
            [SERIES],
            {"decay": {"value": [[0, 62], [30, 61], [60, 60]], "Unit": "bar"}},
            "entries.decay.Unit",
        ),
        ([TICK], {"lips": {"value": "pass", "note": "checked twice"}}, "entries.lips.note"),
        ([TICK], {"lips": {"value": "pass", "unit": "kPa"}}, "entries.lips.unit"),
        (
            [{"key": "n", "kind": "note", "label": "Note", "blocking": False}],
            {"n": {"vlaue": "base plate cracked"}},
            "entries.n.vlaue",
        ),
    ],
)
def test_an_entry_holding_a_field_its_item_does_not_read_is_refused_naming_it(
    items, entries, field
):
    error = refusal(items, entries)
    assert (error.field, error.message) == (field, "Unknown field.")


def test_an_entry_for_a_calculated_item_is_refused_not_ignored():
    error = refusal([CALC], {"hold": {"value": 12}})
    assert error.field == "entries.hold"
    assert error.message == "A calculated item takes no entry: the server works it out."
