"""Colour contrast of the report's palette, computed with the WCAG 2.1 formulas.

WCAG 2.1, definitions "relative luminance" and "contrast ratio":
  for each sRGB channel c = C/255: c/12.92 if c <= 0.03928 else ((c + 0.055)/1.055) ** 2.4;
  L = 0.2126 R + 0.7152 G + 0.0722 B; contrast = (L_lighter + 0.05) / (L_darker + 0.05).
Thresholds: 4.5:1 for text (SC 1.4.3 Contrast (Minimum), level AA); 3:1 for user-interface components and
graphical objects such as underlines, outlines and focus rings (SC 1.4.11 Non-text Contrast, level AA).
"""

from __future__ import annotations

import re

import pytest

from gendertrace.review.html import PALETTE, _asset, stylesheet

TEXT = 4.5  # WCAG 2.1 SC 1.4.3, normal-size text
NON_TEXT = 3.0  # WCAG 2.1 SC 1.4.11

KINDS = ("contradiction", "inconsistency", "assumption")


def channel(c: int) -> float:
    s = c / 255
    return s / 12.92 if s <= 0.03928 else ((s + 0.055) / 1.055) ** 2.4


def luminance(hex_colour: str) -> float:
    h = hex_colour.lstrip("#")
    r, g, b = (int(h[i : i + 2], 16) for i in (0, 2, 4))
    return 0.2126 * channel(r) + 0.7152 * channel(g) + 0.0722 * channel(b)


def contrast(a: str, b: str) -> float:
    la, lb = sorted((luminance(a), luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


# Every foreground/background pair the stylesheet puts together, with what it is for.
TEXT_PAIRS = [
    ("ink", "paper"), ("ink", "surface"), ("ink", "zebra"),
    ("muted", "paper"), ("muted", "surface"), ("muted", "zebra"),
    ("accent", "surface"), ("accent", "zebra"),  # links, step buttons
    ("masthead-ink", "masthead"), ("masthead-muted", "masthead"),
    ("evidence-ink", "evidence-bg"), ("ink", "evidence-bg"), ("evidence-ink", "surface"),
    ("warning-ink", "warning-bg"),
    ("source-ink", "source-bg"), ("ink", "source-bg"),  # the translated source word and its label
    ("print-ink", "print-paper"),
    *((f"{k}-ink", f"{k}-bg") for k in KINDS),  # kind symbols and chips
    *(("ink", f"{k}-bg") for k in KINDS),  # the flagged words themselves
    *((f"{k}-ink", "surface") for k in KINDS),
]
NON_TEXT_PAIRS = [
    *((f"{k}-line", "surface") for k in KINDS),  # the underline of a highlight, against the page below it
    *((f"{k}-line", f"{k}-bg") for k in KINDS),  # and against the highlight above it
    ("evidence-line", "surface"), ("evidence-line", "evidence-bg"),
    ("source-line", "surface"), ("source-line", "source-bg"),
    ("focus", "surface"), ("focus", "paper"), *(("focus", f"{k}-bg") for k in KINDS),
    ("accent", "surface"),  # checkbox, slider and button borders
]


def test_formula_gives_the_known_extremes_and_a_known_grey():
    # Black on white is 21:1 by the definition itself: (1 + 0.05) / (0 + 0.05).
    assert contrast("#000000", "#ffffff") == pytest.approx(21.0)
    assert contrast("#777777", "#777777") == pytest.approx(1.0)
    # #767676 on white is the lightest grey that passes 4.5:1 (about 4.54:1; from memory), #777777 fails.
    assert contrast("#767676", "#ffffff") == pytest.approx(4.54, abs=0.01)
    assert contrast("#777777", "#ffffff") < TEXT


@pytest.mark.parametrize("fg, bg", TEXT_PAIRS, ids=[f"{a} on {b}" for a, b in TEXT_PAIRS])
def test_text_contrast_meets_aa(fg, bg):
    ratio = contrast(PALETTE[fg], PALETTE[bg])
    assert ratio >= TEXT, f"{fg} on {bg}: {ratio:.2f}"


@pytest.mark.parametrize("fg, bg", NON_TEXT_PAIRS, ids=[f"{a} against {b}" for a, b in NON_TEXT_PAIRS])
def test_non_text_contrast_meets_aa(fg, bg):
    ratio = contrast(PALETTE[fg], PALETTE[bg])
    assert ratio >= NON_TEXT, f"{fg} against {bg}: {ratio:.2f}"


def test_stylesheet_uses_no_colour_outside_the_palette():
    rules = _asset("report.css")
    assert re.findall(r"#[0-9a-fA-F]{3,8}\b", rules) == []
    assert not re.search(r"\b(rgb|rgba|hsl|hsla)\(", rules)
    named = r":\s*[^;{}]*\b(white|black|red|green|blue|gray|grey|yellow|orange|silver)\b"
    assert not re.search(named, rules)
    declared = set(PALETTE) | {"k-bg", "k-ink", "k-line", "k-style"}
    used = set(re.findall(r"var\(--([a-z-]+)", rules))
    assert used <= declared
    # The palette is what the page declares, colour for colour.
    for name, value in PALETTE.items():
        assert f"--{name}: {value};" in stylesheet()


def test_every_palette_colour_is_checked_or_decorative():
    checked = {c for pair in TEXT_PAIRS + NON_TEXT_PAIRS for c in pair}
    decorative = {"rule"}  # separators between table rows: WCAG 2.1 SC 1.4.11 exempts pure decoration
    assert set(PALETTE) - checked == decorative
