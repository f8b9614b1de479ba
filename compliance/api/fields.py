"""Input rules shared by every serializer: no unknown fields, finite numbers, plausible dates."""

import datetime as dt
import math
from collections.abc import Mapping
from typing import Any

from django.db import models
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from compliance.jobs.sync import printable, unstorable

EARLIEST = dt.date(1950, 1, 1)
LATEST = dt.date(2100, 12, 31)


class IdField(serializers.PrimaryKeyRelatedField):
    """DRF's id field, with a number that is not a whole one an incorrect type: JSON's 1e400
    (infinity once parsed) raised OverflowError when looked up, a 500, and 1.5 was looked up
    as the id 1."""

    def to_internal_value(self, data: Any) -> Any:
        if isinstance(data, float) and not math.isfinite(data):
            self.fail("incorrect_type", data_type="number past binary64")
        if isinstance(data, float) and not data.is_integer():
            self.fail("incorrect_type", data_type="float")
        return super().to_internal_value(data)


class FiniteFloatField(serializers.FloatField):
    """A finite number, never true or false: DRF's FloatField reads true as 1.0."""

    def to_internal_value(self, data: Any) -> float:
        if isinstance(data, bool):
            self.fail("invalid")
        value = super().to_internal_value(data)
        if not math.isfinite(value):
            raise serializers.ValidationError("Must be a finite number.")
        return value


READ_ONLY_FIELD = "This field is read-only."


class StrictInput:
    """Refuse fields the serializer does not know, naming each, so a typo never loses data."""

    # (The docstring above is every input's description in /api/schema/.) Also refused, naming
    # its path, before anything is looked up or stored: text no database holds (a NUL, an
    # unpaired surrogate; see sync.unstorable) anywhere in the input, JSON fields and names
    # too. ``text_checked_later`` names fields checked elsewhere: a sync batch checks each
    # record alone, so one bad record is refused without the rest. Ids are IdFields. A field
    # the client may not set (an id, a job's state, a version's status) is refused by name
    # like an unknown one: dropped without a word, a job sent as closed was stored as planned.

    fields: Any
    text_checked_later: tuple[str, ...] = ()
    serializer_related_field = IdField  # for ModelSerializer's own foreign keys
    serializer_field_mapping = {  # and for its own numbers
        **serializers.ModelSerializer.serializer_field_mapping,
        models.FloatField: FiniteFloatField,
    }

    def to_internal_value(self, data: Any) -> Any:
        if isinstance(data, Mapping):
            checked = {k: v for k, v in data.items() if k not in self.text_checked_later}
            found = unstorable(checked, numbers=False)
            if found is not None:
                where, why = found
                raise serializers.ValidationError({where or "non_field_errors": [why]})
            refused = {
                printable(str(key)[:80]): (
                    [READ_ONLY_FIELD] if key in self.fields else ["Unknown field."]
                )
                for key in data
                if key not in self.fields or self.fields[key].read_only
            }
            if refused:
                raise serializers.ValidationError(dict(sorted(refused.items())))
        return super().to_internal_value(data)  # type: ignore[misc]


@extend_schema_field(OpenApiTypes.ANY)
class ParsedJSON(serializers.Field):
    """Any value the JSON parser gave, as it is; the caller checks it."""

    def to_internal_value(self, data: Any) -> Any:
        return data

    def to_representation(self, value: Any) -> Any:
        return value


class PlausibleDateField(serializers.DateField):
    """A date between 1950 and 2100: anything else is a typo or a phone with a reset clock."""

    def to_internal_value(self, value: Any) -> dt.date:
        day = super().to_internal_value(value)
        if not EARLIEST <= day <= LATEST:
            raise serializers.ValidationError(
                f"A date between {EARLIEST.isoformat()} and {LATEST.isoformat()}."
            )
        return day


MAX_ID_DIGITS = 18
"""An id fits a signed 64-bit column (PostgreSQL bigint) with room to spare."""


def query_id(params: Mapping[str, str], name: str) -> int | None:
    """The id named `name` in a query string, or None when it is absent or empty.

    Only plain ASCII digits, at most 18 of them, are an id: '²' and '٣' pass str.isdigit() and
    int('²') raises, and a 30-digit id overflows the database's integer. Anything else is a 400
    naming the parameter.
    """
    value = params.get(name)
    if not value:
        return None
    if not (value.isascii() and value.isdigit() and len(value) <= MAX_ID_DIGITS):
        raise serializers.ValidationError(
            {name: [f"An id is a whole number of at most {MAX_ID_DIGITS} digits (0-9)."]}
        )
    return int(value)


def query_text(params: Mapping[str, str], name: str) -> str | None:
    """The text filter named `name` in a query string, or None when it is absent or empty; one
    holding a NUL is a 400 naming the parameter (PostgreSQL refuses NUL in a comparison)."""
    value = params.get(name)
    if not value:
        return None
    if "\x00" in value:
        raise serializers.ValidationError({name: ["Text may not hold a NUL."]})
    return value


DAY = "A date as YYYY-MM-DD."


def parse_day(text: str) -> dt.date | None:
    """The date ``text`` writes as YYYY-MM-DD in ASCII digits, else None. Python's parser alone
    also reads ISO week dates (2026-W49-1) and the basic form (20261201)."""
    if len(text) != 10 or not text.isascii() or text[4] != "-" or text[7] != "-":
        return None
    try:
        return dt.date.fromisoformat(text)
    except ValueError:
        return None


def query_day(params: Mapping[str, str], name: str) -> dt.date | None:
    """The date parameter ``name`` (None when absent), or a 400 naming it."""
    value = params.get(name)
    if not value:
        return None
    day = parse_day(value)
    if day is None:
        raise serializers.ValidationError({name: [DAY]})
    return day


def query_period(params: Mapping[str, str]) -> tuple[dt.date | None, dt.date | None]:
    """The `start` and `end` dates of a list's period (either may be absent), or a 400 naming
    the parameter that is not a date as YYYY-MM-DD, or `end` when it falls before `start`."""
    start, end = query_day(params, "start"), query_day(params, "end")
    if start and end and end < start:
        raise serializers.ValidationError({"end": ["Must not be before start."]})
    return start, end


class ZonedDateTimeField(serializers.DateTimeField):
    """A date and time with its UTC offset. One without (or a date, or an ISO week date) is
    refused, not read in the server's zone: a phone's clock offset taken from it would be the
    server's zone's distance from the phone's."""

    default_error_messages = {"naive": "A date and time with its offset, such as +01:00 or Z."}

    def to_internal_value(self, value: Any) -> dt.datetime:
        if isinstance(value, str):
            try:
                parsed = dt.datetime.fromisoformat(value.strip())
            except ValueError:
                parsed = None
            if parsed is None or parsed.tzinfo is None:
                self.fail("naive")
        return super().to_internal_value(value)
