"""anchor-tag: the rated capacity on an anchor's tag against the certificate in the register.

Every margin of the day (the arrest load on the anchor, the plan check) uses the certificate's
figure. A tag that reads less than the certificate means the register overstates this anchor
(the wrong anchor, a wrong register entry, a re-rated anchor): the certificate cannot be relied
on until the two agree. Tags print rounded figures, so the tag may read up to `rounding` (a
fraction) below the certificate. A tag that reads more than the certificate is no danger: the
certificate's lower figure governs, and the working says so.

Margin: min(tag, certificate) / (certificate × (1 - rounding)) - 1, so it never exceeds what
the rounding allows and never rewards a tag read in a larger unit.
"""

from __future__ import annotations

from collections.abc import Mapping

from .calculation import Calculation, build_result
from .inputs import Inputs, number
from .result import CalcResult, Check, OutputValue
from .working import num

NAME = "anchor-tag"
EXACTLY = 1e-9
"""A relative difference below this is binary rounding, not a tag below its certificate."""

FIELDS = (
    number(
        "tag_kn",
        "kN",
        "rated capacity read from the anchor's tag",
        greater_than=0.0,
        at_most=1000.0,
        limit_reason="no roof anchor is rated near 1000 kN: a tag read in another unit",
    ),
    number("certified_kn", "kN", "rated capacity on the anchor's certificate", greater_than=0.0),
    number(
        "rounding",
        "",
        "how far below the certificate a tag's rounded figure may read, as a fraction",
        at_least=0.0,
        at_most=0.2,
        limit_reason="a larger allowance is not rounding",
    ),
)


def compute(values: Inputs) -> CalcResult:
    tag_kn = values.number("tag_kn")
    certified_kn = values.number("certified_kn")
    rounding = values.number("rounding")

    lowest_kn = certified_kn * (1.0 - rounding)
    relied_kn = min(tag_kn, certified_kn)
    steps = [
        f"lowest tag figure agreeing with the certificate = {num(certified_kn)} kN × "
        f"(1 - {num(rounding)}) = {num(lowest_kn)} kN",
        f"tag reads {num(tag_kn)} kN",
    ]
    if tag_kn > certified_kn:
        steps.append(
            f"the tag rates the anchor above its certificate: the certificate's {num(certified_kn)}"
            " kN governs every margin"
        )
    margin = relied_kn / lowest_kn - 1.0
    if abs(margin) < EXACTLY:
        # A tag exactly at the lowest agreeing figure (15.77 on a 16.6 kN certificate) came
        # out a hair below it in binary arithmetic, and failed.
        margin = 0.0
    reason = ""
    if margin < 0.0:
        reason = (
            f"The tag reads {num(tag_kn)} kN but the anchor's certificate in the register rates it"
            f" {num(certified_kn)} kN, and every margin of the day uses the certificate. Check that"
            " this is the anchor the register names; until the tag and the certificate agree, the"
            " competent person must not let a line be tied to it."
        )
    outputs: dict[str, OutputValue] = {
        "lowest_agreeing_kn": lowest_kn,
        "relied_on_kn": relied_kn,
    }
    checks = [Check("tag_against_certificate", margin, reason=reason)]
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Anchor tag against its certificate", fields=FIELDS, rules=(), compute=compute
)


def anchor_tag(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the anchor-tag calculation."""
    return CALCULATION.run(inputs)
