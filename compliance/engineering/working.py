"""Formatting of the working (formula with numbers substituted) shown on screens and PDFs."""

from __future__ import annotations

import math


def num(value: float | int, figures: int = 4) -> str:
    """A number to `figures` significant figures in plain notation, trailing zeros dropped.

    Only the text is rounded; calculations never round. Very large or very small magnitudes use
    scientific notation so the text stays short.
    """
    if isinstance(value, bool):
        raise TypeError("num() takes a number, not a bool")
    if isinstance(value, int):
        return str(value)
    if math.isnan(value):
        return "undefined"
    if math.isinf(value):
        return "infinite" if value > 0 else "-infinite"
    if value == 0.0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    if exponent >= 9 or exponent < -6:
        mantissa = f"{value:.{figures - 1}e}"
        head, _, tail = mantissa.partition("e")
        if "." in head:
            head = head.rstrip("0").rstrip(".")
        return f"{head}e{int(tail)}"
    decimals = figures - 1 - exponent
    rounded = round(value, decimals)
    if rounded != 0.0 and math.floor(math.log10(abs(rounded))) > exponent:
        decimals -= 1
    if decimals <= 0:
        return f"{rounded:.0f}"
    text = f"{rounded:.{decimals}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def pct(fraction: float) -> str:
    """A relative margin as a signed percentage, e.g. 0.254 -> '+25.4 %'."""
    if not math.isfinite(fraction):
        return num(fraction)
    return f"{'+' if fraction >= 0 else '-'}{num(abs(fraction) * 100.0, 3)} %"


def whole_pct(fraction: float, *, passed: bool) -> str:
    """A margin in whole percent, rounded toward its verdict so a failing one never reads as
    "+0 %": failing margins round down (-0.3 % shows "-1 %"), passing ones down to zero."""
    if not math.isfinite(fraction):
        return num(fraction)
    whole = math.floor(fraction * 100.0)
    if not passed:
        whole = min(whole, -1)
    elif whole < 0:
        whole = 0
    return f"{'+' if whole >= 0 else '-'}{abs(whole)} %"


FIGURE_TOLERANCE = 1e-9
"""How far apart, relatively, two register figures may be and still be the same figure: a
rating typed or stored as 2500.0000000001 is the 2500 kPa it was, not a re-rating."""


def _number(value: object) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def same_figure(a: object, b: object) -> bool:
    """Whether two register, profile or plan figures are the same: numbers to within
    FIGURE_TOLERANCE of each other, anything else equal."""
    if _number(a) and _number(b):
        x, y = float(a), float(b)  # type: ignore[arg-type]
        return x == y or math.isclose(x, y, rel_tol=FIGURE_TOLERANCE, abs_tol=0.0)
    return a == b


def told_apart(a: object, b: object, short: str = "g") -> tuple[str, str]:
    """Two figures as text that shows they differ: in `short` form, or in full where the
    short forms would read the same ("30" and "30.0001", not "30" and "30")."""
    if not (_number(a) and _number(b)):
        return str(a), str(b)
    first, second = format(a, short), format(b, short)
    if first == second and not same_figure(a, b):
        return repr(a), repr(b)
    return first, second
