"""The shape of a checklist version's items, validated before a draft is saved or published.

A limit or a calculation input names where its number comes from (a source), so limits live in
the jurisdiction profile or the equipment's ratings and never in code.
"""

import hashlib
import json
import re
from typing import Any

from django.core.exceptions import ValidationError

ITEM_KINDS = ("tick", "reading", "series", "calc", "photo", "note")
SUBJECT_KINDS = ("anchor", "robot", "tether", "safety_line", "hose", "site")
SUBJECT_KIND_CHOICES = [(k, k) for k in SUBJECT_KINDS]
SOURCE_KINDS = (
    "value",  # a literal number in the checklist
    "profile",  # a threshold of the site's jurisdiction profile
    "equipment",  # a rating of the sheet's own subject
    "robot",  # a rating of the robot on the drop that uses the subject
    "tether",
    "safety_line",
    "hose",
    "anchor",  # the drop's anchor: rated_capacity_kn from its current certification
    "drop",  # the drop itself: length_m, height_m (site roof height)
    "reading",  # another item's entry in the same sheet
    "output",  # an output of an earlier calc item in the same sheet: "item_key.output_key"
)
KEY_RE = re.compile(r"^[a-z][a-z0-9_]{0,79}$")


def _check_source(source: Any, where: str, errors: dict[str, str]) -> None:
    if not isinstance(source, dict) or len(source) != 1:
        errors[where] = f"A source is one of {{{', '.join(SOURCE_KINDS)}: ...}}."
        return
    ((kind, ref),) = source.items()
    if kind not in SOURCE_KINDS:
        errors[where] = f"Unknown source {kind!r}."
    elif kind == "value":
        if isinstance(ref, bool) or not isinstance(ref, int | float | str):
            errors[where] = "A literal value is a number or a text."
    elif not isinstance(ref, str) or not ref:
        errors[where] = "A source reference is a non-empty text."


def validate_items(items: Any) -> list[dict[str, Any]]:
    """Raise ValidationError keyed ``items[i].field`` for anything malformed."""
    if not isinstance(items, list) or not items:
        raise ValidationError({"items": "A checklist needs a non-empty list of items."})
    errors: dict[str, str] = {}
    seen: set[str] = set()
    for i, item in enumerate(items):
        at = f"items[{i}]"
        if not isinstance(item, dict):
            errors[at] = "Each item is an object."
            continue
        key = item.get("key")
        if not isinstance(key, str) or not KEY_RE.match(key):
            errors[f"{at}.key"] = "A key is lower-case letters, digits and underscores."
        elif key in seen:
            errors[f"{at}.key"] = f"Duplicate key {key!r}."
        else:
            seen.add(key)
        kind = item.get("kind")
        if kind not in ITEM_KINDS:
            errors[f"{at}.kind"] = f"Kind is one of {', '.join(ITEM_KINDS)}."
        for text in ("label", "reason"):
            if not isinstance(item.get(text), str) or not item[text].strip():
                errors[f"{at}.{text}"] = "Required text."
        if not isinstance(item.get("blocking"), bool):
            errors[f"{at}.blocking"] = "blocking is true or false."
        if kind in ("reading", "series") and not isinstance(item.get("unit"), str):
            errors[f"{at}.unit"] = "A reading names its unit."
        for bound, source in (item.get("limits") or {}).items():
            if bound not in ("min", "max"):
                errors[f"{at}.limits.{bound}"] = "Limits are min and/or max."
            else:
                _check_source(source, f"{at}.limits.{bound}", errors)
        if "caution_below" in item:
            # A passing margin under this band shows a caution; the band is a source too.
            _check_source(item["caution_below"], f"{at}.caution_below", errors)
        if kind == "calc":
            if not isinstance(item.get("calc"), str):
                errors[f"{at}.calc"] = "A calc item names its calculation."
            inputs = item.get("inputs")
            if not isinstance(inputs, dict):
                errors[f"{at}.inputs"] = "A calc item maps each input to a source."
            else:
                for name, source in inputs.items():
                    _check_source(source, f"{at}.inputs.{name}", errors)
    if errors:
        raise ValidationError(errors)
    return items


def content_hash(payload: dict[str, Any]) -> str:
    """SHA-256 of the version's canonical content (sorted keys, no spaces)."""
    text = json.dumps(payload, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()
