"""The page shows the drawing as inked first, in the previews' colours and words,
and nothing broken before a plan exists."""

import io
import re
from html.parser import HTMLParser

import numpy as np
import pytest
from fastapi.testclient import TestClient
from PIL import Image, ImageDraw

from inkreach.export import likeness_text, order_ramp
from inkreach.export._colour import hex_colour
from inkreach.web import create_app


@pytest.fixture(scope="module")
def client(tmp_path_factory):
    app = create_app(tmp_root=str(tmp_path_factory.mktemp("web")))
    with TestClient(app) as c:
        yield c


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


def test_before_a_plan_the_page_has_no_broken_pictures_or_dead_links(client):
    # HTML parsed with the standard library's html.parser.
    parser = _Tags()
    parser.feed(client.get("/").text)
    tags = parser.tags
    imgs = [a for t, a in tags if t == "img"]
    assert imgs and all("hidden" in a and not a.get("src") for a in imgs)
    downloads = [a for t, a in tags if t == "div" and a.get("id") == "downloads"]
    assert downloads and "hidden" in downloads[0]
    assert not [a for t, a in tags if t == "a" and a.get("href")]
    # [hidden] wins over any display rule, so a hidden picture never shows as a frame
    assert re.search(r"\[hidden\]\s*\{\s*display:\s*none\s*!important", client.get(
        "/static/style.css").text)
    # the drawing as inked is the first view; the drawing order is the second
    ink = [a for t, a in tags if a.get("id") == "view-ink-panel"][0]
    order = [a for t, a in tags if a.get("id") == "view-order-panel"][0]
    assert "hidden" not in ink and "hidden" in order


def test_styles_carry_what_they_render_and_labels_with_units(client):
    body = client.get("/api/styles").json()
    for s in body["styles"]:
        assert s["renders"] in ("tone", "lines")
        names = [o["name"] for o in s["options"]]
        assert "pen_px" not in names
        assert all(o["label"] for o in s["options"])
    hatch = {o["name"]: o for o in next(s for s in body["styles"]
                                        if s["name"] == "hatch")["options"]}
    assert hatch["spacing"]["unit"] == "px" and hatch["angle"]["unit"] == "°"
    common = {o["name"]: o for o in body["common"]}
    assert common["size"]["unit"] == "mm" and "tilt" in common


def test_plan_answer_brings_the_previews_colours_and_likeness_words(client):
    im = Image.new("L", (160, 120), 255)
    ImageDraw.Draw(im).rectangle([30, 20, 130, 100], outline=0, width=4)
    buf = io.BytesIO()
    im.save(buf, format="PNG")
    r = client.post("/api/plans", files={"image": ("box.png", buf.getvalue(), "image/png")},
                    data={"style": "outline"})
    assert r.status_code == 200, r.text
    body = r.json()
    assert body["colours"]["order"][0] == hex_colour(order_ramp(0.0))
    assert body["colours"]["order"][-1] == hex_colour(order_ramp(1.0))
    assert body["likeness"] == likeness_text(body["stats"]["fidelity"])
    assert body["likeness"].startswith("lines drawn")
    assert {"simulated.png", "order.png", "preview.png"} <= set(body["files"])
    sim = Image.open(io.BytesIO(client.get(body["files"]["simulated.png"]).content))
    assert sim.mode == "L" and sim.info["dpi"][0] > 0


def test_the_page_key_uses_the_exported_order_ramp():
    # one look: the stylesheet's drawing-order swatch runs through the ramp's colours
    from importlib import resources
    css = resources.files("inkreach.web").joinpath("static/style.css").read_text()
    ramp = re.search(r"\.sw\.ramp \{ background: linear-gradient\(90deg, ([^)]*)\)", css)
    assert ramp.group(1).split(", ") == [hex_colour(c) for c in
                                         order_ramp(np.linspace(0.0, 1.0, 5))]
