"""Declared input fields for the calculations and the one validator that checks them.

Every calculation declares its fields and cross-field rules here in the same terms, so the
server, the phone (a TypeScript port) and the error messages agree. Validation stops at the
first bad field: unknown fields first (in the order given), then the declared fields in their
declared order, then the cross-field rules in their declared order.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Literal

from .result import InputValue
from .working import num

FieldKind = Literal["number", "integer", "choice", "series"]
Default = float | int | str | None


class CalcInputError(Exception):
    """An input a calculation cannot use; `field` names it and `message` says why in English."""

    def __init__(self, field: str, message: str) -> None:
        super().__init__(f"{field}: {message}")
        self.field = field
        self.message = message


@dataclass(frozen=True)
class Field:
    """One input: its kind, unit, bounds and default (`required` False with no default means
    the field is optional and simply absent from the normalised inputs when not given)."""

    name: str
    kind: FieldKind
    unit: str
    description: str
    required: bool = True
    default: Default = None
    greater_than: float | None = None
    at_least: float | None = None
    at_most: float | None = None
    limit_reason: str = ""
    choices: tuple[str, ...] = ()
    min_items: int = 0

    def describe(self) -> dict[str, object]:
        """A plain description of the field for forms and for the phone's port."""
        return {
            "name": self.name,
            "kind": self.kind,
            "unit": self.unit,
            "description": self.description,
            "required": self.required,
            "default": self.default,
            "greater_than": self.greater_than,
            "at_least": self.at_least,
            "at_most": self.at_most,
            "choices": list(self.choices),
            "min_items": self.min_items,
        }


def number(
    name: str,
    unit: str,
    description: str,
    *,
    greater_than: float | None = None,
    at_least: float | None = None,
    at_most: float | None = None,
    limit_reason: str = "",
    default: float | None = None,
    optional: bool = False,
) -> Field:
    return Field(
        name=name,
        kind="number",
        unit=unit,
        description=description,
        required=default is None and not optional,
        default=None if default is None else float(default),
        greater_than=greater_than,
        at_least=at_least,
        at_most=at_most,
        limit_reason=limit_reason,
    )


def integer(
    name: str, unit: str, description: str, *, at_least: int, at_most: int | None = None
) -> Field:
    return Field(
        name=name,
        kind="integer",
        unit=unit,
        description=description,
        at_least=at_least,
        at_most=at_most,
    )


def choice(
    name: str, description: str, choices: tuple[str, ...], *, default: str | None = None
) -> Field:
    return Field(
        name=name,
        kind="choice",
        unit="",
        description=description,
        required=default is None,
        default=default,
        choices=choices,
    )


def series(
    name: str,
    unit: str,
    description: str,
    *,
    min_items: int,
    at_least: float,
    at_most: float,
    limit_reason: str,
) -> Field:
    """A list of [seconds, value] pairs, seconds not negative and strictly increasing."""
    return Field(
        name=name,
        kind="series",
        unit=unit,
        description=description,
        at_least=at_least,
        at_most=at_most,
        limit_reason=limit_reason,
        min_items=min_items,
    )


# Cross-field rules -------------------------------------------------------------------------


@dataclass(frozen=True)
class ExactlyOne:
    """Exactly one of several alternative groups of fields is given, each group complete."""

    alternatives: tuple[tuple[str, ...], ...]


@dataclass(frozen=True)
class AtMostOne:
    """At most one of these fields is given."""

    names: tuple[str, ...]


@dataclass(frozen=True)
class Together:
    """These fields are given all together or not at all."""

    names: tuple[str, ...]


@dataclass(frozen=True)
class AtMostFractionOf:
    """`name` is at most `fraction` times the value of `other`."""

    name: str
    other: str
    fraction: float
    reason: str


@dataclass(frozen=True)
class AtMostWhen:
    """`name` is at most `maximum` when the choice `when` equals `value`."""

    name: str
    maximum: float
    when: str
    value: str
    reason: str


@dataclass(frozen=True)
class OnlyWhen:
    """`name` may be given only when the choice `when` equals `value`."""

    name: str
    when: str
    value: str


Rule = ExactlyOne | AtMostOne | Together | AtMostFractionOf | AtMostWhen | OnlyWhen


# Validation ---------------------------------------------------------------------------------


class Inputs:
    """Validated, normalised inputs with typed access (numbers are floats, counts are ints)."""

    def __init__(self, values: Mapping[str, InputValue]) -> None:
        self._values = dict(values)

    def as_dict(self) -> dict[str, InputValue]:
        return dict(self._values)

    def has(self, name: str) -> bool:
        return name in self._values

    def number(self, name: str) -> float:
        value = self._values[name]
        if isinstance(value, float):
            return value
        raise TypeError(f"{name} is not a number")

    def optional_number(self, name: str) -> float | None:
        return self.number(name) if name in self._values else None

    def integer(self, name: str) -> int:
        value = self._values[name]
        if isinstance(value, int):
            return value
        raise TypeError(f"{name} is not a whole number")

    def text(self, name: str) -> str:
        value = self._values[name]
        if isinstance(value, str):
            return value
        raise TypeError(f"{name} is not text")

    def series(self, name: str) -> tuple[tuple[float, float], ...]:
        value = self._values[name]
        if isinstance(value, tuple):
            return value
        raise TypeError(f"{name} is not a series")


def _finite_number(field: str, value: object, what: str = "") -> float:
    """`value` as a finite float; -0.0 becomes 0.0.

    An integer too large for a float (JSON allows any length; the phone's JSON.parse reads it
    as Infinity) is "not finite" here too, so both ports refuse it with the same words.
    """
    prefix = f"{what} " if what else ""
    if isinstance(value, bool):
        raise CalcInputError(field, f"{prefix}must be a number, not true or false")
    if isinstance(value, str):
        raise CalcInputError(field, f"{prefix}must be a number, not text")
    if not isinstance(value, int | float):
        raise CalcInputError(field, f"{prefix}must be a number")
    try:
        result = float(value)
    except OverflowError:
        result = math.inf
    if not math.isfinite(result):
        raise CalcInputError(field, f"{prefix}must be a finite number")
    return result + 0.0


def _check_bounds(spec: Field, value: float, what: str = "") -> None:
    prefix = f"{what} " if what else ""
    unit = f" {spec.unit}" if spec.unit else ""
    reason = f" ({spec.limit_reason})" if spec.limit_reason else ""
    if spec.greater_than is not None and value <= spec.greater_than:
        if spec.greater_than == 0.0:
            problem = "cannot be negative" if value < 0.0 else "must be greater than zero"
            raise CalcInputError(spec.name, f"{prefix}{problem}")
        raise CalcInputError(
            spec.name, f"{prefix}must be greater than {num(spec.greater_than, 6)}{unit}"
        )
    if spec.at_least is not None and value < spec.at_least:
        if spec.at_least == 0.0:
            raise CalcInputError(spec.name, f"{prefix}cannot be negative")
        raise CalcInputError(spec.name, f"{prefix}must be at least {num(spec.at_least, 6)}{unit}")
    if spec.at_most is not None and value > spec.at_most:
        raise CalcInputError(
            spec.name, f"{prefix}must be at most {num(spec.at_most, 6)}{unit}{reason}"
        )


def _validate_number(spec: Field, raw: object) -> float:
    value = _finite_number(spec.name, raw)
    _check_bounds(spec, value)
    return value


def _validate_integer(spec: Field, raw: object) -> int:
    value = _finite_number(spec.name, raw)
    if not value.is_integer():
        raise CalcInputError(spec.name, "must be a whole number")
    _check_bounds(spec, value)
    return int(value)


def _validate_choice(spec: Field, raw: object) -> str:
    allowed = ", ".join(f'"{c}"' for c in spec.choices)
    if not isinstance(raw, str):
        raise CalcInputError(spec.name, f"must be text, one of {allowed}")
    wanted = raw.strip().casefold()
    for option in spec.choices:
        if option.casefold() == wanted:
            return option
    raise CalcInputError(spec.name, f'unknown value "{raw}"; use one of {allowed}')


def _validate_series(spec: Field, raw: object) -> tuple[tuple[float, float], ...]:
    if isinstance(raw, str | bytes) or not isinstance(raw, Sequence):
        raise CalcInputError(spec.name, "must be a list of [seconds, value] pairs")
    if len(raw) < spec.min_items:
        raise CalcInputError(spec.name, f"needs at least {spec.min_items} samples, got {len(raw)}")
    pairs: list[tuple[float, float]] = []
    for index, item in enumerate(raw, start=1):
        what = f"sample {index}"
        if isinstance(item, str | bytes) or not isinstance(item, Sequence) or len(item) != 2:
            raise CalcInputError(spec.name, f"{what} must be a [seconds, value] pair")
        seconds = _finite_number(spec.name, item[0], f"{what} time")
        value = _finite_number(spec.name, item[1], f"{what} value")
        if seconds < 0.0:
            raise CalcInputError(spec.name, f"{what} time cannot be negative")
        if pairs and seconds <= pairs[-1][0]:
            raise CalcInputError(
                spec.name,
                f"{what} time must be later than the sample before it "
                f"({num(pairs[-1][0])} s); times must strictly increase",
            )
        _check_bounds(spec, value, f"{what} value")
        pairs.append((seconds, value))
    return tuple(pairs)


def _validate_field(spec: Field, raw: object) -> InputValue:
    if spec.kind == "number":
        return _validate_number(spec, raw)
    if spec.kind == "integer":
        return _validate_integer(spec, raw)
    if spec.kind == "choice":
        return _validate_choice(spec, raw)
    return _validate_series(spec, raw)


def _apply_rule(rule: Rule, values: Mapping[str, InputValue]) -> None:
    if isinstance(rule, ExactlyOne):
        complete: list[tuple[str, ...]] = []
        for group in rule.alternatives:
            given = [n for n in group if n in values]
            if given and len(given) < len(group):
                missing = next(n for n in group if n not in values)
                raise CalcInputError(missing, f"is required with {given[0]}")
            if given:
                complete.append(group)
        described = " or ".join(" with ".join(g) for g in rule.alternatives)
        if not complete:
            raise CalcInputError(rule.alternatives[0][0], f"is required (give {described})")
        if len(complete) > 1:
            raise CalcInputError(complete[1][0], f"give {described}, not more than one")
    elif isinstance(rule, AtMostOne):
        given = [n for n in rule.names if n in values]
        if len(given) > 1:
            raise CalcInputError(given[1], f"give either {given[0]} or {given[1]}, not both")
    elif isinstance(rule, Together):
        given = [n for n in rule.names if n in values]
        if given and len(given) < len(rule.names):
            missing = next(n for n in rule.names if n not in values)
            raise CalcInputError(missing, f"is required with {given[0]}")
    elif isinstance(rule, AtMostFractionOf):
        value, other = values.get(rule.name), values.get(rule.other)
        if isinstance(value, float) and isinstance(other, float) and value > rule.fraction * other:
            raise CalcInputError(
                rule.name,
                f"must be at most {num(rule.fraction)} × {rule.other} "
                f"= {num(rule.fraction * other)} ({rule.reason})",
            )
    elif isinstance(rule, AtMostWhen):
        value = values.get(rule.name)
        if (
            values.get(rule.when) == rule.value
            and isinstance(value, float)
            and value > rule.maximum
        ):
            raise CalcInputError(
                rule.name,
                f'must be at most {num(rule.maximum)} when {rule.when} is "{rule.value}" '
                f"({rule.reason})",
            )
    elif rule.name in values and values.get(rule.when) != rule.value:
        raise CalcInputError(rule.name, f'applies only when {rule.when} is "{rule.value}"')


def validate(fields: Sequence[Field], rules: Sequence[Rule], raw: object) -> Inputs:
    """Check `raw` against the declared fields and rules; raise CalcInputError on the first
    problem, else return the normalised inputs with defaults filled in."""
    if not isinstance(raw, Mapping):
        raise CalcInputError("inputs", "must be an object of named values")
    known = {f.name for f in fields}
    for key in raw:
        if not isinstance(key, str):
            raise CalcInputError(str(key), "field names must be text")
        if key not in known:
            raise CalcInputError(key, "is not an input of this calculation")
    values: dict[str, InputValue] = {}
    for spec in fields:
        given = raw.get(spec.name)
        if given is None:
            if spec.default is not None:
                values[spec.name] = spec.default
            elif spec.required:
                raise CalcInputError(spec.name, "is required")
            continue
        values[spec.name] = _validate_field(spec, given)
    for rule in rules:
        _apply_rule(rule, values)
    return Inputs(values)
