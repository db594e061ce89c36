"""Every style says whether it draws tone or lines, and every style can be chosen."""

from inkreach.trace import STYLE_RENDERS, STYLES


def test_every_style_renders_tone_or_lines():
    assert set(STYLE_RENDERS) == set(STYLES)
    assert set(STYLE_RENDERS.values()) <= {"tone", "lines"}
    assert {s for s, r in STYLE_RENDERS.items() if r == "tone"} == {"hatch", "stipple", "wave"}


def test_the_command_line_offers_every_style():
    from inkreach import cli

    assert set(cli._STYLES) == set(STYLES)
