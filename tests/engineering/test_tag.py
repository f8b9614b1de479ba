"""anchor-tag: the tag's rated capacity against the certificate the margins use."""

from __future__ import annotations

import pytest

from compliance.engineering import CalcInputError, run

from .examples import ANCHOR_TAG, vary


def test_a_rounded_tag_agrees() -> None:
    """A tag printed "22 kN" on an anchor certified 22.2 kN (5,000 lbf) agrees within 5 %
    rounding: lowest agreeing figure 22.2 × 0.95 = 21.09 kN (hand calculation; the 5 % rounding
    allowance is common practice, no source)."""
    result = run("anchor-tag", ANCHOR_TAG)
    assert result.verdict == "pass"
    assert result.outputs["lowest_agreeing_kn"] == pytest.approx(21.09)
    assert result.outputs["relied_on_kn"] == pytest.approx(22.0)
    assert result.margin == pytest.approx(22.0 / 21.09 - 1)
    assert result.reason == ""


def test_a_tag_below_the_certificate_fails_and_says_why() -> None:
    """A 12 kN tag on an anchor the register certifies at 25 kN: the register overstates it
    (hand calculation: 12 / (25 × 0.95) - 1 = -0.4947)."""
    result = run("anchor-tag", vary(ANCHOR_TAG, tag_kn=12.0, certified_kn=25.0))
    assert result.verdict == "fail"
    assert result.governing == "tag_against_certificate"
    assert result.margin == pytest.approx(12.0 / 23.75 - 1)
    assert result.reason.startswith(
        "The tag reads 12 kN but the anchor's certificate in the register rates it 25 kN"
    )


def test_just_inside_and_just_outside_the_rounding() -> None:
    edge = 25.0 * 0.95
    assert run("anchor-tag", vary(ANCHOR_TAG, tag_kn=edge, certified_kn=25.0)).verdict == "pass"
    below = run("anchor-tag", vary(ANCHOR_TAG, tag_kn=edge - 0.01, certified_kn=25.0))
    assert below.verdict == "fail"


def test_a_tag_above_the_certificate_passes_but_the_certificate_governs() -> None:
    """A re-rated anchor: tag 30 kN, certificate 15 kN. The certificate's figure is relied on,
    and the margin is only what the rounding allows, never the tag's excess."""
    result = run("anchor-tag", vary(ANCHOR_TAG, tag_kn=30.0, certified_kn=15.0))
    assert result.verdict == "pass"
    assert result.outputs["relied_on_kn"] == 15.0
    assert result.margin == pytest.approx(1 / 0.95 - 1)
    assert any("certificate's 15 kN governs every margin" in step for step in result.steps)


def test_a_tag_read_in_pounds_is_refused_by_name() -> None:
    """5620 (a 25 kN tag read in lbf) is no kN figure for a roof anchor."""
    with pytest.raises(CalcInputError) as caught:
        run("anchor-tag", vary(ANCHOR_TAG, tag_kn=5620.0))
    assert caught.value.field == "tag_kn"


def test_the_rounding_allowance_is_bounded() -> None:
    with pytest.raises(CalcInputError) as caught:
        run("anchor-tag", vary(ANCHOR_TAG, rounding=0.5))
    assert caught.value.field == "rounding"
