"""`inkreach styles`: every style, what it renders, its options with labels and units."""

import json

import numpy as np
import pytest

from inkreach.cli import main
from inkreach.errors import InkreachError
from inkreach.trace import STYLES, style_catalogue, trace


def test_styles_json_lists_every_style_with_renders_and_labelled_options(capsys):
    assert main(["styles", "--format", "json"]) == 0
    table = json.loads(capsys.readouterr().out)["styles"]
    assert [s["name"] for s in table] == list(STYLES)
    for s in table:
        assert s["renders"] in ("tone", "lines")
        assert s["options"], s["name"]
        for o in s["options"]:
            assert set(o) == {"name", "label", "unit", "default", "help"}
            assert o["label"] and o["label"] != o["name"] and o["help"]
    kinds = {s["name"]: s["renders"] for s in table}
    assert kinds["hatch"] == kinds["stipple"] == "tone"
    assert kinds["outline"] == kinds["centerline"] == "lines"


def test_listed_options_are_exactly_the_ones_set_accepts():
    # Every option shown can be given to --set; pen_px, which the planner sets from the
    # arm's pen width and refuses from users, is not shown.
    lum = np.ones((40, 40), np.float32)
    lum[10:30, 10:30] = 0.1
    for s in style_catalogue():
        names = [o["name"] for o in s["options"]]
        assert "pen_px" not in names
        for o in s["options"]:
            if o["default"] is not None:
                trace(lum, s["name"], **{o["name"]: o["default"]})
        with pytest.raises(InkreachError, match="no option"):
            trace(lum, s["name"], not_an_option=1)


def test_units_are_shown_beside_labels_in_the_table(capsys):
    assert main(["styles"]) == 0
    text = capsys.readouterr().out
    assert "pen_px" not in text
    assert "Gap between lines (px)" in text and "Direction of the first layer (°)" in text
    assert "hatch  (draws tone)" in text and "outline  (draws lines)" in text
