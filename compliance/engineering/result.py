"""The result every calculation returns, and how checks turn into a verdict and a margin."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Literal

from .constants import CAUTION
from .working import pct

InputValue = float | int | str | tuple[tuple[float, float], ...]
OutputValue = float | int | str | None
JsonValue = float | int | str | bool | None | list["JsonValue"] | dict[str, "JsonValue"]
Verdict = Literal["pass", "fail"]


@dataclass(frozen=True)
class Check:
    """One limit a calculation tests: `margin` is capacity/demand - 1 (None when unbounded).

    A check passes when its margin is None or at least zero. A `gate` check (a measured condition
    such as "no sample already below the limit") governs only when it fails, and then it governs
    ahead of any failing prediction.
    """

    key: str
    margin: float | None
    gate: bool = False
    reason: str = ""
    """What the check found, in words a crew reads; shown when the check governs a failure."""
    inconclusive: bool = False
    """The data cannot support a prediction (a rising or scattered series): the check fails
    with no margin, and the answer is to repeat the test."""

    @property
    def passed(self) -> bool:
        if self.inconclusive:
            return False
        return self.margin is None or self.margin >= 0.0


def ratio_margin(capacity: float, demand: float) -> float | None:
    """Relative margin capacity/demand - 1; None when the demand is zero (nothing to resist)."""
    if demand == 0.0:
        return None
    return capacity / demand - 1.0


def governing_check(checks: Sequence[Check]) -> Check | None:
    """The check that decides a calculation's verdict (None when there are no checks).

    Any failing check fails the calculation. Failing gate checks govern ahead of the others:
    among them a definite failure with the least margin, else the first inconclusive one. When
    all pass, the non-gate check with the least finite margin governs.
    """
    failing = [c for c in checks if not c.passed and c.gate] or [c for c in checks if not c.passed]
    if failing:
        definite = [c for c in failing if not c.inconclusive]
        if not definite:
            return failing[0]
        return min(definite, key=lambda c: c.margin if c.margin is not None else math.inf)
    bounded = [c for c in checks if not c.gate and c.margin is not None]
    if bounded:
        return min(bounded, key=lambda c: c.margin if c.margin is not None else math.inf)
    ungated = [c for c in checks if not c.gate]
    return ungated[0] if ungated else None


def decide(checks: Sequence[Check]) -> tuple[Verdict, float | None, str]:
    """Verdict, governing margin and governing check key from a calculation's checks."""
    worst = governing_check(checks)
    if worst is None:
        return "pass", None, "none"
    verdict: Verdict = "pass" if worst.passed and all(c.passed for c in checks) else "fail"
    return verdict, (None if worst.inconclusive else worst.margin), worst.key


def _json_number(value: float | int) -> float | int | None:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _json_input(value: InputValue) -> JsonValue:
    if isinstance(value, tuple):
        return [[_json_number(t), _json_number(v)] for t, v in value]
    if isinstance(value, str):
        return value
    return _json_number(value)


def _json_output(value: OutputValue) -> JsonValue:
    if value is None or isinstance(value, str):
        return value
    return _json_number(value)


@dataclass(frozen=True)
class CalcResult:
    """A calculation's inputs (normalised, defaults filled in), outputs, verdict and working.

    Output keys end in their unit (`peak_force_kn`); dimensionless ones name the quantity only.
    `margin` is the governing check's relative margin (negative when failing, None when no
    check is bounded); `governing` is that check's key.
    """

    name: str
    inputs: Mapping[str, InputValue]
    outputs: Mapping[str, OutputValue]
    verdict: Verdict
    margin: float | None
    governing: str
    steps: tuple[str, ...]
    reason: str = ""
    caution: str = CAUTION

    @classmethod
    def build(
        cls,
        *,
        name: str,
        inputs: Mapping[str, InputValue],
        outputs: Mapping[str, OutputValue],
        checks: Sequence[Check],
        steps: Sequence[str],
    ) -> CalcResult:
        verdict, margin, governing = decide(checks)
        if margin is not None and not math.isfinite(margin):
            margin = None
        worst = governing_check(checks)
        inconclusive = worst is not None and worst.inconclusive
        if inconclusive:
            shown = "none: inconclusive"
        elif margin is None:
            shown = "unbounded"
        else:
            shown = pct(margin)
        summary = f"verdict: {verdict} (governing check {governing}, margin {shown})"
        reason = worst.reason if worst is not None and verdict == "fail" else ""
        return cls(
            name=name,
            inputs=MappingProxyType(dict(inputs)),
            outputs=MappingProxyType(dict(outputs)),
            verdict=verdict,
            margin=margin,
            governing=governing,
            steps=(*steps, summary),
            reason=reason,
        )

    @property
    def passed(self) -> bool:
        return self.verdict == "pass"

    def to_dict(self) -> dict[str, JsonValue]:
        """A JSON-safe copy: NaN and infinite numbers become None."""
        return {
            "name": self.name,
            "inputs": {k: _json_input(v) for k, v in self.inputs.items()},
            "outputs": {k: _json_output(v) for k, v in self.outputs.items()},
            "verdict": self.verdict,
            "margin": None if self.margin is None else _json_number(self.margin),
            "governing": self.governing,
            "steps": list(self.steps),
            "reason": self.reason,
            "caution": self.caution,
        }
