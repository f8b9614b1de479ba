"""The keyboard's focus is seen wherever it lands, in the light and the dark scheme: a focus
ring has at least 3:1 contrast against what surrounds it (WCAG 2.2, 2.4.7 and 1.4.11)."""

import pytest

from tests.browser.conftest import sign_in_as
from tests.browser.test_desk_screens import open_desk

pytestmark = pytest.mark.browser

# The focus ring of the focused element (or of `ring`, the element that shows it) and the
# background it is drawn on: the nearest ancestor of the ring's element with a background.
RING = """ring => {
  const el = ring ? document.activeElement.closest(ring) : document.activeElement;
  const style = getComputedStyle(el);
  let under = el.parentElement;
  while (under && getComputedStyle(under).backgroundColor === "rgba(0, 0, 0, 0)")
    under = under.parentElement;
  const bg = under ? getComputedStyle(under).backgroundColor : "rgb(255, 255, 255)";
  return { style: style.outlineStyle, width: parseFloat(style.outlineWidth),
           color: style.outlineColor, bg, opacity: parseFloat(style.opacity) };
}"""


def rgb(css: str) -> tuple[float, ...]:
    return tuple(float(x) for x in css[css.index("(") + 1 : -1].split(",")[:3])


def contrast(a: str, b: str) -> float:
    def lum(c: str) -> float:
        parts = [x / 255 for x in rgb(c)]
        lin = [p / 12.92 if p <= 0.04045 else ((p + 0.055) / 1.055) ** 2.4 for p in parts]
        return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]

    hi, lo = sorted([lum(a), lum(b)], reverse=True)
    return (hi + 0.05) / (lo + 0.05)


def ring_seen(page, ring: str | None = None) -> float:
    seen = page.evaluate(RING, ring)
    assert seen["style"] != "none" and seen["width"] >= 2, seen
    assert seen["opacity"] == 1, seen
    return contrast(seen["color"], seen["bg"])


@pytest.mark.parametrize("scheme", ["light", "dark"])
def test_the_desk_headers_phone_screens_button_shows_its_focus(live_server, demo, page, scheme):
    """The ring was the accent colour on the header's near-black (1.7:1): focused looked the same
    as not focused."""
    page.emulate_media(color_scheme=scheme)
    open_desk(page, live_server.url)
    page.focus(".desk-phone-link")
    page.keyboard.press("Shift+Tab")
    page.keyboard.press("Tab")  # reached by the keyboard, so :focus-visible applies
    assert page.evaluate("document.activeElement.textContent") == "Phone screens"
    assert ring_seen(page) >= 3


@pytest.mark.parametrize("scheme", ["light", "dark"])
def test_take_photo_shows_its_focus(live_server, demo, page, scheme):
    """The ring was drawn on the file input, which is transparent, so it could not be seen."""
    from compliance.models import Anchor

    page.emulate_media(color_scheme=scheme)
    sign_in_as(page, live_server.url, "tomas")
    anchor = Anchor.objects.get(site=demo.site, label="R1")
    page.goto(live_server.url + f"/#/job/{demo.id}/sheet/anchor-pre-use@anchor:{anchor.pk}")
    page.wait_for_selector("[data-testid=items]")
    page.focus("[data-testid=tick-membrane_sound-fail]")
    page.keyboard.press("Tab")
    assert page.evaluate("document.activeElement.dataset.testid") == "photo-anchor_photo"
    assert ring_seen(page, ".btn-file") >= 3
