"""What a named calculation is: its declared inputs and rules, and the function behind it.

Running one fails closed: a working whose numbers leave the range of binary64 floats (a product
that overflows to infinity, a divisor that underflows to zero, an undefined 0/0 or inf - inf)
answers verdict fail with the governing check `out_of_range` and a reason naming the quantity,
never a crash and never a pass carrying an infinite or undefined number. A margin too large to
hold (a demand within a hair of zero) is the exception: it stays unbounded, as a zero demand is.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Final

from .inputs import Field, Inputs, Rule, validate
from .result import CalcResult, Check, InputValue, OutputValue
from .working import num

OUT_OF_RANGE: Final = "out_of_range"


class UnknownCalculation(LookupError):
    """No calculation has this name."""

    def __init__(self, name: str) -> None:
        super().__init__(f"unknown calculation: {name!r}")
        self.name = name


class OutOfRange(ArithmeticError):
    """A quantity of the working is not a usable number (e.g. an area that underflowed to
    zero and would divide); `quantity` names it."""

    def __init__(self, quantity: str, value: float) -> None:
        super().__init__(f"{quantity} is {num(value)}")
        self.quantity = quantity


def _problem(outputs: Mapping[str, OutputValue], checks: Sequence[Check] = ()) -> str | None:
    """The first output that is not finite or check margin that is undefined, in words."""
    for key, value in outputs.items():
        if isinstance(value, float) and not math.isfinite(value):
            return f"{key} is {num(value)}"
    for check in checks:
        if check.margin is not None and math.isnan(check.margin):
            return f"the margin of {check.key} is {num(check.margin)}"
    return None


def out_of_range(
    name: str,
    inputs: Mapping[str, InputValue],
    why: str,
    *,
    outputs: Mapping[str, OutputValue] | None = None,
    steps: Sequence[str] = (),
) -> CalcResult:
    """The failing result of a working that left the range of floats (`why` says where)."""
    reason = (
        f"out of range: {why}; the inputs' magnitudes take the working beyond the numbers it"
        " can hold, so nothing is concluded (check the values and their units)"
    )
    return CalcResult(
        name=name,
        inputs=MappingProxyType(dict(inputs)),
        outputs=MappingProxyType(dict(outputs or {})),
        verdict="fail",
        margin=None,
        governing=OUT_OF_RANGE,
        steps=(*steps, reason, f"verdict: fail (governing check {OUT_OF_RANGE}, margin none)"),
        reason=reason,
    )


def build_result(
    *,
    name: str,
    inputs: Mapping[str, InputValue],
    outputs: Mapping[str, OutputValue],
    checks: Sequence[Check],
    steps: Sequence[str],
) -> CalcResult:
    """CalcResult.build, failing closed when an output is not finite or a margin undefined
    (build alone would show them as null or unbounded)."""
    problem = _problem(outputs, checks)
    if problem is not None:
        return out_of_range(name, inputs, problem, outputs=outputs, steps=steps)
    return CalcResult.build(name=name, inputs=inputs, outputs=outputs, checks=checks, steps=steps)


@dataclass(frozen=True)
class Calculation:
    """A calculation the app can run by name; `run` validates the inputs, then computes."""

    name: str
    title: str
    fields: tuple[Field, ...]
    rules: tuple[Rule, ...]
    compute: Callable[[Inputs], CalcResult]

    def validate(self, inputs: Mapping[str, object]) -> Inputs:
        return validate(self.fields, self.rules, inputs)

    def run(self, inputs: Mapping[str, object]) -> CalcResult:
        """Validate, then compute; raises CalcInputError, else returns a result (see module)."""
        values = self.validate(inputs)
        try:
            result = self.compute(values)
        except OutOfRange as exc:
            return out_of_range(self.name, values.as_dict(), str(exc))
        except (ArithmeticError, ValueError) as exc:
            # A working that does not guard itself: Python raises where IEEE arithmetic (and
            # the phone's port) gives an infinity, or a math domain error on a zero that
            # underflowed. Either way nothing can be concluded.
            return out_of_range(self.name, values.as_dict(), f"the arithmetic failed ({exc})")
        problem = None if result.governing == OUT_OF_RANGE else _problem(result.outputs)
        if problem is not None:
            return out_of_range(
                self.name, result.inputs, problem, outputs=result.outputs, steps=result.steps[:-1]
            )
        return result
