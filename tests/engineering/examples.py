"""Valid example inputs per calculation, for tests to vary one field at a time."""

from __future__ import annotations

from typing import Any

SUCTION: dict[str, Any] = {
    "vacuum_kpa": 21.0,
    "cup_diameter_m": 0.12,
    "effective_area_ratio": 1.0,
    "cups": 4,
    "cup_rows": 1,
    "row_spacing_m": 0.0,
    "wet_glass_friction": 0.5,
    "mass_kg": 20.0,
    "com_offset_m": 0.0,
    "process_force_n": 30.0,
    "peak_pressure_pa": 0.0,
    "face_area_m2": 0.3,
    "side_area_m2": 0.1,
    "drag_coefficient": 1.2,
    "corner_distance_m": 10.0,
    "building_height_m": 40.0,
    "safety_factor": 2.0,
}

DECAY: dict[str, Any] = {
    "samples": [[0, 60.0], [60, 57.0], [120, 54.0], [180, 51.0]],
    "min_vacuum_kpa": 40.0,
    "required_hold_s": 200.0,
    "interval_s": 60.0,
    "interval_tolerance_s": 10.0,
    "min_duration_s": 180.0,
    "max_extrapolation": 2.0,
    "min_r2": 0.8,
    "system_volume_l": 2.0,
}

ARREST: dict[str, Any] = {
    "mass_kg": 25.0,
    "free_fall_m": 0.5,
    "shortest_line_m": 30.0,
    "line_length_m": 30.0,
    "line_ea_kn": 150.0,
    "anchor_rating_kn": 15.0,
    "line_mbs_kn": 22.0,
    "anchor_safety_factor": 2.0,
    "line_safety_factor": 2.0,
    "clearance_below_m": 100.0,
}

WIND: dict[str, Any] = {
    "speed_ms": 6.0,
    "measured_at_m": 60.0,
    "working_height_m": 30.0,
    "terrain": "IV",
    "method": "log",
    "limit_ms": 12.0,
}

WATER: dict[str, Any] = {
    "drop_m": 40.0,
    "top_head_m": 40.0,
    "hose_id_mm": 12.7,
    "hose_length_m": 45.0,
    "flow_lpm": 4.0,
    "roughness_mm": 0.0015,
    "water_temp_c": 15.0,
    "fittings_k": 0.0,
    "wave_speed_ms": 300.0,
    "valve_closure_s": 100.0,
    "hose_rating_kpa": 1000.0,
    "nozzle_min_kpa": 150.0,
}

MASS: dict[str, Any] = {
    "robot_kg": 30.0,
    "hose_length_m": 45.0,
    "hose_id_mm": 12.7,
    "hose_kg_per_m": 0.2,
    "line_length_m": 45.0,
    "line_kg_per_m": 0.08,
    "rated_load_kg": 100.0,
    "dynamic_factor": 1.25,
    "tether_wll_kn": 2.0,
    "tether_diameter_mm": 11.0,
    "wind_ms": 14.0,
}

WATER_USE: dict[str, Any] = {
    "area_m2": 1200.0,
    "litres_per_m2": 0.8,
    "rate_m2_per_h": 150.0,
    "supply_l": 1000.0,
}

ANCHOR_TAG: dict[str, Any] = {
    "tag_kn": 22.0,
    "certified_kn": 22.2,
    "rounding": 0.05,
}

BY_NAME: dict[str, dict[str, Any]] = {
    "suction-hold": SUCTION,
    "vacuum-decay": DECAY,
    "arrest-load": ARREST,
    "wind-at-height": WIND,
    "water-line": WATER,
    "suspended-mass": MASS,
    "water-use": WATER_USE,
    "anchor-tag": ANCHOR_TAG,
}


def vary(base: dict[str, Any], **changes: Any) -> dict[str, Any]:
    """A copy of `base` with fields changed; a value of None removes the field."""
    out = dict(base)
    for key, value in changes.items():
        if value is None:
            out.pop(key, None)
        else:
            out[key] = value
    return out
