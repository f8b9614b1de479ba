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


OPTIONAL_ZERO: dict[str, bool] = {"required": False, "positive": False, "non_negative": True}
"""A rating that may be absent, or zero (no offset, no brush), but never negative."""

EQUIPMENT_RATINGS: dict[str, tuple[Rating, ...]] = {
    "robot": (
        Rating("mass_kg", "mass without water, kg"),
        Rating("cup_diameter_m", "suction cup diameter, m"),
        Rating("cups_engaged", "cups engaged at once"),
        Rating("friction", "cup friction coefficient on wet glass"),
        Rating("projected_area_m2", "area facing the wind, m²"),
        Rating("drag_coefficient", "drag coefficient"),
        Rating("max_wind_ms", "maker's in-service wind limit, m/s"),
        Rating("nozzle_min_kpa", "least water pressure at the robot's valve, kPa"),
        Rating("working_vacuum_kpa", "maker's working vacuum, kPa", required=False),
        Rating(
            "water_on_board_kg",
            "water carried on the robot when full, kg",
            required=False,
            positive=False,
            non_negative=True,
        ),
        Rating("valve_closure_s", "time the water valve takes to close, s", required=False),
        Rating("rated_load_kg", "maker's rated suspended load, kg", required=False),
        Rating("cup_area_ratio", "share of a cup's disc the vacuum acts on", required=False),
        Rating("cup_rows", "rows of cups, one above the other", required=False),
        Rating("row_spacing_m", "bottom row of cups to top row, m", **OPTIONAL_ZERO),
        Rating("com_offset_m", "centre of mass from the glass, m", **OPTIONAL_ZERO),
        Rating("brush_force_n", "brush drag along the wall, N", **OPTIONAL_ZERO),
        Rating("brush_push_n", "brush push off the glass, N", **OPTIONAL_ZERO),
        Rating("side_area_m2", "area facing wind along the wall, m²", **OPTIONAL_ZERO),
    ),
    "tether": (
        Rating("mbs_kn", "minimum breaking strength, kN"),
        Rating("wll_kn", "working load limit, kN"),
        Rating("ea_kn", "axial stiffness EA, kN"),
        Rating("diameter_mm", "diameter, mm", required=False),
        Rating("kg_per_m", "self-weight, kg/m"),
        Rating("length_m", "length, m"),
        Rating("retire_after_years", "retire after, years", required=False),
    ),
    "safety_line": (
        Rating("mbs_kn", "minimum breaking strength, kN"),
        Rating("ea_kn", "axial stiffness EA, kN"),
        Rating("kg_per_m", "self-weight, kg/m"),
        Rating("length_m", "length, m"),
        Rating("retire_after_years", "retire after, years", required=False),
    ),
    "hose": (
        Rating("id_mm", "inner diameter, mm"),
        Rating("rating_kpa", "pressure rating, kPa"),
        Rating("kg_per_m", "empty self-weight, kg/m"),
        Rating("length_m", "length, m"),
        Rating("roughness_mm", "wall roughness, mm"),
        Rating("wave_speed_ms", "pressure wave speed in the filled hose, m/s", required=False),
        Rating("od_mm", "outside diameter, mm", required=False),
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
    if errors:
        raise ValidationError(errors)
    return ratings
