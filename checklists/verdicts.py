"""The verdict engine: turns a sheet's entries into a verdict per item, against its version.

Pure of the database: the caller supplies the items, the entries and a context of numbers
(profile thresholds, equipment ratings, the drop) that limits and calculations draw from.
"""

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from checklists.units import BeyondRange, UnitMismatch, to_unit
from compliance.engineering import CalcInputError, UnknownCalculation, run
from compliance.engineering.decay import schedule_problems
from compliance.engineering.working import num, whole_pct

TICK_VALUES = ("pass", "fail", "na")
NOTE_MAX = 8000
"""Longest note an item takes (the phone's field stops there too)."""


class EntryError(ValueError):
    """A malformed entry; ``field`` is the path to name in a 400 answer."""

    def __init__(self, field: str, message: str) -> None:
        super().__init__(f"{field}: {message}")
        self.field = field
        self.message = message


@dataclass(frozen=True)
class ItemResult:
    key: str
    kind: str
    label: str
    blocking: bool
    verdict: str  # pass / fail / na / recorded
    value: Any
    unit: str = ""
    margin: float | None = None
    message: str = ""
    working: dict[str, Any] = field(default_factory=dict)

    @property
    def failed_blocking(self) -> bool:
        return self.blocking and self.verdict == "fail"


@dataclass(frozen=True)
class SheetOutcome:
    items: tuple[ItemResult, ...]

    @property
    def verdict(self) -> str:
        return "fail" if any(i.verdict == "fail" for i in self.items) else "pass"

    @property
    def blocking_failures(self) -> tuple[ItemResult, ...]:
        return tuple(i for i in self.items if i.failed_blocking)


class MissingSource(LookupError):
    pass


def _number(value: Any, field_path: str) -> float:
    """A finite float (-0.0 as 0.0). JSON allows integers of any length: one too large for a
    float (10**400) is refused as not finite, as the phone reads it as Infinity."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise EntryError(field_path, "Must be a number.")
    try:
        number = float(value)
    except OverflowError:
        number = math.inf
    if not math.isfinite(number):
        raise EntryError(field_path, "Must be a finite number.")
    return number + 0.0


def resolve(
    source: Mapping[str, Any],
    context: Mapping[str, Mapping[str, Any]],
    readings: Mapping[str, Any],
    outputs: Mapping[str, Mapping[str, Any]],
) -> Any:
    """Look up the number a limit or calculation input names."""
    ((kind, ref),) = source.items()
    if kind == "value":
        return ref
    if kind == "reading":
        if ref not in readings:
            raise MissingSource(f"reading {ref!r} has no value")
        return readings[ref]
    if kind == "output":
        item_key, _, out_key = ref.partition(".")
        try:
            return outputs[item_key][out_key]
        except KeyError:
            raise MissingSource(f"output {ref!r} is not available") from None
    namespace = context.get(kind)
    if namespace is None or namespace.get(ref) is None:
        what = ref.replace("_", " ")
        if kind == "profile":
            raise MissingSource(f"the site's profile has no {what}")
        if kind in ("drop", "anchor"):
            raise MissingSource(f"the {kind} has no {what} recorded")
        raise MissingSource(
            f"the {kind.replace('_', ' ')}'s register entry has no {what} ({ref}) recorded"
        )
    value = namespace[ref]
    if kind == "profile" and isinstance(value, Mapping):
        return value["value"]
    return value


REGISTER_WORDS = {
    "profile": "the site's profile's",
    "equipment": "this equipment's",
    "robot": "the robot's",
    "tether": "the tether's",
    "safety_line": "the safety line's",
    "hose": "the hose's",
    "anchor": "the anchor's",
    "drop": "the drop's",
}


def input_words(source: Any, labels: Mapping[str, str], name: str) -> str:
    """What a calculation input is, in the words of the sheet: the reading the operator typed,
    or the register value it came from, so a refusal never shows a raw key alone."""
    if not isinstance(source, Mapping) or len(source) != 1:
        return name.replace("_", " ")
    ((kind, ref),) = source.items()
    if kind == "reading":
        return f"the reading \u201c{labels.get(str(ref), str(ref))}\u201d"
    if kind == "output":
        item_key, _, out_key = str(ref).partition(".")
        return (
            f"the {out_key.replace('_', ' ')} worked out in"
            f" \u201c{labels.get(item_key, item_key)}\u201d"
        )
    if kind == "value":
        return f"the checklist's fixed {name.replace('_', ' ')} ({ref})"
    owner = REGISTER_WORDS.get(str(kind), f"the {kind}'s")
    return f"{owner} {str(ref).replace('_', ' ')}"


def _series_samples(item: Mapping[str, Any], value: Any, path: str) -> list[list[float]]:
    """A series entry as [seconds, reading] pairs with strictly increasing times; a malformed
    one is an EntryError naming the sample."""
    if not isinstance(value, list) or len(value) < 2:
        raise EntryError(f"{path}.value", "A series is a list of [seconds, reading] pairs.")
    samples: list[list[float]] = []
    for n, pair in enumerate(value):
        if not isinstance(pair, list | tuple) or len(pair) != 2:
            raise EntryError(f"{path}.value[{n}]", "Each sample is [seconds, reading].")
        t = _number(pair[0], f"{path}.value[{n}][0]")
        v = _number(pair[1], f"{path}.value[{n}][1]")
        if t < 0.0:
            raise EntryError(f"{path}.value[{n}][0]", "Sample times cannot be negative.")
        if samples and t <= samples[-1][0]:
            raise EntryError(f"{path}.value[{n}][0]", "Sample times must increase.")
        samples.append([t, v])
    return samples


def _seconds(
    source: Mapping[str, Any],
    context: Mapping[str, Mapping[str, Any]],
    readings: Mapping[str, Any],
    outputs: Mapping[str, Mapping[str, Any]],
) -> float:
    """A schedule's number in seconds. A profile threshold carries its unit: minutes or hours
    are converted (a bare number, or one without a unit, is seconds); any other unit is a
    schedule that cannot be found, never a number read as if it were seconds."""
    value = float(resolve(source, context, readings, outputs))
    ((kind, ref),) = source.items()
    threshold = (context.get("profile") or {}).get(ref) if kind == "profile" else None
    unit = threshold.get("unit") if isinstance(threshold, Mapping) else None
    if unit in (None, ""):
        return value
    try:
        return to_unit(value, str(unit), "s")
    except UnitMismatch:
        what = str(ref).replace("_", " ")
        raise MissingSource(f"the site's profile gives {what} in {unit}, not a time") from None


def _schedule_problems(
    item: Mapping[str, Any],
    samples: list[list[float]],
    context: Mapping[str, Any],
    readings: Mapping[str, Any],
    outputs: Mapping[str, Any],
) -> str:
    """Why a timed series does not keep its item's schedule, in words ("" when it does).

    The schedule's numbers come from sources (the profile, as a rule); a source that cannot be
    found fails the item. A version without a schedule keeps its old rule: at least
    `min_samples` readings.
    """
    min_count = int(item.get("min_samples", 3))
    schedule = item.get("schedule")
    if not schedule:
        if len(samples) < min_count:
            return f"{len(samples)} readings were taken; at least {min_count} are needed."
        return ""
    try:
        numbers = {
            name: _seconds(schedule[name], context, readings, outputs)
            for name in ("interval_s", "tolerance_s", "min_duration_s")
        }
    except (MissingSource, KeyError, TypeError, ValueError) as exc:
        return f"The test's schedule cannot be found ({exc}); treated as failed."
    t0 = samples[0][0]
    problems = schedule_problems(
        [t - t0 for t, _ in samples],
        interval_s=numbers["interval_s"],
        tolerance_s=numbers["tolerance_s"],
        min_duration_s=numbers["min_duration_s"],
        min_count=min_count,
    )
    if not problems:
        return ""
    return f"The test did not keep its schedule: {'; '.join(problems)}. Start it again."


NEVER_BELOW_ZERO = frozenset({"m/s", "kPa", "kN", "kg", "s", "L/min", "L", "mm", "m"})
"""Units whose readings are never negative here: speeds, the gauge's vacuum and pressures,
forces, masses, times, flows, lengths and heights (a line's length, slack, the clearance below,
the supply's height above the valve). A value below zero is a slipped sign (a gust of -20 m/s
passed a maximum of 14, a line length of -250 m a maximum of 200), refused by name rather than
judged. Temperatures are not in it."""


def _never_below_zero(unit: str, value: float, given: str, field_path: str) -> None:
    if unit in NEVER_BELOW_ZERO and value < 0:
        raise EntryError(
            field_path,
            f"A reading in {unit} is never below zero: {value:g} {given} has a slipped sign.",
        )


def _check_limits(
    item: Mapping[str, Any],
    value: float,
    context: Mapping[str, Any],
    readings: Mapping[str, Any],
    outputs: Mapping[str, Any],
) -> tuple[str, float | None, str, dict[str, Any]]:
    limits = item.get("limits") or {}
    used: dict[str, Any] = {}
    margins: list[float] = []
    problems: list[str] = []
    unit = item.get("unit", "")
    for bound in ("min", "max"):
        if bound not in limits:
            continue
        try:
            limit = float(resolve(limits[bound], context, readings, outputs))
        except MissingSource as exc:
            return "fail", None, f"Limit cannot be found ({exc}); treated as failed.", used
        used[bound] = {"value": limit, "source": limits[bound]}
        if bound == "min":
            margins.append((value - limit) / abs(limit) if limit else value - limit)
            if value < limit:
                problems.append(f"{value:g} {unit} is below the minimum of {limit:g} {unit}")
        else:
            margins.append((limit - value) / abs(limit) if limit else limit - value)
            if value > limit:
                problems.append(f"{value:g} {unit} is above the maximum of {limit:g} {unit}")
    margin = min(margins) if margins else None
    if problems:
        return "fail", margin, "; ".join(problems) + ".", used
    return ("pass" if used else "recorded"), margin, "", used


def _caution_below(
    item: Mapping[str, Any],
    verdict: str,
    margin: float | None,
    context: Mapping[str, Mapping[str, Any]],
    readings: Mapping[str, Any],
    outputs: Mapping[str, Mapping[str, Any]],
) -> dict[str, Any] | None:
    """The caution of a passing item within its band of its limit, or None.

    Only an item that names a band (`caution_below`, a source) gets one: a limit that already
    holds a standard's factor names none. A band that cannot be found, or is not a finite
    number, is ignored: the item still passes or fails on its limits alone.
    """
    source = item.get("caution_below")
    if not source or verdict != "pass" or margin is None:
        return None
    try:
        band = resolve(source, context, readings, outputs)
    except (MissingSource, KeyError, TypeError, ValueError):
        return None
    if isinstance(band, bool) or not isinstance(band, int | float) or not math.isfinite(band):
        return None
    band = float(band)
    if not margin < band:
        return None
    reason = ""
    ((kind, ref),) = source.items()
    if kind == "profile":
        threshold = (context.get("profile") or {}).get(ref)
        if isinstance(threshold, Mapping) and isinstance(threshold.get("source"), str):
            reason = threshold["source"].strip()
    shown = whole_pct(margin, passed=True).lstrip("+")
    message = f"Passes, but within {num(band * 100.0, 3)} % of its limit (margin {shown})"
    return {
        "band": band,
        "source": dict(source),
        "message": f"{message}: {reason}" if reason else f"{message}.",
    }


ENTRY_FIELDS = {"reading": ("value", "unit"), "series": ("value", "unit")}
"""The fields an entry of each kind may hold; every other kind's entry holds a value only."""


def evaluate(
    items: list[Mapping[str, Any]],
    entries: Mapping[str, Mapping[str, Any]],
    context: Mapping[str, Mapping[str, Any]],
) -> SheetOutcome:
    """Evaluate every item in order; raise EntryError for malformed or missing entries."""
    known = {item["key"] for item in items}
    for key in entries:
        if key not in known:
            raise EntryError(f"entries.{key}", "Not an item of this checklist version.")

    labels = {item["key"]: str(item.get("label", item["key"])) for item in items}
    readings: dict[str, Any] = {}
    outputs: dict[str, dict[str, Any]] = {}
    results: list[ItemResult] = []
    for item in items:
        key, kind, blocking = item["key"], item["kind"], bool(item["blocking"])
        path = f"entries.{key}"
        entry = entries.get(key)
        base = {"key": key, "kind": kind, "label": item["label"], "blocking": blocking}

        if kind == "calc":
            if entry is not None:
                raise EntryError(path, "A calculated item takes no entry: the server works it out.")
            try:
                inputs = {
                    name: resolve(src, context, readings, outputs)
                    for name, src in item["inputs"].items()
                }
            except MissingSource as exc:
                results.append(
                    ItemResult(
                        **base, verdict="fail", value=None, message=f"Cannot compute: {exc}."
                    )
                )
                continue
            try:
                calc = run(item["calc"], inputs)
            except (CalcInputError, UnknownCalculation) as exc:
                said = (
                    f"{input_words(item['inputs'].get(exc.field), labels, exc.field)} {exc.message}"
                    if isinstance(exc, CalcInputError)
                    else str(exc)
                )
                results.append(
                    ItemResult(
                        **base,
                        verdict="fail",
                        value=None,
                        message=f"Cannot compute: {said}.",
                        working={"inputs": inputs},
                    )
                )
                continue
            data = calc.to_dict()
            outputs[key] = data["outputs"]
            message = ""
            if data["verdict"] != "pass":
                check = str(data["governing"]).replace("_", " ")
                margin = data["margin"]
                short = (
                    f" (margin {whole_pct(margin, passed=False)})"
                    if isinstance(margin, float)
                    else ""
                )
                message = str(data["reason"]) or f"Fails its {check} check{short}."
            caution = _caution_below(
                item, data["verdict"], data["margin"], context, readings, outputs
            )
            if caution is not None:
                # Beside the calculation's own "caution" (its general words), not over it.
                data["caution_below"] = caution
            results.append(
                ItemResult(
                    **base,
                    verdict=data["verdict"],
                    value=data["outputs"],
                    margin=data["margin"],
                    message=message,
                    working=data,
                )
            )
            continue

        if entry is None:
            if kind in ("note", "photo") and not item.get("required", False):
                results.append(ItemResult(**base, verdict="recorded", value=None))
                continue
            raise EntryError(path, "This item needs an entry.")
        if not isinstance(entry, Mapping):
            raise EntryError(path, "An entry is an object with a value.")
        # A field the item does not read is refused, not dropped: a misspelt "units" read as
        # no unit at all took a reading in lbf as one in the item's unit.
        for name in entry:
            if name not in ENTRY_FIELDS.get(kind, ("value",)):
                raise EntryError(f"{path}.{str(name)[:80]}", "Unknown field.")
        value = entry.get("value")

        if kind == "tick":
            if value not in TICK_VALUES:
                raise EntryError(f"{path}.value", "A tick is pass, fail or na.")
            if value == "na" and not item.get("allow_na", False):
                raise EntryError(f"{path}.value", "This item cannot be marked not applicable.")
            verdict = {"pass": "pass", "fail": "fail", "na": "na"}[value]
            message = f"Marked failed: {item['label']}." if value == "fail" else ""
            results.append(ItemResult(**base, verdict=verdict, value=value, message=message))
        elif kind == "reading":
            number = _number(value, f"{path}.value")
            given = entry.get("unit", item["unit"])
            if not isinstance(given, str):
                raise EntryError(f"{path}.unit", "A unit is a text.")
            try:
                number_si = to_unit(number, given, item["unit"])
            except BeyondRange as exc:
                raise EntryError(f"{path}.value", str(exc)) from None
            except UnitMismatch as exc:
                raise EntryError(f"{path}.unit", str(exc)) from None
            _never_below_zero(item["unit"], number, given, f"{path}.value")
            readings[key] = number_si
            verdict, margin, message, used = _check_limits(
                item, number_si, context, readings, outputs
            )
            working: dict[str, Any] = {"limits": used}
            if given != item["unit"]:
                working["as_entered"] = {"value": number, "unit": given}
            caution = _caution_below(item, verdict, margin, context, readings, outputs)
            if caution is not None:
                working["caution_below"] = caution
            results.append(
                ItemResult(
                    **base,
                    verdict=verdict,
                    value=number_si,
                    unit=item["unit"],
                    margin=margin,
                    message=message,
                    working=working,
                )
            )
        elif kind == "series":
            samples = _series_samples(item, value, path)
            given = entry.get("unit", item["unit"])
            if not isinstance(given, str):
                raise EntryError(f"{path}.unit", "A unit is a text.")
            series_working: dict[str, Any] = {}
            if given != item["unit"]:
                # Readings in another unit of the same quantity (bar for kPa) are kept in the
                # item's unit, as a single reading is; the unit is never silently ignored.
                try:
                    samples = [[t, to_unit(v, given, item["unit"])] for t, v in samples]
                except BeyondRange as exc:
                    raise EntryError(f"{path}.value", str(exc)) from None
                except UnitMismatch as exc:
                    raise EntryError(f"{path}.unit", str(exc)) from None
                series_working["as_entered"] = {"value": value, "unit": given}
            for index, (_, sample) in enumerate(samples):
                _never_below_zero(item["unit"], sample, item["unit"], f"{path}.value[{index}]")
            readings[key] = samples
            problems = _schedule_problems(item, samples, context, readings, outputs)
            results.append(
                ItemResult(
                    **base,
                    verdict="fail" if problems else "recorded",
                    value=samples,
                    unit=item["unit"],
                    message=problems,
                    working=series_working,
                )
            )
        elif kind == "photo":
            photos = value if isinstance(value, list) else []
            if not all(isinstance(p, str) for p in photos):
                raise EntryError(f"{path}.value", "A photo entry is a list of photo ids.")
            if item.get("required", False) and not photos:
                results.append(
                    ItemResult(**base, verdict="fail", value=photos, message="A photo is required.")
                )
            else:
                results.append(ItemResult(**base, verdict="recorded", value=photos))
        elif kind == "note":
            if value is not None and not isinstance(value, str):
                raise EntryError(f"{path}.value", "A note is a text.")
            if value is not None and len(value) > NOTE_MAX:
                raise EntryError(f"{path}.value", f"A note of at most {NOTE_MAX} characters.")
            results.append(ItemResult(**base, verdict="recorded", value=value or ""))
    return SheetOutcome(items=tuple(results))
