"""water-use: litres, hours and the tank."""

from __future__ import annotations

import pytest

from compliance.engineering import run

from .examples import WATER_USE, vary


def test_by_hand() -> None:
    """1200 m² at 0.8 L/m² and 150 m²/h: 960 L, 8 h, 120 L/h (hand calculation)."""
    result = run("water-use", WATER_USE)
    assert result.outputs["litres_l"] == pytest.approx(960.0)
    assert result.outputs["hours_h"] == pytest.approx(8.0)
    assert result.outputs["litres_per_hour_l_per_h"] == pytest.approx(120.0)
    assert result.outputs["supply_hours_h"] == pytest.approx(1000.0 / 120.0)
    assert result.verdict == "pass"
    assert result.margin == pytest.approx(1000.0 / 960.0 - 1)


def test_small_tank_fails() -> None:
    result = run("water-use", vary(WATER_USE, supply_l=500.0))
    assert result.verdict == "fail"
    assert result.governing == "supply"


def test_no_supply_means_nothing_to_check() -> None:
    result = run("water-use", vary(WATER_USE, supply_l=None))
    assert result.verdict == "pass"
    assert result.margin is None
    assert result.outputs["supply_hours_h"] is None
    assert result.governing == "none"
