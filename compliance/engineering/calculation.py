"""What a named calculation is: its declared inputs and rules, and the function behind it."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

from .inputs import Field, Inputs, Rule, validate
from .result import CalcResult


class UnknownCalculation(LookupError):
    """No calculation has this name."""

    def __init__(self, name: str) -> None:
        super().__init__(f"unknown calculation: {name!r}")
        self.name = name


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
        return self.compute(self.validate(inputs))
