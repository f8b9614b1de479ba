"""Input rules shared by every serializer: no unknown fields, finite numbers, plausible dates."""

import datetime as dt
import math
from collections.abc import Mapping
from typing import Any

from rest_framework import serializers

from compliance.sync import UNSTORABLE_TEXT, bad_text, printable

EARLIEST = dt.date(1950, 1, 1)
LATEST = dt.date(2100, 12, 31)


class StrictInput:
    """Refuse fields the serializer does not know, naming each, so a typo never loses data; and
    refuse text no database holds (a NUL, an unpaired surrogate) anywhere in the input, in JSON
    fields and names too, naming its path, before anything is looked up or stored.

    ``text_checked_later`` names fields whose contents are checked elsewhere (a sync batch
    checks each record alone, so one bad record does not refuse the rest)."""

    fields: Any
    text_checked_later: tuple[str, ...] = ()

    def to_internal_value(self, data: Any) -> Any:
        if isinstance(data, Mapping):
            checked = {k: v for k, v in data.items() if k not in self.text_checked_later}
            where = bad_text(checked, "")
            if where is not None:
                raise serializers.ValidationError({where: [UNSTORABLE_TEXT]})
            unknown = sorted(printable(str(key)[:80]) for key in data if key not in self.fields)
            if unknown:
                raise serializers.ValidationError({key: ["Unknown field."] for key in unknown})
        return super().to_internal_value(data)  # type: ignore[misc]


class FiniteFloatField(serializers.FloatField):
    def to_internal_value(self, data: Any) -> float:
        value = super().to_internal_value(data)
        if not math.isfinite(value):
            raise serializers.ValidationError("Must be a finite number.")
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
