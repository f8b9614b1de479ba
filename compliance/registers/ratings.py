"""Kind-specific equipment ratings: which numbers each kind of equipment must carry.

Ratings are stored as JSON on the equipment row and validated here, so a checklist can draw a
limit from "the hose's pressure rating" without each kind needing its own table.
"""

import math
import sys
from dataclasses import dataclass
from typing import Any

from django.core.exceptions import ValidationError


@dataclass(frozen=True)
class Rating:
    key: str
    label: str
    required: bool = True
    positive: bool = True
    non_negative: bool = False
    text: bool = False
    maximum: float | None = None


OPTIONAL_ZERO: dict[str, bool] = {"required": False, "positive": False, "non_negative": True}
"""A rating that may be absent, or zero (no offset, no brush), but never negative."""

# Each number's maximum is a sanity bound against typing errors (common practice, no source),
# set well past any robot, line or hose in trade use. It is not an engineering limit, which a
# checklist draws from the maker's figures or the profile; a value past it is taken for a slip
# of the keyboard and refused rather than calculated with. One is physics, not a guess: no
# vacuum exceeds the standard atmosphere, 101.325 kPa.
EQUIPMENT_RATINGS: dict[str, tuple[Rating, ...]] = {
    "robot": (
        Rating("mass_kg", "mass without water, kg", maximum=1000),
        Rating("cup_diameter_m", "suction cup diameter, m", maximum=2),
        Rating("cups_engaged", "cups engaged at once", maximum=100),
        Rating("friction", "cup friction coefficient on wet glass", maximum=2),
        Rating("projected_area_m2", "area facing the wind, m²", maximum=20),
        Rating("drag_coefficient", "drag coefficient", maximum=5),
        Rating("max_wind_ms", "maker's in-service wind limit, m/s", maximum=60),
        Rating("nozzle_min_kpa", "least water pressure at the robot's valve, kPa", maximum=10000),
        Rating(
            "working_vacuum_kpa", "maker's working vacuum, kPa", required=False, maximum=101.325
        ),
        Rating(
            "water_on_board_kg",
            "water carried on the robot when full, kg",
            required=False,
            positive=False,
            non_negative=True,
            maximum=500,
        ),
        Rating(
            "valve_closure_s", "time the water valve takes to close, s", required=False, maximum=600
        ),
        Rating("rated_load_kg", "maker's rated suspended load, kg", required=False, maximum=2000),
        Rating(
            "cup_area_ratio", "share of a cup's disc the vacuum acts on", required=False, maximum=1
        ),
        Rating("cup_rows", "rows of cups, one above the other", required=False, maximum=20),
        Rating("row_spacing_m", "bottom row of cups to top row, m", **OPTIONAL_ZERO, maximum=10),
        Rating("com_offset_m", "centre of mass from the glass, m", **OPTIONAL_ZERO, maximum=5),
        Rating("brush_force_n", "brush drag along the wall, N", **OPTIONAL_ZERO, maximum=10000),
        Rating("brush_push_n", "brush push off the glass, N", **OPTIONAL_ZERO, maximum=10000),
        Rating("side_area_m2", "area facing wind along the wall, m²", **OPTIONAL_ZERO, maximum=20),
    ),
    "tether": (
        Rating("mbs_kn", "minimum breaking strength, kN", maximum=1000),
        Rating("wll_kn", "working load limit, kN", maximum=1000),
        Rating("ea_kn", "axial stiffness EA, kN", maximum=100000),
        Rating("diameter_mm", "diameter, mm", required=False, maximum=100),
        Rating("kg_per_m", "self-weight, kg/m", maximum=20),
        Rating("length_m", "length, m", maximum=2000),
        Rating("retire_after_years", "retire after, years", required=False, maximum=100),
    ),
    "safety_line": (
        Rating("mbs_kn", "minimum breaking strength, kN", maximum=1000),
        Rating("ea_kn", "axial stiffness EA, kN", maximum=100000),
        Rating("kg_per_m", "self-weight, kg/m", maximum=20),
        Rating("length_m", "length, m", maximum=2000),
        Rating("retire_after_years", "retire after, years", required=False, maximum=100),
    ),
    "hose": (
        Rating("id_mm", "inner diameter, mm", maximum=200),
        Rating("rating_kpa", "pressure rating, kPa", maximum=100000),
        Rating("kg_per_m", "empty self-weight, kg/m", maximum=20),
        Rating("length_m", "length, m", maximum=2000),
        Rating("roughness_mm", "wall roughness, mm", maximum=10),
        Rating(
            "wave_speed_ms",
            "pressure wave speed in the filled hose, m/s",
            required=False,
            maximum=3000,
        ),
        Rating("od_mm", "outside diameter, mm", required=False, maximum=300),
    ),
    "estop": (Rating("location", "where the stop is fitted", positive=False, text=True),),
}

EQUIPMENT_KINDS = tuple(EQUIPMENT_RATINGS)
ESTOP_LOCATIONS = ("roof", "remote", "robot")
KIND_WORDS = {
    "robot": "Robot",
    "tether": "Tether",
    "safety_line": "Safety line",
    "hose": "Hose",
    "estop": "Emergency stop",
}
UNITS = ("kg", "m", "m²", "m/s", "kPa", "s", "kN", "mm", "kg/m", "years", "N")


def _unit_of(rating: Rating) -> str:
    """The unit the label ends with, after a space (" kN"), or nothing."""
    label, _, tail = rating.label.rpartition(", ")
    return f" {tail}" if label and tail in UNITS else ""


def rating_form(kind: str) -> list[dict[str, Any]]:
    """A kind's ratings as a form draws them, field by field: label and unit apart, whether
    the field is required, its lower bound in words and, for a text, its choices. The same
    rules as validate_ratings, which stays the one that decides."""
    fields = []
    for rating in EQUIPMENT_RATINGS[kind]:
        label, _, tail = rating.label.rpartition(", ")
        unit = tail if label and tail in UNITS else ""
        fields.append(
            {
                "key": rating.key,
                "label": label if unit else rating.label,
                "unit": unit,
                "required": rating.required,
                "text": rating.text,
                "minimum": (
                    None
                    if rating.text
                    else "above_zero"
                    if rating.positive
                    else "zero_or_more"
                    if rating.non_negative
                    else None
                ),
                "choices": list(ESTOP_LOCATIONS) if kind == "estop" and rating.text else [],
            }
        )
    return fields


MAX_FINITE = sys.float_info.max
"""An integer beyond this has no float value (JSON may carry 10**400)."""


def validate_ratings(kind: str, ratings: Any) -> dict[str, Any]:
    """Check a ratings object for an equipment kind; raise ValidationError keyed per rating."""
    if kind not in EQUIPMENT_RATINGS:
        raise ValidationError({"kind": f"Unknown equipment kind {kind!r}."})
    if not isinstance(ratings, dict):
        raise ValidationError({"ratings": "Ratings must be an object."})
    spec = {r.key: r for r in EQUIPMENT_RATINGS[kind]}
    errors: dict[str, str] = {}
    for key in ratings:
        if key not in spec:
            errors[f"ratings.{key}"] = f"Not a rating of a {kind}."
    for rating in spec.values():
        value = ratings.get(rating.key)
        field = f"ratings.{rating.key}"
        if value is None:
            if rating.required:
                errors[field] = f"Required for a {kind}: {rating.label}."
            continue
        if rating.text:
            if not isinstance(value, str) or not value.strip():
                errors[field] = "Must be a non-empty text."
            elif kind == "estop" and value not in ESTOP_LOCATIONS:
                errors[field] = f"Must be one of {', '.join(ESTOP_LOCATIONS)}."
            continue
        if isinstance(value, bool) or not isinstance(value, int | float):
            errors[field] = "Must be a number."
        elif (isinstance(value, int) and abs(value) > MAX_FINITE) or not math.isfinite(value):
            errors[field] = "Must be a finite number."
        elif rating.positive and value <= 0:
            errors[field] = "Must be greater than zero."
        elif rating.non_negative and value < 0:
            errors[field] = "Cannot be negative."
        elif rating.maximum is not None and value > rating.maximum:
            errors[field] = (
                f"At most {rating.maximum:g}{_unit_of(rating)}: "
                "a larger value is taken for a typing error."
            )
    strength, limit = ratings.get("mbs_kn"), ratings.get("wll_kn")
    if (
        "ratings.mbs_kn" not in errors
        and "ratings.wll_kn" not in errors
        and isinstance(strength, int | float)
        and isinstance(limit, int | float)
        and limit > strength
    ):
        # A working load limit is the breaking strength over a safety factor above one
        # (common practice, no source).
        errors["ratings.wll_kn"] = (
            f"Above the minimum breaking strength ({strength:g} kN): a working load limit is a"
            " fraction of it."
        )
    if errors:
        raise ValidationError(errors)
    return ratings


def rating_labels(kind: str) -> dict[str, str]:
    """Each rating of a kind of equipment by key, in its words ("minimum breaking strength,
    kN")."""
    return {rating.key: rating.label for rating in EQUIPMENT_RATINGS.get(kind, ())}
